"""``kitleaf specs FILE [--json]``: a guide's computed specs on standard output."""

from __future__ import annotations

import json

from kitleaf.circuit.build import build_circuit
from kitleaf.cli import command
from kitleaf.guide import parse_guide
from kitleaf.specs.derive import derive_specs
from kitleaf.specs.export import specs_to_json, specs_to_text


@command("specs")
def run(args) -> int:
    guide = parse_guide(args.file)
    specs = derive_specs(guide, build_circuit(guide))
    if args.json:
        print(json.dumps(specs_to_json(specs), indent=2, sort_keys=False, ensure_ascii=False))
    else:
        print(specs_to_text(specs))
    return 0
