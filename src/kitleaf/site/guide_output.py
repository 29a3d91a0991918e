"""Everything one guide contributes to the site: its pages, drawings and plots, as bytes.

Each costly result is cached by the hash of exactly what it depends on: the specs by the kit's
circuit, a stage's schematic by that stage's parts and the supply, a plot by the curves it
draws. Pages are cheap and always rendered; publishing writes them only if their bytes moved.
"""

from __future__ import annotations

import functools
from collections.abc import Mapping
from pathlib import Path
from urllib.parse import quote

from kitleaf.bom import BUILD_ORDER, bom_lines, fitting_notes, rating_warnings
from kitleaf.circuit.build import build_circuit
from kitleaf.circuit.chain import KitCircuit
from kitleaf.circuit.harness import build_harness
from kitleaf.faults.report import unsolved_text
from kitleaf.faults.solve import solve_faults
from kitleaf.faults.symptoms import everywhere_faults, page_data, symptom_rows
from kitleaf.guide import parse_guide
from kitleaf.render.environment import make_environment
from kitleaf.render.pages import Card, render_page
from kitleaf.render.placement import SECTIONS, arrange, page_env
from kitleaf.render.plot import ResponsePlot, render_response_svg
from kitleaf.render.plot_drive import render_drive_svg
from kitleaf.render.plot_specs import (
    drive_picture,
    in_figures,
    kit_plot,
    stage_plot,
    wave_picture,
)
from kitleaf.render.prose import render_prose
from kitleaf.render.schematic import plus_pins_of, render_overview_svg, render_stage_svg
from kitleaf.render.summary import headline, stage_headline
from kitleaf.render.wiring_list import wires_by_part, wiring_rows
from kitleaf.render.wiring_svg import render_wiring_svg
from kitleaf.site.cache import Cache, NoCache
from kitleaf.site.fingerprint import canonical, canonical_pair, contains_span
from kitleaf.site.manifest import guide_record
from kitleaf.site.output import GuideOutput
from kitleaf.site.sound_previews import cached_previews, preview_notes
from kitleaf.specs.claims import verify
from kitleaf.specs.derive import SolvedKit, derive_specs, solve_kit
from kitleaf.specs.model import KitSpecs
from kitleaf.specs.polarity import Orientation


def process_guide(path: Path, themes: list[Path], *, cache: Cache | None = None) -> GuideOutput:
    """Parse, solve and render one guide; raises a located KitleafError on any problem."""
    cache = cache or NoCache()
    guide = parse_guide(path)
    kit = build_circuit(guide)
    solved = solve_kit(guide, kit)  # the design rules read it even when the specs are cached
    specs = cached_specs(cache, guide, kit, solved)
    slug = guide.slug
    checks = verify(guide, kit, specs, solved)  # a broken claim stops the guide here
    files, assets = stage_files(cache, kit, specs, slug, checks.orientations)
    headlines = headline_by_stage(specs)
    for name, narrow in (("overview", False), ("overview-narrow", True)):
        files[f"{slug}/{name}.svg"] = cached_svg(
            cache, name, (kit, headlines),
            lambda narrow=narrow: render_overview_svg(kit, headlines, narrow=narrow))
    responses = []  # (wide, narrow) file names of each part
    for k, part in enumerate(in_figures(kit_plot(specs))):
        stem = f"response-{k + 1}" if k else "response"
        responses.append((f"{stem}.svg", f"{stem}-narrow.svg"))
        files[f"{slug}/{stem}.svg"] = plot_svg(cache, part)
        files[f"{slug}/{stem}-narrow.svg"] = plot_svg(cache, part, narrow=True)
    drive_files = drive_pictures(cache, specs, slug, files)
    harness = build_harness(guide, kit)
    previews = cached_previews(cache, kit, solved) if guide.kit.sound_previews else None
    files.update((f"{slug}/{name}", data) for name, data in (previews.files if previews else ()))
    if harness is not None:
        files[f"{slug}/wiring.svg"] = render_wiring_svg(
            harness, f"Off-board wiring of {guide.kit.title}").encode()
    env = theme_environment(tuple(themes))
    context = {
        "guide": guide, "kit": kit, "specs": specs, "assets": assets, "root": "../",
        "drive_pictures": drive_files,
        "responses": responses,
        "pieces": arrange(render_prose(guide.text, page_env(
            guide.path, checks.values, harness, guide.kit.sound_previews))),
        "sections": SECTIONS,
        "checks": checks,
        "bom": fitting_notes(rating_warnings(bom_lines(kit.parts()), checks.stresses),
                             checks.orientations),
        "bom_headings": dict(BUILD_ORDER),
        "symptoms": cached_symptoms(cache, kit),
        "harness": harness, "wiring_rows": wiring_rows(harness) if harness else (),
        "wired_by": wires_by_part(harness),
        "previews": previews,
    }
    files[f"{slug}/index.html"] = render_page(env, "guide.html", context, guide.path)
    files[f"{slug}/bom.html"] = render_page(env, "bom.html", context, guide.path)
    card = Card(slug, guide.kit.title, guide.kit.code, guide.kit.revision, guide.kit.summary,
                headline(specs), quote(f"{slug}/index.html"))  # a relative URL, encoded
    record = guide_record(Path(path).name, kit.parts(), specs)
    notes = specs.notes + preview_notes(previews, kit, guide.kit.span)
    return GuideOutput(card, tuple(sorted(files.items())), record, notes, checks.warnings,
                       guide.kit.code_span or guide.kit.span)


def stage_files(cache: Cache, kit: KitCircuit, specs: KitSpecs, slug: str,
                orientations: Mapping[str, Orientation]):
    """Each stage's schematic and, for a signal stage, its response plot."""
    files: dict[str, bytes] = {}
    assets = {}
    for stage in kit.stages:
        # A stage's drawing depends on its own parts, the supply label and which way its
        # polarised capacitors go, nothing else.
        plus = plus_pins_of(stage, orientations)
        files[f"{slug}/{stage.id}-schematic.svg"] = cached_svg(
            cache, "schematic", (stage, kit.supply_label, sorted(plus.items())),
            lambda s=stage, p=plus: render_stage_svg(kit, s, p))
        entry = {"schematic": f"{stage.id}-schematic.svg", "plot": None}
        plot = stage_plot(specs, stage.id)
        if plot is not None:
            files[f"{slug}/{stage.id}-response.svg"] = plot_svg(cache, plot)
            files[f"{slug}/{stage.id}-response-narrow.svg"] = plot_svg(cache, plot, narrow=True)
            entry["plot"] = f"{stage.id}-response.svg"
            entry["plot_narrow"] = f"{stage.id}-response-narrow.svg"
        assets[stage.id] = entry
    return files, assets


def drive_pictures(cache: Cache, specs: KitSpecs, slug: str, files: dict) -> dict[str, str]:
    """The large-signal pictures (none where the figures were not computed) into ``files``;
    their names by picture."""
    found = {}
    for name, picture in (("drive-waves", wave_picture(specs)),
                          ("drive-curve", drive_picture(specs))):
        if picture is not None:
            files[f"{slug}/{name}.svg"] = cached_svg(cache, "drive", picture,
                                                     lambda p=picture: render_drive_svg(p))
            found[name] = f"{name}.svg"
    return found


def cached_svg(cache: Cache, kind: str, inputs: object, draw) -> bytes:
    key = cache.key(kind, canonical(inputs))
    return cache.bytes_for(kind, key, lambda: draw().encode())


def plot_svg(cache: Cache, plot: ResponsePlot, narrow: bool = False) -> bytes:
    """A response plot's SVG; ``narrow``: the phone's sheet, legends under the panels."""
    return cached_svg(cache, "plot-narrow" if narrow else "plot", plot,
                      lambda: render_response_svg(plot, narrow))


def cached_symptoms(cache: Cache, kit: KitCircuit) -> dict:
    """The symptom table and the ranking form's data, re-solved only when the circuit moved
    (not when prose moves its lines: nothing in them carries a location)."""
    key = cache.key("symptoms", canonical_pair(kit)[0])

    def solve() -> dict:
        readings = solve_faults(kit)
        rows = symptom_rows(readings)
        return {"rows": rows, "everywhere": everywhere_faults(rows), "data": page_data(readings),
                "unsolved": unsolved_text(readings) if readings.unsolved else ""}

    found = cache.load("symptoms", key)
    if isinstance(found, dict):
        return found
    symptoms = solve()
    cache.store("symptoms", key, symptoms)
    return symptoms


def cached_specs(cache: Cache, guide, kit: KitCircuit,
                 solved: SolvedKit | None = None) -> KitSpecs:
    """The solved specs, re-solved only when a block of the guide or the kit's circuit changed.

    Prose is not part of the key, nor are line numbers; specs that carry a location are stored
    under a key with the lines, so a located finding never shows a stale line.
    """
    plain, located = (cache.key("specs", form)
                      for form in canonical_pair((guide.kit, guide.stages, kit)))
    for key in (plain, located):
        found = cache.load("specs", key)
        if isinstance(found, KitSpecs):
            return found
    specs = derive_specs(guide, kit, solved)
    cache.store("specs", located if contains_span(specs) else plain, specs)
    return specs


@functools.lru_cache(maxsize=4)
def theme_environment(themes: tuple[Path, ...]):
    """One Jinja environment per process and theme: templates compile once per worker, not
    once per guide, and Jinja still reloads a template whose file changed (``kitleaf proof``)."""
    return make_environment(list(themes))


def headline_by_stage(specs) -> dict[str, str]:
    return {s.id: stage_headline(s) for s in specs.stages}
