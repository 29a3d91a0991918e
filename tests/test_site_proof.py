"""The preview server: loopback only unless asked, live-reload script served but never written,
a failed build shown in the page; and the watch filter that ignores the build's own output."""

from __future__ import annotations

import json
import urllib.request
from pathlib import Path

import pytest

from kitleaf.commands.proof import ignores, watched_paths
from kitleaf.site.live import STAMP_PATH, LiveState, make_server, start

PAGE = b"<!doctype html>\n<html><body>\n<p>guide</p>\n</body>\n</html>\n"


@pytest.fixture
def served(tmp_path: Path):
    root = tmp_path / "published"
    (root / "kit").mkdir(parents=True)
    (root / "index.html").write_bytes(PAGE)
    (root / "kit" / "plot.svg").write_bytes(b"<svg/>\n")
    state = LiveState()
    server = make_server(root, state)  # default host, port 0: any free port
    thread = start(server)
    yield server, state, root
    server.shutdown()
    server.server_close()
    thread.join(timeout=5)
    assert not thread.is_alive()


def fetch(server, path: str) -> tuple[bytes, str]:
    host, port = server.server_address[:2]
    with urllib.request.urlopen(f"http://{host}:{port}{path}", timeout=5) as response:
        return response.read(), response.headers["Content-Type"]


def test_server_binds_loopback_by_default(served):
    server, _state, _root = served
    assert server.server_address[0] == "127.0.0.1"


def test_pages_get_the_reload_script_and_disk_does_not(served):
    server, _state, root = served
    body, kind = fetch(server, "/")
    assert kind.startswith("text/html")
    assert STAMP_PATH.encode() in body
    assert body.index(b"<script>") < body.index(b"</body>")
    assert (root / "index.html").read_bytes() == PAGE  # nothing injected on disk


def test_other_files_are_served_as_they_are(served):
    server, _state, _root = served
    body, _kind = fetch(server, "/kit/plot.svg")
    assert body == b"<svg/>\n"


def test_stamp_moves_with_each_build_and_carries_errors(served):
    server, state, _root = served
    first = json.loads(fetch(server, STAMP_PATH)[0])
    state.finished(("guides/x.md:3: error: unknown stage kind",))
    second = json.loads(fetch(server, STAMP_PATH)[0])
    assert second["stamp"] == first["stamp"] + 1
    assert second["errors"] == ["guides/x.md:3: error: unknown stage kind"]


def test_missing_page_after_a_failed_build_shows_the_error(served):
    server, state, _root = served
    state.finished(("guides/x.md:3: error: <bad> kind",))
    body, _kind = fetch(server, "/x/index.html")
    assert b"guides/x.md:3: error: &lt;bad&gt; kind" in body


def test_watch_filter_skips_the_output_and_cache(tmp_path: Path):
    wanted = ignores(tmp_path / "published")
    assert wanted(None, str(tmp_path / "guides" / "a.md"))
    assert not wanted(None, str(tmp_path / "published" / "index.html"))
    assert not wanted(None, str(tmp_path / ".published.new-1" / "index.html"))
    assert not wanted(None, str(tmp_path / ".kitleaf-cache" / "plot" / "ab"))


def test_watched_paths_include_the_site_theme(tmp_path: Path):
    (tmp_path / "guides").mkdir()
    (tmp_path / "themes" / "default").mkdir(parents=True)
    (tmp_path / "models").mkdir()  # nothing reads it, so it is not watched
    assert watched_paths(tmp_path / "guides") == [tmp_path / "guides", tmp_path / "themes"]
