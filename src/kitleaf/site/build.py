"""build_site: a folder of guides in, a whole static site out, or nothing written at all."""

from __future__ import annotations

import time
from dataclasses import dataclass
from pathlib import Path

from kitleaf.errors import KitleafError
from kitleaf.render.environment import make_environment, theme_dirs
from kitleaf.render.pages import render_page
from kitleaf.site.discover import find_guides, site_root_for
from kitleaf.site.guide_output import GuideOutput, process_guide
from kitleaf.site.publish import publish


class BuildFailed(Exception):
    """One or more guides failed; ``errors`` holds each located error."""

    def __init__(self, errors: list[KitleafError]) -> None:
        super().__init__(f"{len(errors)} guide(s) failed")
        self.errors = errors


@dataclass(frozen=True)
class BuildReport:
    guides: int
    files: int
    seconds: float


def collect(target: Path, themes: list[Path]) -> list[GuideOutput]:
    """Process every guide; gather every guide's error instead of stopping at the first."""
    outputs, errors = [], []
    for path in find_guides(target):
        try:
            outputs.append(process_guide(path, themes))
        except KitleafError as exc:
            errors.append(exc)
    if errors:
        raise BuildFailed(errors)
    return outputs


def site_files(outputs: list[GuideOutput], themes: list[Path]) -> dict[str, bytes]:
    """Every file of the site: the guides' own, the index and the theme's static assets."""
    files: dict[str, bytes] = {}
    for output in outputs:
        files.update(output.files)
    env = make_environment(themes)
    cards = sorted((o.card for o in outputs), key=lambda c: (c.code, c.slug))
    files["index.html"] = render_page(env, "index.html", {"cards": cards, "root": ""}, "index")
    files.update(static_files(themes))
    return files


def static_files(themes: list[Path]) -> dict[str, bytes]:
    """The theme's static folder; a site's own file overrides the packaged one of that name."""
    files: dict[str, bytes] = {}
    for theme in reversed(themes):
        static = theme / "static"
        for path in sorted(p for p in static.rglob("*") if p.is_file()):
            files[f"static/{path.relative_to(static).as_posix()}"] = path.read_bytes()
    return files


def build_site(target: Path, out_dir: Path) -> BuildReport:
    """Build every guide under ``target`` into ``out_dir``; on any error nothing is written."""
    started = time.perf_counter()
    themes = theme_dirs(site_root_for(target))
    files = site_files(collect(target, themes), themes)
    publish(out_dir, files)
    return BuildReport(len(find_guides(target)), len(files), time.perf_counter() - started)
