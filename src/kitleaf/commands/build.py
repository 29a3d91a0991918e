"""``kitleaf build``: the whole site, written only if every guide succeeds."""

from __future__ import annotations

import sys

from kitleaf.cli import command
from kitleaf.site.build import BuildFailed, build_site


def report_failure(failed: BuildFailed) -> int:
    for error in failed.errors:
        print(error, file=sys.stderr)
    print(f"kitleaf: {len(failed.errors)} guide(s) failed; nothing was written",
          file=sys.stderr)
    return 1


@command("build")
def run(args) -> int:
    try:
        report = build_site(args.guides, args.out)
    except BuildFailed as failed:
        return report_failure(failed)
    print(f"built {report.guides} guide(s), {report.files} files into {args.out}/ "
          f"in {report.seconds:.1f} s")
    return 0
