"""The preview server of ``kitleaf proof``: the built site on loopback, reloading on each rebuild.

HTML pages get a small script as they are served (never on disk, so a served site and a built
site are the same bytes). The script polls ``/__kitleaf/stamp``, which only this server
answers, reloads the page when a new build lands and shows a failed build's errors over it.
"""

from __future__ import annotations

import html
import http.server
import json
import threading
from dataclasses import dataclass, field
from pathlib import Path
from urllib.parse import unquote, urlsplit

LOOPBACK = "127.0.0.1"
STAMP_PATH = "/__kitleaf/stamp"
RELOAD_SCRIPT = """<script>/* kitleaf proof: live reload */
(function () {
  var seen = null;
  function show(errors) {
    var box = document.getElementById("kitleaf-errors");
    if (!errors.length) { if (box) box.remove(); return; }
    if (!box) {
      box = document.createElement("pre");
      box.id = "kitleaf-errors";
      box.style.cssText = "position:fixed;left:0;right:0;top:0;margin:0;padding:1em;z-index:99;" +
        "background:#fdedec;color:#78281f;border-bottom:2px solid #b03a2e;white-space:pre-wrap";
      document.body.appendChild(box);
    }
    box.textContent = "The last build failed; this page is from the build before.\\n\\n" +
      errors.join("\\n");
  }
  function poll() {
    fetch("@STAMP@", {cache: "no-store"}).then(function (r) { return r.json(); })
    .then(function (s) {
      if (seen !== null && s.stamp !== seen) { location.reload(); return; }
      seen = s.stamp;
      show(s.errors);
    }).catch(function () {}).then(function () { setTimeout(poll, 800); });
  }
  poll();
})();
</script>
""".replace("@STAMP@", STAMP_PATH)


@dataclass
class LiveState:
    """What the server tells open pages: the build count and the last build's errors."""

    stamp: int = 0
    errors: tuple[str, ...] = ()
    lock: threading.Lock = field(default_factory=threading.Lock)

    def finished(self, errors: tuple[str, ...] = ()) -> None:
        with self.lock:
            self.stamp += 1
            self.errors = errors

    def as_json(self) -> bytes:
        with self.lock:
            return json.dumps({"stamp": self.stamp, "errors": list(self.errors)}).encode()


def inject(page: bytes) -> bytes:
    """The page with the reload script before ``</body>`` (or at the end)."""
    script = RELOAD_SCRIPT.encode()
    at = page.rfind(b"</body>")
    return page + script if at < 0 else page[:at] + script + page[at:]


def error_page(errors: tuple[str, ...]) -> bytes:
    """What a path shows when there is no built page to show yet."""
    items = "\n".join(f"<li><code>{html.escape(e)}</code></li>" for e in errors)
    text = (f"<!doctype html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">"
            f"<title>kitleaf: nothing built yet</title></head><body>\n"
            f"<h1>Nothing to show yet</h1>\n<ul>\n{items}\n</ul>\n</body></html>\n")
    return inject(text.encode())


class LiveHandler(http.server.SimpleHTTPRequestHandler):
    """Static files from the site folder, plus the stamp and the injected script."""

    state: LiveState

    def do_GET(self) -> None:
        path = unquote(urlsplit(self.path).path)
        if path == STAMP_PATH:
            return self._send(self.state.as_json(), "application/json")
        page = self._page(path)
        if page is not None:
            return self._send(inject(page.read_bytes()), "text/html; charset=utf-8")
        if self.state.errors and not Path(self.translate_path(self.path)).exists():
            return self._send(error_page(self.state.errors), "text/html; charset=utf-8")
        return super().do_GET()

    def _page(self, path: str) -> Path | None:
        local = Path(self.translate_path(path))
        if local.is_dir():
            local = local / "index.html"
        return local if local.suffix == ".html" and local.is_file() else None

    def _send(self, body: bytes, kind: str) -> None:
        self.send_response(200)
        self.send_header("Content-Type", kind)
        self.send_header("Content-Length", str(len(body)))
        self.send_header("Cache-Control", "no-store")
        self.end_headers()
        self.wfile.write(body)

    def log_message(self, format: str, *args) -> None:  # quiet: the terminal shows builds
        return


def make_server(root: Path, state: LiveState, host: str = LOOPBACK,
                port: int = 0) -> http.server.ThreadingHTTPServer:
    """A server for ``root`` bound to ``host`` (loopback unless asked); port 0 picks a free one."""
    handler = type("BoundLiveHandler", (LiveHandler,), {"state": state})

    def bound(*args, **kwargs):
        return handler(*args, directory=str(root), **kwargs)

    return http.server.ThreadingHTTPServer((host, port), bound)


def start(server: http.server.ThreadingHTTPServer) -> threading.Thread:
    thread = threading.Thread(target=server.serve_forever, name="kitleaf-proof", daemon=True)
    thread.start()
    return thread
