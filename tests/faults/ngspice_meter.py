"""A faulted kit in ngspice, read as a builder's meter reads it: a 10 Mohm resistor across
one test point at a time, from each black-probe place, one operating point each."""

from __future__ import annotations

import re
import tempfile
from pathlib import Path

from engine.ngspice_run import run
from kitleaf.engine import solve_dc
from kitleaf.engine.spice_export import to_spice
from kitleaf.faults.probes import BLACK, METER_OHMS

OPEN = 1e12  # ohms: a meter not connected (about SPICE's GMIN; far higher stalls ngspice)


def meter_readings(circuit, probes) -> dict[tuple[str, str], float]:
    """{(probe name, black key): volts} from ngspice for every probe and black place."""
    netlist = to_spice(circuit)
    pairs = [(p, b) for p in probes for b in BLACK if p.node != b.node]
    lines, control = [], []
    for k, (probe, black) in enumerate(pairs):
        a, b = netlist.node(probe.node), netlist.node(black.node)
        lines.append(f"rmeter{k} {a} {b} {OPEN:g}")
        difference = f"v({a})" if b == "0" else f"v({a})-v({b})"
        control += [f"alter rmeter{k} = {METER_OHMS:g}", "op", f"let r = {difference}",
                    f"echo @@ {k}", "print r", f"alter rmeter{k} = {OPEN:g}"]
    lines += _nodeset(circuit, netlist)
    deck = netlist.__class__(netlist.text + "\n".join(lines) + "\n", netlist.nodes,
                             netlist.parts)
    with tempfile.TemporaryDirectory() as tmp:
        out = run(deck, control, Path(tmp))
    values = re.findall(r"@@ (\d+)\s*\n\s*r = (\S+)", out)
    found = {int(k): float(v) for k, v in values}
    assert len(found) == len(pairs), out[-2000:]
    out_map = {(p.name, b.key): found[k] for k, (p, b) in enumerate(pairs)}
    for p in probes:  # a probe on the black probe's own node reads nothing
        for b in BLACK:
            out_map.setdefault((p.name, b.key), 0.0)
    return out_map


def _nodeset(circuit, netlist) -> list[str]:
    """ngspice starts from the engine's operating point of the unmetered circuit (a first
    guess it lets go of: its own answer is what it converges to); with op-amp macro-models
    on collapsed supplies its own start often stalls in gmin stepping."""
    op = solve_dc(circuit)
    return [".nodeset " + " ".join(f"v({netlist.node(n)})={v:.9g}"
                                   for n, v in op.voltages.items() if n in netlist.nodes)]
