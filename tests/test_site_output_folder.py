"""The output folder: a build never removes a file it did not write, never writes outside the
output, and writes no link that is not a relative path of its own."""

from __future__ import annotations

import re
import shutil
from pathlib import Path

import pytest

from kitleaf.cli import main
from kitleaf.errors import BuildError, GuideError
from kitleaf.guide import parse_guide
from kitleaf.site.output_folder import PUBLISH_MARKER
from kitleaf.site.publish import publish

DEMO = Path(__file__).resolve().parents[1] / "guides"
QUICK = "brookside-boost.md"  # the quickest demo guide to build


def listing(root: Path) -> dict[str, bytes]:
    """Every file under ``root`` with its bytes: what a refused build must leave as it was."""
    return {p.relative_to(root).as_posix(): p.read_bytes()
            for p in sorted(root.rglob("*")) if p.is_file()}


@pytest.fixture
def project(tmp_path: Path) -> Path:
    """A maker's project folder: guides/ with one guide, and notes of their own beside it."""
    (tmp_path / "guides").mkdir()
    shutil.copy(DEMO / QUICK, tmp_path / "guides" / QUICK)
    (tmp_path / "notes.txt").write_text("order more 2N3904\n")
    return tmp_path


def refused(argv: list[str], root: Path, capsys) -> str:
    """Run a build that must be refused; the one error line, with the project untouched."""
    before = listing(root)
    assert main(argv) == 1
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1, err
    assert listing(root) == before
    assert not any(p.name.startswith(".") for p in root.iterdir())  # no cache, lock or staging
    return err[0]


def test_the_guides_folder_is_refused_as_output(project: Path, capsys):
    guides = project / "guides"
    line = refused(["build", str(guides), "-o", str(guides)], project, capsys)
    assert line.startswith(f"{guides}: error: the output folder holds this build's guides")


def test_the_project_folder_is_refused_as_output(project: Path, capsys, monkeypatch):
    monkeypatch.chdir(project)
    line = refused(["build", "guides", "-o", "."], project, capsys)
    assert line.startswith(".: error: the output folder holds this build's guides")


def test_a_single_guide_file_protects_its_folder_too(project: Path, capsys):
    guides = project / "guides"
    refused(["build", str(guides / QUICK), "-o", str(guides)], project, capsys)


def test_a_folder_of_other_files_is_refused(project: Path, capsys):
    other = project / "upload"
    other.mkdir()
    (other / "logo.txt").write_text("keep me\n")
    line = refused(["build", str(project / "guides"), "-o", str(other)], project, capsys)
    assert "holds 1 file(s) kitleaf did not write, such as logo.txt" in line


def test_a_file_is_refused_as_output(project: Path, capsys):
    line = refused(["build", str(project / "guides"), "-o", str(project / "notes.txt")],
                   project, capsys)
    assert line.startswith(f"{project / 'notes.txt'}: error: the output folder is a file")


def test_an_empty_folder_is_accepted(tmp_path: Path):
    out = tmp_path / "empty"
    out.mkdir()
    publish(out, {"index.html": b"<p>x</p>\n"})
    assert listing(out)["index.html"] == b"<p>x</p>\n"


def test_a_file_dropped_into_a_published_site_is_not_removed(tmp_path: Path):
    out = tmp_path / "published"
    publish(out, {"index.html": b"<p>x</p>\n"})
    assert PUBLISH_MARKER in listing(out)
    (out / "mine.txt").write_text("mine\n")
    with pytest.raises(BuildError, match="such as mine.txt"):
        publish(out, {"index.html": b"<p>y</p>\n"})
    assert (out / "mine.txt").read_text() == "mine\n"
    assert (out / "index.html").read_bytes() == b"<p>x</p>\n"


def test_a_link_to_a_folder_inside_the_output_counts_as_not_ours(tmp_path: Path):
    out = tmp_path / "published"
    publish(out, {"index.html": b"<p>x</p>\n"})
    (tmp_path / "photos").mkdir()
    (out / "photos").symlink_to(tmp_path / "photos")
    with pytest.raises(BuildError, match="such as photos"):
        publish(out, {"index.html": b"<p>y</p>\n"})


@pytest.mark.parametrize("name", ["...md", "..md", ".-.md"])
def test_a_file_name_with_no_letters_makes_no_page_folder(tmp_path: Path, name: str):
    path = tmp_path / name
    shutil.copy(DEMO / QUICK, path)
    with pytest.raises(GuideError, match="makes no page name") as caught:
        parse_guide(path)
    assert str(caught.value).startswith(f"{path}: error: ")  # the file, no line of it


def test_a_dotted_file_name_writes_nothing_outside_the_output(tmp_path: Path, capsys):
    folder = tmp_path / "guides"
    folder.mkdir()
    shutil.copy(DEMO / QUICK, folder / "...md")
    out = tmp_path / "deep" / "published"
    assert main(["build", str(folder / "...md"), "-o", str(out)]) == 1
    assert "makes no page name" in capsys.readouterr().err
    assert sorted(p.name for p in tmp_path.iterdir()) == ["guides"]


def test_script_file_names_make_plain_relative_links(tmp_path: Path, capsys):
    folder = tmp_path / "guides"
    folder.mkdir()
    shutil.copy(DEMO / QUICK, folder / "javascript:alert(1).md")
    out = tmp_path / "published"
    assert main(["build", str(folder), "-o", str(out)]) == 0
    pages = {rel: data.decode() for rel, data in listing(out).items() if rel.endswith(".html")}
    assert "javascript-alert-1/index.html" in pages
    urls = [u for page in pages.values() for u in re.findall(r'(?:href|src)="([^"]*)"', page)]
    assert urls
    # A URL with a scheme (javascript:, data:, http:) is not one kitleaf made.
    assert not [u for u in urls if re.match(r"^[a-zA-Z][a-zA-Z0-9+.-]*:", u)]
    assert not [u for u in urls if u.startswith(("/", "\\"))]


@pytest.mark.parametrize("linked", ["file", "folder"])
def test_a_link_in_the_theme_static_folder_is_never_published(project: Path, linked: str,
                                                              capsys):
    secret = project / "elsewhere"
    secret.mkdir()
    (secret / "key.txt").write_text("not for the web\n")
    static = project / "themes" / "default" / "static"
    static.mkdir(parents=True)
    link = static / ("key.txt" if linked == "file" else "more")
    link.symlink_to(secret / "key.txt" if linked == "file" else secret)
    out = project / "published"
    line = refused(["build", str(project / "guides"), "-o", str(out)], project, capsys)
    assert line.startswith(f"{link}: error: a symbolic link in the theme's static folder")
    assert not out.exists()
