"""``kitleaf pinpoint GUIDE NAME=VOLTS ... [--black supply|ground] [--json]``: the faults
a builder's meter readings point to, most likely first."""

from __future__ import annotations

import argparse
import json
from pathlib import Path

from kitleaf.circuit.build import build_circuit
from kitleaf.commands import command
from kitleaf.commands.options import whole_at_least_one
from kitleaf.display import at_rest
from kitleaf.faults.probes import probes
from kitleaf.faults.rank import rank
from kitleaf.faults.readings import ReadingError, parse_readings
from kitleaf.faults.report import points_text, ranking_json, ranking_text
from kitleaf.faults.solve import solve_faults
from kitleaf.guide import parse_guide


def add_options(p: argparse.ArgumentParser) -> None:
    p.add_argument("file", type=Path, metavar="GUIDE", help="the guide file")
    p.add_argument("readings", nargs="*", metavar="TEST-POINT=VOLTS",
                   help="what the meter shows at each test point, e.g. boost.q1.collector=8.9")
    p.add_argument("--black", choices=("supply", "ground"), default="supply",
                   help="where the black probe was: the supply's negative terminal "
                   "(default) or the board's ground")
    p.add_argument("--supply", type=float, default=None,
                   help="the supply as measured, in volts (default: the kit's)")
    p.add_argument("--top", type=int, default=8, help="how many faults to list (8)")
    p.add_argument("--points", action="store_true",
                   help="list the test points and a good build's readings")
    p.add_argument("--json", action="store_true", help="as JSON (docs/faults.md)")


@command("pinpoint", add_options)
def run(args) -> int:
    guide = parse_guide(args.file)
    kit = build_circuit(guide)
    top = whole_at_least_one(args.top, "--top")
    supply_v = args.supply if args.supply is not None else kit.supply_v
    if not supply_v > 0:
        raise ReadingError(f"--supply must be a positive number of volts, got {supply_v:g}")
    if args.points:
        print(points_text(solve_faults(kit, supply_v), args.black))
        return 0
    measured = parse_readings(args.readings, probes(kit), supply_v)
    readings = solve_faults(kit, supply_v)
    ranking = rank(readings, measured, args.black, top=top)
    if args.json:
        print(json.dumps(ranking_json(str(args.file), readings, ranking, measured), indent=2,
                         ensure_ascii=False))
    else:
        rest = at_rest(tuple((s.name, s.designator, s.positions, s.positions[s.rest])
                             for s in kit.switches))
        print(ranking_text(guide.kit.title, readings, ranking, measured, rest))
    return 0
