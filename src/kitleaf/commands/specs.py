"""``kitleaf specs FILE [--json]``: a guide's computed specs on standard output."""

from __future__ import annotations

import argparse
import json
from pathlib import Path

from kitleaf.circuit.build import build_circuit
from kitleaf.commands import command
from kitleaf.display import range_text
from kitleaf.guide import parse_guide
from kitleaf.render.specs_text import specs_to_text
from kitleaf.specs.derive import derive_specs
from kitleaf.specs.export import specs_to_json
from kitleaf.specs.lookup import computed_values


def add_options(p: argparse.ArgumentParser) -> None:
    p.add_argument("file", type=Path, metavar="GUIDE", help="the guide file")
    p.add_argument("--json", action="store_true", help="as JSON (schema: docs/specs-json.md)")
    p.add_argument("--names", action="store_true",
                   help="list the names prose and claims can use, with their values")


def names_text(values) -> str:
    """Every name a guide's prose and claims may use, with its value and what it is."""
    width = max(len(name) for name in values)
    return "\n".join(f"{name:<{width}}  {range_text(c.value, c.quantity):<28}  {c.label}"
                     for name, c in values.items())


@command("specs", add_options)
def run(args) -> int:
    guide = parse_guide(args.file)
    kit = build_circuit(guide)
    specs = derive_specs(guide, kit)
    if args.names:
        print(names_text(computed_values(specs, kit)))
    elif args.json:
        print(json.dumps(specs_to_json(specs), indent=2, sort_keys=False, ensure_ascii=False))
    else:
        print(specs_to_text(specs))
    return 0
