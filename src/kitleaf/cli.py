"""The command line: build, check, new, proof, specs and bom; every user error is one line."""

from __future__ import annotations

import argparse
import importlib
import os
import sys
from collections.abc import Callable, Sequence
from pathlib import Path

from kitleaf import __version__
from kitleaf.errors import KitleafError
from kitleaf.memory import keep_freed_memory

COMMANDS: dict[str, Callable[[argparse.Namespace], int]] = {}
# BLAS helper threads only spin on the engine's matrices, and where other work shares the
# cores they wait on one another: a 200-resistor ladder took 20 s to check with them and
# 0.5 s with one thread (on two shared cores). A value the user set is kept.
BLAS_THREADS = ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS")


def command(name: str):
    def add(func):
        COMMANDS[name] = func
        return func

    return add


def parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(prog="kitleaf", description="Build guides for DIY audio kits, "
                                "with every number computed from the parts.")
    p.add_argument("--version", action="version", version=f"kitleaf {__version__}")
    sub = p.add_subparsers(dest="command", required=True, metavar="COMMAND")
    b = sub.add_parser("build", help="build the static site from a folder of guides")
    b.add_argument("guides", nargs="?", default="guides", type=Path)
    b.add_argument("-o", "--out", default="published", type=Path,
                   help="output folder (published/)")
    b.add_argument("--fail-on-findings", action="store_true",
                   help="a design-rule finding fails its guide, and nothing is published")
    _add_build_options(b)
    c = sub.add_parser("check", help="parse and solve every guide without rendering")
    c.add_argument("guides", nargs="?", default="guides", type=Path)
    c.add_argument("--fail-on-findings", action="store_true",
                   help="a design-rule finding fails its guide (exit code 1)")
    n = sub.add_parser("new", help="write a ready-to-edit guide")
    n.add_argument("name")
    n.add_argument("--dir", default="guides", type=Path, help="folder to write into (guides/)")
    s = sub.add_parser("proof", help="build, show the site on 127.0.0.1 and rebuild on change")
    s.add_argument("guides", nargs="?", default="guides", type=Path)
    s.add_argument("-o", "--out", default="published", type=Path)
    s.add_argument("--port", default=8400, type=int)
    s.add_argument("--address", default="127.0.0.1", help="address to listen on (127.0.0.1)")
    _add_build_options(s)
    sp = sub.add_parser("specs", help="print a guide's computed specs")
    sp.add_argument("file", type=Path)
    sp.add_argument("--json", action="store_true", help="as JSON (the documented schema)")
    sp.add_argument("--names", action="store_true",
                    help="list the names prose and claims can use, with their values")
    bo = sub.add_parser("bom", help="print a guide's bill of materials, or a batch order")
    bo.add_argument("files", nargs="+", type=Path)
    bo.add_argument("--csv", action="store_true", help="as CSV")
    bo.add_argument("--kits", type=int, help="order for a batch of N kits")
    bo.add_argument("--spares", default="0%", help="spares per line, e.g. 10%%")
    return p


def _add_build_options(p: argparse.ArgumentParser) -> None:
    p.add_argument("-j", "--jobs", type=int, default=None,
                   help="processes to build with (default: every core)")
    p.add_argument("--no-cache", action="store_true", help="build everything afresh")


def one_blas_thread() -> None:
    """BLAS on one thread (each variable unless set); numpy reads them when it loads."""
    for name in BLAS_THREADS:
        os.environ.setdefault(name, "1")


def main(argv: Sequence[str] | None = None) -> int:
    args = parser().parse_args(argv)
    one_blas_thread()
    keep_freed_memory()
    _load_command(args.command)
    try:
        return COMMANDS[args.command](args)
    except KitleafError as exc:
        # An error with no guide line (a command-line value) still says who is speaking.
        print(exc if exc.span else f"kitleaf {args.command}: {exc}", file=sys.stderr)
        return 1
    except KeyboardInterrupt:
        print("kitleaf: interrupted; the previous site is untouched", file=sys.stderr)
        return 130


def _load_command(name: str) -> None:
    # Each command lives in its own module under kitleaf.commands and registers itself; only
    # the one that runs is imported (the others would pull in the whole pipeline).
    importlib.import_module(f"kitleaf.commands.{name}")


if __name__ == "__main__":
    sys.exit(main())
