"""Which folders a build may publish into: never the guides' own folder or one holding it, never
a file, never a folder holding files kitleaf did not write.

Publishing replaces the output folder whole, so whatever it holds is lost. Each publish leaves
a marker in the site (:data:`PUBLISH_MARKER`) listing the files it wrote; a later build takes
only those files as its own and refuses a folder with any other, before anything is built.
"""

from __future__ import annotations

import os
from collections.abc import Iterable
from pathlib import Path

from kitleaf.errors import BuildError, SourceSpan

PUBLISH_MARKER = ".kitleaf-published"
MARKER_HEADER = "# kitleaf published site: the files it wrote; the next build replaces them\n"


def check_output_folder(out_dir: Path, guides: Path) -> None:
    """Refuse an output that holds the guides (their folder, the project) or is not ours."""
    source = (guides if guides.is_dir() else guides.parent).resolve()
    out = out_dir.resolve()
    if source == out or source.is_relative_to(out):
        raise _refusal(out_dir, f"holds this build's guides ({guides}), and publishing replaces "
                                "it whole; give a folder of its own, such as published/")
    check_publishable(out_dir)


def check_publishable(out_dir: Path) -> None:
    """Refuse a path that is a file, or a folder holding files no kitleaf publish wrote."""
    out = out_dir.resolve()
    if out.exists() and not out.is_dir():
        raise _refusal(out_dir, "is a file, not a folder; give a folder for the site")
    foreign = sorted(files_on_disk(out) - kitleaf_files(out))
    if foreign:
        raise _refusal(out_dir, f"holds {len(foreign)} file(s) kitleaf did not write, such as "
                                f"{foreign[0]}; publishing replaces the folder whole, so move "
                                "them out or give another folder")


def files_on_disk(out: Path) -> set[str]:
    """Every entry below ``out`` that is not a folder (links to folders included), relative."""
    found: set[str] = set()
    if not out.is_dir():
        return found
    for folder, dirs, files in os.walk(out):
        here = Path(folder)
        links = [d for d in dirs if (here / d).is_symlink()]  # os.walk does not enter them
        found.update((here / name).relative_to(out).as_posix() for name in files + links)
    return found


def kitleaf_files(out: Path) -> set[str]:
    """The files the marker of the last publish lists, and the marker itself."""
    try:
        text = (out / PUBLISH_MARKER).read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError):
        return set()
    if not text.startswith(MARKER_HEADER):
        return set()
    return {line for line in text.splitlines()[1:] if line} | {PUBLISH_MARKER}


def marker_bytes(names: Iterable[str]) -> bytes:
    """The marker's text: its header, then every published file's path, sorted."""
    return (MARKER_HEADER + "".join(f"{name}\n" for name in sorted(names))).encode()


def _refusal(out_dir: Path, what: str) -> BuildError:
    return BuildError(f"the output folder {what}; nothing was written", SourceSpan(str(out_dir)))
