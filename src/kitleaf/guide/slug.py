"""Page names made from file names: lower-case ASCII letters, digits and hyphens only, so that
a guide's pages are one folder inside the site and its links are relative paths as written."""

from __future__ import annotations

import re
import unicodedata
from pathlib import Path

from kitleaf.errors import GuideError, SourceSpan

_NOT_NAME = re.compile(r"[^a-z0-9]+")


def slug_for(name: str) -> str:
    """``name`` folded to ASCII (é -> e, ß -> ss), lower case, every other run of characters a
    hyphen; empty when nothing is left (``...``, ``..``)."""
    ascii_text = unicodedata.normalize("NFKD", name.casefold()).encode("ascii", "ignore").decode()
    return _NOT_NAME.sub("-", ascii_text.lower()).strip("-")


def guide_slug(path: Path) -> str:
    """The page folder of the guide at ``path``, from its file name without ``.md``."""
    slug = slug_for(path.stem)
    if not slug:
        raise GuideError(f"the file name {path.name!r} makes no page name; rename the guide "
                         "with letters or digits", SourceSpan(str(path)))
    return slug
