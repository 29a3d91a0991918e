"""``kitleaf check``: parse, solve and verify every guide without rendering; exit 1 if any fails.

Claims and names in the prose are checked; design-rule findings print as warnings (errors with
``--fail-on-findings``), each on one line ``path:line: warning: message [rule]``.
"""

from __future__ import annotations

import argparse
import sys

from kitleaf.circuit.build import build_circuit
from kitleaf.circuit.harness import build_harness
from kitleaf.commands import command
from kitleaf.commands.options import add_fail_on_findings, add_guides
from kitleaf.errors import KitleafError, printable_line
from kitleaf.guide import parse_guide
from kitleaf.render.placement import page_env
from kitleaf.render.prose import render_prose
from kitleaf.site.discover import find_guides
from kitleaf.site.unique import reused_codes
from kitleaf.specs.claims import Checks, verify
from kitleaf.specs.derive import derive_specs, solve_kit


def add_options(p: argparse.ArgumentParser) -> None:
    add_guides(p)
    add_fail_on_findings(p, "it is printed as an error, and the exit code is 1")


def check_guide(path) -> tuple[Checks, tuple[str, ...]]:
    """The guide's verified checks and the specs' notes (located warning lines)."""
    guide = parse_guide(path)
    kit = build_circuit(guide)
    solved = solve_kit(guide, kit)  # one solve for the specs and the design rules
    specs = derive_specs(guide, kit, solved)
    checks = verify(guide, kit, specs, solved)
    # Names and section markers in the prose, read as the build reads them.
    render_prose(guide.text, page_env(guide.path, checks.values, build_harness(guide, kit)))
    return checks, specs.notes


def report(checked: tuple[Checks, tuple[str, ...]], fail_on_findings: bool) -> int:
    """Print the notes and the unsilenced findings; the number that count as errors."""
    checks, notes = checked
    for note in notes:
        print(printable_line(note), file=sys.stderr)
    for finding in checks.warnings:
        print(finding.as_error() if fail_on_findings else printable_line(finding.line()),
              file=sys.stderr)
    return len(checks.warnings) if fail_on_findings else 0


@command("check", add_options)
def run(args) -> int:
    failed = 0
    guides = find_guides(args.guides)
    for path in guides:
        try:
            failed += report(check_guide(path), getattr(args, "fail_on_findings", False)) > 0
        except KitleafError as exc:
            failed += 1
            print(exc, file=sys.stderr)
    for error in reused_codes(kit_codes(guides)):  # as a build of them would refuse
        failed += 1
        print(error, file=sys.stderr)
    print(f"checked {len(guides)} guide(s): {len(guides) - failed} ok, {failed} failed")
    return 1 if failed else 0


def kit_codes(paths) -> list:
    """Each readable guide's kit code and its line (a guide that fails is reported already)."""
    codes = []
    for path in paths:
        try:
            kit = parse_guide(path).kit
        except KitleafError:
            continue
        codes.append((kit.code, kit.code_span or kit.span))
    return codes
