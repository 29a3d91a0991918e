"""Runs Debian's ngspice in batch mode on circuits exported from the engine, and reads results."""

from __future__ import annotations

import os
import re
import shutil
import subprocess
import tempfile
from pathlib import Path

import numpy as np
import pytest

from kitleaf.engine import Circuit
from kitleaf.engine.spice_export import SpiceNetlist, to_spice

OPTIONS = ".options reltol=1e-6 abstol=1e-15 vntol=1e-9"


def require_ngspice() -> str:
    """The ngspice path; a skip when missing, but a failure under CI (where it must run)."""
    path = shutil.which("ngspice")
    if path is None:
        if os.environ.get("CI"):
            pytest.fail("ngspice is required under CI (apt-get install ngspice)")
        pytest.skip("ngspice is not installed (Debian: apt-get install ngspice)")
    return path


def run(netlist: SpiceNetlist, control: list[str], workdir: Path) -> str:
    deck = workdir / "deck.cir"
    deck.write_text(netlist.text + OPTIONS + "\n.control\nset numdgt=12\n"
                    + "\n".join(control) + "\n.endc\n.end\n")
    done = subprocess.run([require_ngspice(), "-b", str(deck)], capture_output=True, text=True,
                          timeout=60, cwd=workdir)
    # exit status 1 only says the netlist itself holds no analysis (they are in .control)
    if done.returncode not in (0, 1) or "error" in (done.stdout + done.stderr).lower():
        raise AssertionError(f"ngspice failed:\n{done.stdout}\n{done.stderr}")
    return done.stdout


def operating_point(circuit: Circuit) -> dict[str, float]:
    """ngspice's DC node voltages by our node names, and branch currents by part name."""
    netlist = to_spice(circuit)
    with tempfile.TemporaryDirectory() as tmp:
        out = run(netlist, ["op", "print all"], Path(tmp))
    values = {}
    for line in out.splitlines():
        found = re.fullmatch(r"\s*(\S+) = (\S+)\s*", line)
        if found:
            values[found[1]] = float(found[2])
    by_node = {ours: values[spice] for ours, spice in netlist.nodes.items() if spice in values}
    for part, spice in netlist.parts.items():
        if f"{spice}#branch" in values:
            by_node[part] = values[f"{spice}#branch"]
    return by_node


def ac_sweep(circuit: Circuit, source: str, nodes: list[str], start: float, stop: float,
             per_decade: int = 50) -> tuple[np.ndarray, dict[str, np.ndarray]]:
    """ngspice's AC response: frequencies and complex node voltages (plus the source's
    branch current under the source's own name)."""
    netlist = to_spice(circuit)
    vectors = [f"v({netlist.node(n)})" for n in nodes] + [f"i({netlist.parts[source]})"]
    with tempfile.TemporaryDirectory() as tmp:
        run(netlist, [f"ac dec {per_decade} {start} {stop}",
                      f"wrdata {tmp}/ac.dat {' '.join(vectors)}"], Path(tmp))
        data = np.loadtxt(f"{tmp}/ac.dat")
    freqs = data[:, 0]
    columns = {n: data[:, 3 * i + 1] + 1j * data[:, 3 * i + 2]
               for i, n in enumerate([*nodes, source])}
    return freqs, columns


def half_power_corners(freqs: np.ndarray, h: np.ndarray, ref_hz: float
                       ) -> tuple[float | None, float | None]:
    """Corners from a dense sweep: log-frequency interpolation of the dB response (the oracle
    side needs no root-finding of its own)."""
    db = 20 * np.log10(np.abs(h))
    ref = np.interp(np.log(ref_hz), np.log(freqs), db)
    below = db < ref - 10 * np.log10(2)
    i_ref = int(np.searchsorted(freqs, ref_hz))

    def cross(i: int, j: int) -> float:
        if db[i] > db[j]:
            i, j = j, i
        x = np.interp(ref - 10 * np.log10(2), [db[i], db[j]],
                      [np.log(freqs[i]), np.log(freqs[j])])
        return float(np.exp(x))

    low = next((cross(i, i + 1) for i in range(i_ref - 1, -1, -1) if below[i]), None)
    high = next((cross(i - 1, i) for i in range(i_ref, freqs.size) if below[i]), None)
    return low, high
