"""Finding a site's guides: every ``*.md`` file of a folder, in name order."""

from __future__ import annotations

from pathlib import Path

from kitleaf.errors import BuildError, SourceSpan


def find_guides(target: Path) -> list[Path]:
    """The guide files of ``target`` (a folder of guides, or one guide file)."""
    if target.is_file():
        return [target]
    if not target.is_dir():
        raise BuildError(f"no such folder or guide: {target}; give a folder of .md guides",
                         SourceSpan(str(target)))
    guides = sorted(p for p in target.glob("*.md") if not p.name.startswith((".", "_")))
    if not guides:
        raise BuildError(f"no guides (*.md) in {target}; write one with 'kitleaf new NAME'",
                         SourceSpan(str(target)))
    return guides


def site_root_for(target: Path) -> Path:
    """The site folder a guide folder belongs to: where a ``themes/`` override would live."""
    folder = target if target.is_dir() else target.parent
    return folder.resolve().parent
