"""The command line: the commands of :mod:`kitleaf.commands` in their order; every user error is
one line, and output cut short by its reader (``| head``) ends quietly."""

from __future__ import annotations

import argparse
import importlib
import os
import signal
import sys
from collections.abc import Sequence

from kitleaf import __version__
from kitleaf.commands import COMMANDS, ORDER
from kitleaf.errors import KitleafError
from kitleaf.memory import keep_freed_memory

# BLAS helper threads only spin on the engine's matrices, and where other work shares the
# cores they wait on one another: a 200-resistor ladder took 20 s to check with them and
# 0.5 s with one thread (on two shared cores). A value the user set is kept.
BLAS_THREADS = ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS")


def parser(chosen: str | None = None) -> argparse.ArgumentParser:
    """Every command in its order; only ``chosen`` is loaded and given its options."""
    p = argparse.ArgumentParser(prog="kitleaf", description="Build guides for DIY audio kits, "
                                "with every number computed from the parts.")
    p.add_argument("--version", action="version", version=f"kitleaf {__version__}")
    sub = p.add_subparsers(dest="command", required=True, metavar="COMMAND")
    for name, summary in ORDER:
        one = sub.add_parser(name, help=summary, description=f"kitleaf {name}: {summary}.")
        if name == chosen:
            COMMANDS[name].add_options(one)
    return p


def chosen_command(argv: Sequence[str]) -> str | None:
    """The command the arguments name: the first word (kitleaf's own options take no value)."""
    words = [arg for arg in argv if not arg.startswith("-")]
    names = {name for name, _summary in ORDER}
    return words[0] if words and words[0] in names else None


def one_blas_thread() -> None:
    """BLAS on one thread (each variable unless set); numpy reads them when it loads."""
    for name in BLAS_THREADS:
        os.environ.setdefault(name, "1")


def main(argv: Sequence[str] | None = None) -> int:
    one_blas_thread()  # before a command's module loads numpy
    argv = sys.argv[1:] if argv is None else list(argv)
    chosen = chosen_command(argv)
    if chosen is not None:
        _load_command(chosen)
    args = parser(chosen).parse_args(argv)
    keep_freed_memory()
    try:
        code = COMMANDS[args.command].run(args)
        sys.stdout.flush()  # a reader gone before the last buffered line is found here
        return code
    except KitleafError as exc:
        # An error with no location (a command-line value) still says who is speaking.
        print(exc if exc.span else f"kitleaf {args.command}: {exc}", file=sys.stderr)
        return 1
    except BrokenPipeError:
        return reader_gone()
    except KeyboardInterrupt:
        print("kitleaf: interrupted; the previous site is untouched", file=sys.stderr)
        return 130


def reader_gone() -> int:
    """The reader of standard output closed it (``| head``): stop quietly, as a Unix tool does.

    Standard output is pointed at the null device so the interpreter's last flush at exit has
    nowhere to fail; the exit code is the shell's for a process ended by SIGPIPE.
    """
    null = os.open(os.devnull, os.O_WRONLY)
    os.dup2(null, sys.stdout.fileno())
    os.close(null)
    return 128 + getattr(signal, "SIGPIPE", 13)


def _load_command(name: str) -> None:
    # Each command lives in its own module under kitleaf.commands and registers itself; only
    # the one that runs is imported (the others would pull in the whole pipeline).
    importlib.import_module(f"kitleaf.commands.{name}")


if __name__ == "__main__":
    sys.exit(main())
