"""``kitleaf build``: the whole site, written only if every guide succeeds, then a summary.

With ``--fail-on-findings`` a design-rule finding fails its guide too, printed as ``kitleaf
check --fail-on-findings`` prints it; the findings come from the build's own solve of each guide.
"""

from __future__ import annotations

import argparse
import sys

from kitleaf.commands import command
from kitleaf.commands.options import (
    add_build_options,
    add_fail_on_findings,
    cache_dir_of,
    whole_at_least_one,
)
from kitleaf.errors import printable_line
from kitleaf.site.build import BuildFailed, BuildReport, build_site
from kitleaf.site.changes import summary_lines
from kitleaf.site.manifest import MANIFEST_NAME


def add_options(p: argparse.ArgumentParser) -> None:
    add_build_options(p)
    add_fail_on_findings(p, "nothing is published while one stands")


def report_failure(failed: BuildFailed, fail_on_findings: bool = False) -> int:
    for error in failed.errors:
        print(error, file=sys.stderr)
    why = " (--fail-on-findings: design-rule findings count as errors)" * fail_on_findings
    print(f"kitleaf: {len(failed.errors)} guide(s) failed{why}; the published site is untouched",
          file=sys.stderr)
    return 1


def summary(report: BuildReport, out) -> str:
    """The one line a build ends with: guides, pages, what was written, seconds, warnings."""
    if report.written or report.removed:
        wrote = f"{len(report.written)} file(s) written, {len(report.removed)} removed"
    else:
        wrote = "nothing changed on disk"
    return (f"built {report.guides} guide(s), {report.pages} page(s) into {out}/ "
            f"({report.rebuilt} guide(s) rebuilt, {wrote}) in {report.seconds:.1f} s, "
            f"{len(report.warnings)} warning(s)")


def print_report(report: BuildReport, out) -> None:
    for warning in report.warnings:
        print(warning_line(warning), file=sys.stderr)
    if MANIFEST_NAME in report.written:  # parts or specs moved: say what, for the errata
        for line in summary_lines(report.changes):
            print(f"changed: {line}")
    if report.pruned.entries:  # said only when the cache sweep removed something
        print(f"cache: {report.pruned.entries} unused entries removed, "
              f"{report.pruned.freed / 1e6:.1f} MB freed")
    print(summary(report, out), flush=True)


def warning_line(warning: str) -> str:
    """A guide's warning as ``kitleaf check`` prints it: findings and notes are already
    ``path:line: warning: ...`` behind the guide's path; anything else keeps the path."""
    path, _, rest = warning.partition(": ")
    return printable_line(rest if rest.startswith(f"{path}:") else f"{path}: warning: {rest}")


def build_options(args) -> dict:
    """Keyword arguments of build_site from the command line (``--jobs``, ``--no-cache``,
    ``--cache-dir`` or its variable, ``--fail-on-findings``)."""
    return {"jobs": whole_at_least_one(getattr(args, "jobs", None), "--jobs"),
            "use_cache": not getattr(args, "no_cache", False),
            "cache_dir": cache_dir_of(args),
            "fail_on_findings": getattr(args, "fail_on_findings", False)}


@command("build", add_options)
def run(args) -> int:
    options = build_options(args)
    try:
        report = build_site(args.guides, args.out, **options)
    except BuildFailed as failed:
        return report_failure(failed, options["fail_on_findings"])
    print_report(report, args.out)
    return 0
