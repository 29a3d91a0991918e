"""What a site holds once: each guide's page folder and each kit's code."""

from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path

from kitleaf.errors import BuildError, KitleafError, SourceSpan


def check_slugs(paths: Sequence[Path], slugs: Sequence[str]) -> None:
    """Two guide files whose names make the same page folder are an error naming both."""
    seen: dict[str, Path] = {}
    for path, slug in zip(paths, slugs, strict=True):
        if slug in seen:
            raise BuildError(f"{path.name} and {seen[slug].name} both make the pages '{slug}/'; "
                             "rename one of the files", SourceSpan(str(path)))
        seen[slug] = path


def reused_codes(kits: Sequence[tuple[str, SourceSpan]]) -> list[KitleafError]:
    """Each kit code a guide gives after another did, located at its ``code:`` line and naming
    the first; kits are (code, span of the code line), in guide order."""
    first: dict[str, SourceSpan] = {}
    errors: list[KitleafError] = []
    for code, span in kits:
        key = code.strip().casefold()  # FB-101 and fb-101 would read as one kit on the index
        if key in first:
            other = first[key]
            errors.append(BuildError(f"the kit code {code} is also the code of "
                                     f"{Path(other.path).name} (line {other.line}); give each "
                                     "kit its own code", span))
        else:
            first[key] = span
    return errors
