"""``kitleaf pinpoint GUIDE NAME=VOLTS ... [--black supply|ground] [--json]``: the faults
a builder's meter readings point to, most likely first."""

from __future__ import annotations

import json

from kitleaf.circuit.build import build_circuit
from kitleaf.cli import command
from kitleaf.faults.probes import probes
from kitleaf.faults.rank import rank
from kitleaf.faults.readings import parse_readings
from kitleaf.faults.report import points_text, ranking_json, ranking_text
from kitleaf.faults.solve import solve_faults
from kitleaf.guide import parse_guide


@command("pinpoint")
def run(args) -> int:
    guide = parse_guide(args.file)
    kit = build_circuit(guide)
    supply_v = args.supply if args.supply is not None else kit.supply_v
    if args.points:
        print(points_text(solve_faults(kit, supply_v), args.black))
        return 0
    measured = parse_readings(args.readings, probes(kit), supply_v)
    readings = solve_faults(kit, supply_v)
    ranking = rank(readings, measured, args.black, top=args.top)
    if args.json:
        print(json.dumps(ranking_json(str(args.file), readings, ranking, measured), indent=2,
                         ensure_ascii=False))
    else:
        print(ranking_text(guide.kit.title, readings, ranking, measured))
    return 0
