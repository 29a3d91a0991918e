"""Publishing: only changed files are written, unchanged ones keep their inode and time, and a
failure at any point before the swap leaves the published site as it was."""

from __future__ import annotations

import os
from pathlib import Path

import pytest

import kitleaf.site.publish as publish_module
from kitleaf.site.output_folder import PUBLISH_MARKER, marker_bytes
from kitleaf.site.publish import publish


def snapshot(root: Path) -> dict[str, tuple[bytes, int, int]]:
    """Every file's bytes, modification time (ns) and inode."""
    out = {}
    for path in sorted(p for p in root.rglob("*") if p.is_file()):
        st = path.stat()
        out[path.relative_to(root).as_posix()] = (path.read_bytes(), st.st_mtime_ns, st.st_ino)
    return out


SITE = {"index.html": b"<p>index</p>\n", "a/index.html": b"<p>a</p>\n",
        "a/one.svg": b"<svg/>\n", "static/style.css": b"body{}\n"}


@pytest.fixture
def site(tmp_path: Path) -> Path:
    out = tmp_path / "published"
    publish(out, SITE)
    return out


def test_first_publish_writes_every_file_and_its_list(site: Path):
    assert {k: v[0] for k, v in snapshot(site).items()} == {**SITE,
                                                            PUBLISH_MARKER: marker_bytes(SITE)}


def test_unchanged_site_is_not_touched(site: Path):
    before = snapshot(site)
    result = publish(site, dict(SITE))
    assert not result.touched
    assert snapshot(site) == before
    assert sorted(p.name for p in site.parent.iterdir()) == ["published"]  # no lock file


def test_one_changed_file_is_the_only_one_rewritten(site: Path):
    before = snapshot(site)
    result = publish(site, {**SITE, "a/one.svg": b"<svg><g/></svg>\n"})
    after = snapshot(site)
    assert result.written == ("a/one.svg",)
    assert after["a/one.svg"][0] == b"<svg><g/></svg>\n"
    for rel in ("index.html", "a/index.html", "static/style.css"):
        assert after[rel] == before[rel]  # same bytes, same time, same inode


def test_a_file_no_longer_built_is_removed(site: Path):
    files = {k: v for k, v in SITE.items() if k != "a/one.svg"}
    result = publish(site, files)
    assert result.removed == ("a/one.svg",)
    assert set(snapshot(site)) == {*files, PUBLISH_MARKER}


def test_failure_before_the_swap_leaves_the_site_whole(site: Path, monkeypatch):
    before = snapshot(site)

    def broken_swap(staging: Path, out_dir: Path) -> None:
        raise OSError("disk full")

    monkeypatch.setattr(publish_module, "swap", broken_swap)
    with pytest.raises(OSError, match="disk full"):
        publish(site, {**SITE, "index.html": b"<p>new</p>\n", "b/index.html": b"b\n"})
    assert snapshot(site) == before
    assert not list(site.parent.glob(".published.new-*"))  # no staging left behind


def test_stale_staging_from_a_killed_build_is_cleared(site: Path):
    stale = site.parent / ".published.new-abc123"
    (stale / "a").mkdir(parents=True)
    (stale / "a" / "index.html").write_bytes(b"half")
    publish(site, {**SITE, "index.html": b"<p>new</p>\n"})
    assert not stale.exists()


def test_site_retired_mid_swap_is_restored(site: Path):
    # The two-rename fallback's only window: the old site renamed away, the new one not in.
    retired = site.parent / ".published.old-xyz"
    os.replace(site, retired)
    publish(site, dict(SITE))
    assert {k: v[0] for k, v in snapshot(site).items() if k != PUBLISH_MARKER} == SITE
    assert not retired.exists()


def test_two_rename_fallback_swaps_too(site: Path, monkeypatch):
    monkeypatch.setattr(publish_module, "exchange", lambda a, b: False)
    before = snapshot(site)
    publish(site, {**SITE, "index.html": b"<p>new</p>\n"})
    after = snapshot(site)
    assert after["index.html"][0] == b"<p>new</p>\n"
    assert after["a/one.svg"] == before["a/one.svg"]
    assert not list(site.parent.glob(".published.old-*"))


@pytest.mark.parametrize("umask", [0o022, 0o027])
def test_published_folders_and_files_take_the_umask_mode(tmp_path: Path, umask: int):
    old = os.umask(umask)
    try:
        out = tmp_path / "published"
        publish(out, SITE)
        publish(out, {**SITE, "index.html": b"<p>again</p>\n"})  # the swapped-in staging
    finally:
        os.umask(old)
    for path in [out, *out.rglob("*")]:
        wanted = (0o777 if path.is_dir() else 0o666) & ~umask
        assert path.stat().st_mode & 0o777 == wanted, path
