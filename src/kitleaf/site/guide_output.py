"""Everything one guide contributes to the site: its pages, drawings and plots, as bytes."""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

from kitleaf.bom import bom_lines
from kitleaf.circuit.build import build_circuit
from kitleaf.guide import parse_guide
from kitleaf.render.environment import make_environment
from kitleaf.render.pages import Card, render_page
from kitleaf.render.plot import render_response_svg
from kitleaf.render.prose import render_prose
from kitleaf.render.schematic import render_overview_svg, render_stage_svg
from kitleaf.specs.derive import derive_specs
from kitleaf.specs.plots import kit_plot, stage_plot
from kitleaf.specs.summary import headline, stage_headline


@dataclass(frozen=True)
class GuideOutput:
    """The files of one guide (site-relative path -> bytes) and its index card."""

    card: Card
    files: tuple[tuple[str, bytes], ...]


def process_guide(path: Path, themes: list[Path]) -> GuideOutput:
    """Parse, solve and render one guide; raises a located KitleafError on any problem."""
    guide = parse_guide(path)
    kit = build_circuit(guide)
    specs = derive_specs(guide, kit)
    slug = guide.slug
    files: dict[str, bytes] = {}
    assets = {}
    for stage in kit.stages:
        schematic = f"{slug}/{stage.id}-schematic.svg"
        files[schematic] = render_stage_svg(kit, stage).encode()
        entry = {"schematic": f"{stage.id}-schematic.svg", "plot": None}
        plot = stage_plot(specs, stage.id)
        if plot is not None:
            files[f"{slug}/{stage.id}-response.svg"] = render_response_svg(plot).encode()
            entry["plot"] = f"{stage.id}-response.svg"
        assets[stage.id] = entry
    files[f"{slug}/overview.svg"] = render_overview_svg(kit, headline_by_stage(specs)).encode()
    files[f"{slug}/response.svg"] = render_response_svg(kit_plot(specs)).encode()
    env = make_environment(themes)
    context = {
        "guide": guide, "kit": kit, "specs": specs, "assets": assets, "root": "../",
        "pieces": render_prose(guide.text), "bom": bom_lines(kit.parts()),
    }
    files[f"{slug}/index.html"] = render_page(env, "guide.html", context, guide.path)
    files[f"{slug}/bom.html"] = render_page(env, "bom.html", context, guide.path)
    card = Card(slug, guide.kit.title, guide.kit.code, guide.kit.revision, guide.kit.summary,
                headline(specs), f"{slug}/index.html")
    return GuideOutput(card, tuple(sorted(files.items())))


def headline_by_stage(specs) -> dict[str, str]:
    return {s.id: stage_headline(s) for s in specs.stages}
