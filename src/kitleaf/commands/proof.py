"""``kitleaf proof``: build, show the site on 127.0.0.1, rebuild and reload pages on each change."""

from __future__ import annotations

import argparse
import sys
import threading
from pathlib import Path

from kitleaf.commands import command
from kitleaf.commands.build import build_options, print_report
from kitleaf.commands.options import add_build_options, cache_dir_of
from kitleaf.errors import KitleafError
from kitleaf.site.build import BuildFailed, build_site
from kitleaf.site.cache import CACHE_DIR_NAME
from kitleaf.site.discover import find_guides, site_root_for
from kitleaf.site.live import LOOPBACK, LiveState, make_server, start
from kitleaf.site.output_folder import check_output_folder

# Folders beside guides/ whose files change what a build makes.
WATCHED_SIBLINGS = ("themes",)
DEFAULT_PORT = 8400


def add_options(p: argparse.ArgumentParser) -> None:
    add_build_options(p)
    p.add_argument("--port", default=DEFAULT_PORT, type=int, metavar="N",
                   help=f"the port to show the site on (default: {DEFAULT_PORT}; 0 picks a "
                        "free one)")
    p.add_argument("--address", default=LOOPBACK,
                   help=f"the address to listen on (default: {LOOPBACK}, this machine only)")


def rebuild(args, state: LiveState) -> None:
    """One build; a failure is printed and shown in the open pages, never raised."""
    try:
        print_report(build_site(args.guides, args.out, **build_options(args)), args.out)
        state.finished()
    except BuildFailed as failed:
        errors = tuple(str(e) for e in failed.errors)
        print("\n".join(errors), file=sys.stderr, flush=True)
        state.finished(errors)
    except KitleafError as exc:
        print(exc, file=sys.stderr, flush=True)
        state.finished((str(exc),))


def watched_paths(guides: Path) -> list[Path]:
    """The guides, and the site's own themes where it has them."""
    root = site_root_for(guides)
    return [guides] + [root / name for name in WATCHED_SIBLINGS if (root / name).is_dir()]


def ignores(out: Path, cache: Path | None = None):
    """A watch filter that skips what a build writes: the site, its staging and the cache."""
    out = out.resolve()
    folders = (out, (cache or out.parent / CACHE_DIR_NAME).resolve())
    staging = str(out.parent / f".{out.name}.")

    def wanted(_change, path: str) -> bool:
        inside = any(Path(path).is_relative_to(folder) for folder in folders)
        return not (inside or path.startswith(staging) or Path(path).name.startswith((".", "~")))

    return wanted


def listen(args, state: LiveState):
    """The preview server, bound before the first build; a taken port is a one-line error."""
    address = getattr(args, "address", LOOPBACK)
    try:
        return make_server(args.out.resolve(), state, address, args.port)
    except OverflowError:
        raise KitleafError(f"--port must be 0 to 65535, got {args.port}") from None
    except OSError as exc:
        raise KitleafError(f"cannot listen on {address} port {args.port}: {exc.strerror}; "
                           "stop what uses it, or give another --port") from None


@command("proof", add_options)
def run(args, stop: threading.Event | None = None) -> int:
    from watchfiles import watch

    # What would fail every build stops here, before a port is taken or an old site shown.
    find_guides(args.guides)
    check_output_folder(args.out, args.guides)
    build_options(args)
    state = LiveState()
    server = listen(args, state)
    rebuild(args, state)
    args.out.mkdir(parents=True, exist_ok=True)
    start(server)
    host, port = server.server_address[:2]
    print(f"serving {args.out}/ on http://{host}:{port}/ (Ctrl-C stops)", flush=True)
    try:
        for _changes in watch(*watched_paths(args.guides),
                              watch_filter=ignores(args.out, cache_dir_of(args)),
                              stop_event=stop, yield_on_timeout=False):
            rebuild(args, state)
    finally:
        server.shutdown()
        server.server_close()
    return 0
