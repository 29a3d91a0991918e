"""Whole-site builds: incremental, reproducible, parallel equal to serial, all or nothing.

Inputs are two of the demo guides of guides/ copied into a temporary site folder; every check
compares one build of ours with another (bytes, times, inodes), so no number is assumed.
"""

from __future__ import annotations

import shutil
import subprocess
import sys
import textwrap
from pathlib import Path

import pytest

import kitleaf.site.publish as publish_module
from kitleaf.cli import main
from kitleaf.site.build import BuildFailed, build_site
from kitleaf.site.cache import CACHE_DIR_NAME

DEMO = Path(__file__).resolve().parents[1] / "guides"
CHANGED = "brookside-boost"  # the guide whose R4 the tests change
GUIDES = (f"{CHANGED}.md", "millrace-jfet-boost.md")  # the two quickest demo guides


def copy_guides(folder: Path, names=GUIDES) -> Path:
    folder.mkdir(parents=True)
    for name in names:
        shutil.copy(DEMO / name, folder / name)
    return folder


def snapshot(root: Path) -> dict[str, tuple[bytes, int, int]]:
    out = {}
    for path in sorted(p for p in root.rglob("*") if p.is_file()):
        st = path.stat()
        out[path.relative_to(root).as_posix()] = (path.read_bytes(), st.st_mtime_ns, st.st_ino)
    return out


def contents(root: Path) -> dict[str, bytes]:
    return {rel: data for rel, (data, _t, _i) in snapshot(root).items()}


def change_r4(guides: Path, new: str = "1k8") -> None:
    path = guides / f"{CHANGED}.md"
    text = path.read_text()
    assert "emitter: R4 1k5" in text
    path.write_text(text.replace("emitter: R4 1k5", f"emitter: R4 {new}"))


@pytest.fixture(scope="module")
def built(tmp_path_factory) -> Path:
    """A cold build of the demo guides; tests copy it, never change it."""
    root = tmp_path_factory.mktemp("built")
    copy_guides(root / "guides")
    build_site(root / "guides", root / "published", jobs=2)
    return root


@pytest.fixture
def site(built: Path, tmp_path: Path) -> Path:
    """A private copy of the built site folder, cache included, times preserved."""
    root = tmp_path / "work"
    shutil.copytree(built, root, symlinks=True)
    return root


def test_cache_sits_beside_the_site_not_in_it(site: Path):
    assert (site / CACHE_DIR_NAME).is_dir()
    assert not any(CACHE_DIR_NAME in rel for rel in contents(site / "published"))


def test_rebuild_without_change_rewrites_nothing(site: Path):
    before = snapshot(site / "published")
    report = build_site(site / "guides", site / "published")
    assert report.written == () and report.removed == ()
    assert report.rebuilt == 0
    assert snapshot(site / "published") == before


def test_rebuild_without_change_does_not_load_the_pipeline(site: Path):
    # guides taken whole from the cache are read back without the solver or the drawing, so
    # an edit-and-save loop with nothing to rebuild starts in a fraction of a second
    probe = textwrap.dedent(f"""
        import sys
        from pathlib import Path
        from kitleaf.site.build import build_site
        report = build_site(Path({str(site / "guides")!r}), Path({str(site / "published")!r}))
        heavy = [m for m in ("numpy", "kitleaf.engine", "kitleaf.circuit.chain",
                             "schemdraw", "matplotlib") if m in sys.modules]
        print(report.rebuilt, heavy)
    """)
    run = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True,
                         check=True)
    assert run.stdout.strip() == "0 []"


def test_one_part_change_rewrites_only_what_it_touches(site: Path, tmp_path: Path):
    before = snapshot(site / "published")
    change_r4(site / "guides")
    report = build_site(site / "guides", site / "published")
    after = snapshot(site / "published")
    assert report.rebuilt == 1
    moved = {rel for rel in after if after[rel] != before.get(rel)}
    assert moved == set(report.written)
    others = {rel for rel in after if "/" in rel and not rel.startswith(f"{CHANGED}/")}
    assert others and not moved & others  # every other guide's files: same inode and time
    # The power stage shares no part with R4: its drawing is neither redrawn nor rewritten.
    assert f"{CHANGED}/power-schematic.svg" not in moved
    assert {f"{CHANGED}/index.html", f"{CHANGED}/boost-response.svg", "kitleaf-manifest.json",
            "changes.html"} <= moved
    # What the cache kept equals what a cold build of the changed guide makes.
    alone = tmp_path / "alone"
    alone.mkdir()
    shutil.copy(site / "guides" / f"{CHANGED}.md", alone)
    build_site(alone, tmp_path / "cold", use_cache=False, jobs=1)
    fresh, kept = contents(tmp_path / "cold"), contents(site / "published")
    for rel in fresh:
        if rel.startswith(f"{CHANGED}/"):
            assert kept[rel] == fresh[rel], rel


def test_two_builds_of_the_same_guides_are_byte_identical(built: Path, tmp_path: Path):
    # Another folder, another process pool, no cache: the same bytes.
    build_site(copy_guides(tmp_path / "guides"), tmp_path / "again", use_cache=False, jobs=2)
    assert contents(tmp_path / "again") == contents(built / "published")


def test_serial_and_parallel_builds_are_identical(built: Path, tmp_path: Path):
    build_site(built / "guides", tmp_path / "serial", use_cache=False, jobs=1)
    assert contents(tmp_path / "serial") == contents(built / "published")  # built with jobs=2


def test_a_broken_guide_names_itself_and_leaves_the_site(site: Path):
    before = snapshot(site / "published")
    path = site / "guides" / f"{CHANGED}.md"
    lines = path.read_text().splitlines(keepends=True)
    line = next(i for i, s in enumerate(lines) if s.startswith("kind: common-emitter")) + 1
    lines[line - 1] = "kind: no-such-kind\n"
    path.write_text("".join(lines))
    with pytest.raises(BuildFailed) as failed:
        build_site(site / "guides", site / "published", jobs=2)
    [error] = failed.value.errors
    assert error.span.path.endswith(f"{CHANGED}.md") and error.span.line == line
    assert snapshot(site / "published") == before


def test_the_guides_that_built_stay_cached_when_another_fails(site: Path):
    change_r4(site / "guides")  # both guides now need building: one changed, one broken
    other = site / "guides" / GUIDES[1]
    other_text = other.read_text()
    other.write_text(other_text.replace("kind: jfet-common-source", "kind: no-such-kind", 1))
    with pytest.raises(BuildFailed):
        build_site(site / "guides", site / "published", jobs=1)
    other.write_text(other_text)
    report = build_site(site / "guides", site / "published", jobs=1)
    assert report.rebuilt == 0  # the changed guide was cached by the failed build


def test_exception_in_the_publish_step_leaves_the_site(site: Path, monkeypatch):
    before = snapshot(site / "published")
    change_r4(site / "guides")

    def failing_fill(*args) -> None:
        raise OSError("injected failure while writing the staging copy")

    monkeypatch.setattr(publish_module, "fill", failing_fill)
    with pytest.raises(OSError, match="injected"):
        build_site(site / "guides", site / "published")
    assert snapshot(site / "published") == before


KILLED_BUILD = """
import os, signal, sys
from pathlib import Path
import kitleaf.site.publish as publish
from kitleaf.site.build import build_site

real_fill = publish.fill

def fill_half_then_die(staging, out_dir, files, changed):
    half = dict(sorted(files.items())[: len(files) // 2])
    real_fill(staging, out_dir, half, changed & half.keys())
    os.kill(os.getpid(), signal.SIGKILL)

publish.fill = fill_half_then_die
build_site(Path(sys.argv[1]), Path(sys.argv[2]))
"""


def test_build_killed_halfway_leaves_the_previous_site(site: Path):
    before = snapshot(site / "published")
    change_r4(site / "guides")
    run = subprocess.run([sys.executable, "-c", textwrap.dedent(KILLED_BUILD),
                          str(site / "guides"), str(site / "published")], timeout=300)
    assert run.returncode == -9  # SIGKILL, mid-publish
    assert snapshot(site / "published") == before
    assert list(site.glob(".published.new-*"))  # the half-written staging copy
    build_site(site / "guides", site / "published")
    assert not list(site.glob(".published.new-*"))
    assert contents(site / "published") != {k: v[0] for k, v in before.items()}


def test_cli_ends_with_the_summary_and_names_the_change(site: Path, capsys):
    change_r4(site / "guides")
    assert main(["build", str(site / "guides"), "-o", str(site / "published")]) == 0
    out = capsys.readouterr().out.splitlines()
    assert out[-1].startswith(f"built {len(GUIDES)} guide(s), ")
    assert "(1 guide(s) rebuilt, " in out[-1]
    assert any(line.startswith("changed: FB-101 ") and "R4 1.5 kΩ to 1.8 kΩ" in line
               for line in out)
