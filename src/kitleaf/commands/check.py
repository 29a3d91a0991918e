"""``kitleaf check``: parse and solve every guide without rendering; exit 1 if any fails."""

from __future__ import annotations

import sys

from kitleaf.circuit.build import build_circuit
from kitleaf.cli import command
from kitleaf.errors import KitleafError
from kitleaf.guide import parse_guide
from kitleaf.site.discover import find_guides
from kitleaf.specs.derive import derive_specs


def check_guide(path) -> None:
    guide = parse_guide(path)
    derive_specs(guide, build_circuit(guide))


@command("check")
def run(args) -> int:
    failed = 0
    guides = find_guides(args.guides)
    for path in guides:
        try:
            check_guide(path)
        except KitleafError as exc:
            failed += 1
            print(exc, file=sys.stderr)
    print(f"checked {len(guides)} guide(s): {len(guides) - failed} ok, {failed} failed")
    return 1 if failed else 0
