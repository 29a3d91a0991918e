"""Where the build cache lives: beside the output by default, or a folder the user names with
--cache-dir or KITLEAF_CACHE_DIR, never one holding other files or inside the site."""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest

from kitleaf.cli import main
from kitleaf.commands.proof import ignores
from kitleaf.site.cache import CACHE_DIR_NAME, TAG_NAME

DEMO = Path(__file__).resolve().parents[1] / "guides"


@pytest.fixture
def project(tmp_path: Path, monkeypatch) -> Path:
    (tmp_path / "guides").mkdir()
    shutil.copy(DEMO / "brookside-boost.md", tmp_path / "guides")
    monkeypatch.chdir(tmp_path)
    monkeypatch.delenv("KITLEAF_CACHE_DIR", raising=False)
    return tmp_path


def cache_kinds(folder: Path) -> set[str]:
    return {p.name for p in folder.iterdir() if p.is_dir()}


def test_cache_dir_holds_the_cache_and_a_rebuild_uses_it(project: Path, capsys):
    shared = project / "shared-cache"
    assert main(["build", "--cache-dir", str(shared)]) == 0
    assert "guide" in cache_kinds(shared) and (shared / TAG_NAME).is_file()
    assert not (project / CACHE_DIR_NAME).exists()
    capsys.readouterr()
    assert main(["build", "--cache-dir", str(shared)]) == 0
    assert "(0 guide(s) rebuilt, nothing changed on disk)" in capsys.readouterr().out


def test_the_variable_names_the_cache_and_the_option_wins(project: Path, monkeypatch, capsys):
    monkeypatch.setenv("KITLEAF_CACHE_DIR", str(project / "from-env"))
    assert main(["build"]) == 0
    assert "guide" in cache_kinds(project / "from-env")
    assert main(["build", "-o", "other", "--cache-dir", str(project / "from-option")]) == 0
    assert "guide" in cache_kinds(project / "from-option")
    assert not (project / CACHE_DIR_NAME).exists()


def test_a_folder_of_other_files_is_refused_as_cache(project: Path, capsys):
    (project / "notes").mkdir()
    (project / "notes" / "parts.txt").write_text("mine\n")
    assert main(["build", "--cache-dir", "notes"]) == 1
    err = capsys.readouterr().err.strip().splitlines()
    assert err == ["notes: error: the cache folder holds files that are not kitleaf's cache, "
                   "and old cache files are removed from it; give an empty or new folder; "
                   "nothing was written"]
    assert sorted(p.name for p in project.iterdir()) == ["guides", "notes"]


@pytest.mark.parametrize("cache", ["published/cache", "."])
def test_a_cache_in_or_around_the_site_is_refused(project: Path, cache: str, capsys):
    assert main(["build", "--cache-dir", cache]) == 1
    assert "error: the cache folder" in capsys.readouterr().err
    assert sorted(p.name for p in project.iterdir()) == ["guides"]


def test_proof_does_not_rebuild_for_its_own_cache(tmp_path: Path):
    wanted = ignores(tmp_path / "published", tmp_path / "guides" / "cache")
    assert wanted(None, str(tmp_path / "guides" / "a.md"))
    assert not wanted(None, str(tmp_path / "guides" / "cache" / "guide" / "ab" / "cd"))
    assert not wanted(None, str(tmp_path / "published" / "index.html"))
    assert wanted(None, str(tmp_path / "published-notes" / "a.md"))  # only the folder itself
