"""``kitleaf serve``: build, serve the site on 127.0.0.1, rebuild when a guide changes."""

from __future__ import annotations

import functools
import http.server
import sys
import threading

from kitleaf.cli import command
from kitleaf.commands.build import report_failure
from kitleaf.errors import KitleafError
from kitleaf.site.build import BuildFailed, build_site


def rebuild(args) -> None:
    try:
        report = build_site(args.guides, args.out)
        print(f"built {report.guides} guide(s) in {report.seconds:.1f} s", flush=True)
    except BuildFailed as failed:
        report_failure(failed)
    except KitleafError as exc:
        print(exc, file=sys.stderr)


def serve_folder(args) -> http.server.ThreadingHTTPServer:
    handler = functools.partial(http.server.SimpleHTTPRequestHandler,
                                directory=str(args.out.resolve()))
    server = http.server.ThreadingHTTPServer((args.host, args.port), handler)
    threading.Thread(target=server.serve_forever, daemon=True).start()
    return server


@command("serve")
def run(args) -> int:
    from watchfiles import watch

    rebuild(args)
    args.out.mkdir(parents=True, exist_ok=True)
    server = serve_folder(args)
    print(f"serving {args.out}/ on http://{args.host}:{args.port}/ (Ctrl-C stops)", flush=True)
    try:
        for _changes in watch(args.guides):
            rebuild(args)
    finally:
        server.shutdown()
    return 0
