"""``kitleaf new NAME``: a ready-to-edit guide that builds as it is."""

from __future__ import annotations

import argparse
import importlib.resources
import re
from pathlib import Path

from kitleaf.commands import command
from kitleaf.errors import KitleafError, SourceSpan
from kitleaf.guide.slug import slug_for


def add_options(p: argparse.ArgumentParser) -> None:
    p.add_argument("name", help='the kit\'s title, such as "Fern Fuzz" (its file: fern-fuzz.md)')
    p.add_argument("--dir", default=Path("guides"), type=Path,
                   help="the folder to write into (default: guides/)")


def starter_text(title: str, code: str) -> str:
    template = (importlib.resources.files("kitleaf") / "data" / "new-guide.md").read_text("utf-8")
    return template.replace("@TITLE@", title).replace("@CODE@", code)


def free_code(slug: str, folder: Path) -> str:
    """Initials and a number no guide of ``folder`` uses (a site takes each code once)."""
    initials = "".join(w[0] for w in slug.split("-")).upper()[:3]
    taken = set()
    for guide in folder.glob("*.md"):
        text = guide.read_text(encoding="utf-8", errors="replace")
        taken.update(c.casefold() for c in re.findall(r"^code:\s*(\S+)", text, re.MULTILINE))
    return next(f"{initials}-{n}" for n in range(1, len(taken) + 2)
                if f"{initials}-{n}".casefold() not in taken)


@command("new", add_options)
def run(args) -> int:
    slug = slug_for(args.name)
    if not slug:
        raise KitleafError(f"cannot make a file name from {args.name!r}; use letters or digits")
    path = args.dir / f"{slug}.md"
    if path.exists():
        raise KitleafError("a guide of that name exists already; pick another name or edit it",
                           SourceSpan(str(path)))
    args.dir.mkdir(parents=True, exist_ok=True)
    code = free_code(slug, args.dir)
    path.write_text(starter_text(args.name, code), encoding="utf-8")
    print(f"wrote {path}; edit it, then run 'kitleaf build {args.dir}'")
    return 0
