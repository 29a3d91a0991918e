"""Every single fault of the demo kits and of the test kits, built into the kit's netlist
and solved by Debian's ngspice, read with a 10 Mohm meter from both black-probe places:
the ranking must put the true fault first (or one that reads the same) in at least 90 % of
cases and in the top three in at least 98 %."""

from __future__ import annotations

from functools import cache
from pathlib import Path

import pytest

from engine.ngspice_run import require_ngspice
from kitleaf.circuit.build import build_circuit
from kitleaf.faults.inject import faulted_circuit
from kitleaf.faults.probes import BLACK
from kitleaf.faults.rank import rank
from kitleaf.faults.solve import solve_faults
from kitleaf.guide import parse_guide

from .kits import DEMOS, GUIDES
from .ngspice_meter import meter_readings

pytestmark = pytest.mark.slow
TEST_KITS = Path(__file__).parent / "guides"
KITS = [GUIDES / f"{name}.md" for name in DEMOS] + sorted(TEST_KITS.glob("*.md"))


@cache
def outcomes(path: Path) -> tuple[tuple[str, str, int | None], ...]:
    """(fault, black place, where the ranking put it: 0 first, None beyond the top three)."""
    kit = build_circuit(parse_guide(path))
    readings = solve_faults(kit)
    found = []
    for fault in readings.faults:
        bench = meter_readings(faulted_circuit(kit, fault), readings.probes)
        for black in BLACK:
            measured = {p.name: bench[(p.name, black.key)] for p in readings.probes}
            ranking = rank(readings, measured, black.key, top=3)
            place = next((i for i, c in enumerate(ranking.candidates)
                          if fault.key in (c.fault.key, *c.alike)), None)
            found.append((fault.key, black.key, place))
    return tuple(found)


def test_ngspice_readings_rank_the_true_fault(capsys):
    require_ngspice()
    rows, everything = [], []
    for path in KITS:
        got = outcomes(path)
        everything += got
        first = sum(place == 0 for *_, place in got)
        top3 = sum(place is not None for *_, place in got)
        rows.append(f"{path.stem:<24} {len(got):>4} cases  first {first / len(got):6.1%}  "
                    f"top 3 {top3 / len(got):6.1%}")
    first = sum(place == 0 for *_, place in everything) / len(everything)
    top3 = sum(place is not None for *_, place in everything) / len(everything)
    missed = [f"{path.stem}: {key} ({black})" for path in KITS for key, black, place in
              outcomes(path) if place is None]
    with capsys.disabled():
        print("\nfault ranking against ngspice (true fault or one reading the same):")
        print("\n".join(rows))
        print(f"{'all kits':<24} {len(everything):>4} cases  first {first:6.1%}  "
              f"top 3 {top3:6.1%}")
        if missed:
            print("not in the top three: " + "; ".join(missed))
    assert first >= 0.90
    assert top3 >= 0.98
