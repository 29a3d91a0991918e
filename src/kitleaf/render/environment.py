"""The Jinja environment of a build: theme loaders, strict undefined, autoescape, formatters."""

from __future__ import annotations

import importlib.resources
from pathlib import Path

import jinja2

from kitleaf.display import FORMATTERS
from kitleaf.render.verdicts import check_rows

DEFAULT_THEME = "default"


def packaged_theme() -> Path:
    """The default theme shipped inside the kitleaf package (top-level themes/ in the repo)."""
    return Path(str(importlib.resources.files("kitleaf.themes") / DEFAULT_THEME))


def theme_dirs(site_root: Path | None, theme: str = DEFAULT_THEME) -> list[Path]:
    """Theme folders, most specific first: the site's own themes/NAME, then the packaged one."""
    dirs = []
    if site_root is not None and (site_root / "themes" / theme).is_dir():
        dirs.append(site_root / "themes" / theme)
    dirs.append(packaged_theme())
    return dirs


def make_environment(themes: list[Path]) -> jinja2.Environment:
    """One environment per build: a site's templates override the packaged ones."""
    loader = jinja2.ChoiceLoader([jinja2.FileSystemLoader(str(d / "templates")) for d in themes])
    env = jinja2.Environment(
        loader=loader,
        undefined=jinja2.StrictUndefined,
        autoescape=True,
        keep_trailing_newline=True,
        trim_blocks=True,
        lstrip_blocks=True,
    )
    env.filters.update(FORMATTERS)
    env.globals["check_rows"] = check_rows
    return env
