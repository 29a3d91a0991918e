"""``kitleaf new NAME``: a ready-to-edit guide that builds as it is."""

from __future__ import annotations

import importlib.resources

from kitleaf.cli import command
from kitleaf.errors import KitleafError, SourceSpan
from kitleaf.guide.slug import slug_for


def starter_text(title: str, code: str) -> str:
    template = (importlib.resources.files("kitleaf") / "data" / "new-guide.md").read_text("utf-8")
    return template.replace("@TITLE@", title).replace("@CODE@", code)


@command("new")
def run(args) -> int:
    slug = slug_for(args.name)
    if not slug:
        raise KitleafError(f"cannot make a file name from {args.name!r}; use letters or digits")
    path = args.dir / f"{slug}.md"
    if path.exists():
        raise KitleafError(f"{path} exists already; pick another name or edit it",
                           SourceSpan(str(path), 1))
    args.dir.mkdir(parents=True, exist_ok=True)
    code = "".join(w[0] for w in slug.split("-")).upper()[:3] + "-1"
    path.write_text(starter_text(args.name, code), encoding="utf-8")
    print(f"wrote {path}; edit it, then run 'kitleaf build {args.dir}'")
    return 0
