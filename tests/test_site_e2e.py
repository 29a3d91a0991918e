"""The demo site built end to end and read back as HTML: pages, drawings, links, escaping."""

from __future__ import annotations

from pathlib import Path

import pytest

from kitleaf.circuit.build import build_circuit
from kitleaf.circuit.stages import KINDS
from kitleaf.guide import parse_guide
from site_pages import (
    DEMO_GUIDES,
    build_demo_site,
    local_target,
    parse_page,
    site_pages,
    urls,
)

HOSTILE_PROSE = """
## Notes from the bench

Wren marker paragraph. <script>alert(1)</script>

Here is [a trap](javascript:alert(1)) and [another](JaVaScRiPt:alert(2)).

<img src=x onerror=alert(3)>

![a picture](javascript:alert(4))

<a href="javascript:alert(5)" onclick="alert(6)">raw link</a>
"""


def hostile_guide() -> str:
    """The Heron demo renamed, with prose that tries to inject markup and a too-low rating."""
    text = (DEMO_GUIDES / "heron-opamp-boost.md").read_text(encoding="utf-8")
    text = text.replace("title: Heron Op-Amp Boost", "title: Wren <b>Bold</b> Boost")
    text = text.replace("code: FB-303", "code: FB-909")  # each kit its own code
    text = text.replace("summary: A clean", "summary: <script>alert(7)</script> A clean")
    # C10 sits across the 9 V rail behind a Schottky diode, about 8.8 V (hand calculation);
    # 80 % of 6.3 V is 5.0 V (common practice, no source), so the BOM must warn.
    text = text.replace("C10 100u electrolytic 16V", "C10 100u electrolytic 6.3V")
    return text + HOSTILE_PROSE


@pytest.fixture(scope="module")
def site(tmp_path_factory) -> Path:
    return build_demo_site(tmp_path_factory.mktemp("e2e"), {"wren-test-boost.md": hostile_guide()})


@pytest.fixture(scope="module")
def index(site):
    return parse_page(site / "index.html")


def guide_slugs() -> list[str]:
    return sorted(p.stem for p in DEMO_GUIDES.glob("*.md"))


def test_every_page_the_index_links_exists(site, index):
    hrefs = [e.attrs["href"] for e in index.iter("a") if e.attrs.get("href")]
    for slug in [*guide_slugs(), "wren-test-boost"]:
        assert f"{slug}/index.html" in hrefs
    for href in hrefs:
        target = local_target(site / "index.html", href)
        assert target is not None and target[0].is_file(), href


@pytest.mark.parametrize("slug", guide_slugs())
def test_every_stage_shows_a_schematic_and_a_plot_with_alt_text(site, slug):
    kit = build_circuit(parse_guide(DEMO_GUIDES / f"{slug}.md"))
    page = parse_page(site / slug / "index.html")
    sections = {e.attrs.get("id"): e for e in page.find_all("section", "stage")}
    for stage in kit.stages:
        section = sections[f"stage-{stage.id}"]
        assert _images(section, "schematic"), f"{stage.id}: no schematic"
        plots = _images(section, "response")
        assert bool(plots) == KINDS[stage.kind].signal, f"{stage.id}: plot only on signal stages"


def _images(section, figure_class: str) -> list:
    found = [img for fig in section.find_all("figure", figure_class) for img in fig.iter("img")]
    for img in found:
        assert (img.attrs.get("alt") or "").strip(), f"image {img.attrs.get('src')} has no alt"
        assert img.attrs.get("src"), "image without a source"
    return found


def test_no_broken_relative_links_or_image_sources(site):
    pages = site_pages(site)
    assert len(pages) >= 1 + 2 * (len(guide_slugs()) + 1)  # index, guide and BOM pages
    ids = {page: {e.attrs.get("id") for e in parse_page(page).iter()} for page in pages}
    for page in pages:
        for tag, url in urls(parse_page(page)):
            target = local_target(page, url)
            if target is None:
                continue
            path, fragment = target
            assert path.is_file(), f"{page.relative_to(site)}: {tag} {url} is missing"
            if fragment and path.suffix == ".html":
                assert fragment in ids[path], f"{page.relative_to(site)}: no #{fragment} there"


@pytest.mark.parametrize("page_name", ["index.html", "bom.html"])
def test_guide_text_never_survives_as_markup(site, page_name):
    page = parse_page(site / "wren-test-boost" / page_name)
    assert "Wren" in page.all_text()  # the hostile guide really was built and rendered
    if page_name == "index.html":
        assert "Wren marker paragraph." in page.all_text()
    _assert_inert(page)


def test_kit_text_is_escaped_on_the_index(index):
    card = next(c for c in index.find_all("li", "card") if "Wren" in c.all_text())
    assert "<b>Bold</b>" in card.all_text()  # shown as text, not as a bold element
    assert not card.find_all("b")
    _assert_inert(index)


# The theme's own scripts: the ranking form's data (inert JSON, escaped by Jinja's tojson)
# and its static script. Nothing a guide writes may add another.
THEME_SCRIPTS = ({"type": "application/json", "id": "pinpoint-data"},
                 {"src": "../static/pinpoint.js", "defer": None})


def _assert_inert(page) -> None:
    assert all(s.attrs in THEME_SCRIPTS for s in page.find_all("script"))
    data = [s for s in page.find_all("script") if s.attrs.get("id") == "pinpoint-data"]
    assert all("<" not in s.all_text() for s in data)
    for element in page.iter():
        handlers = [name for name in element.attrs if name.startswith("on")]
        assert not handlers, f"<{element.tag}> carries {handlers}"
    for tag, url in urls(page):
        assert not url.strip().lower().startswith(("javascript:", "vbscript:")), (tag, url)


def test_bom_page_lists_every_part_and_the_rating_warning(site):
    kit = build_circuit(parse_guide(DEMO_GUIDES / "heron-opamp-boost.md"))
    page = parse_page(site / "wren-test-boost" / "bom.html")
    refs = " ".join(td.all_text() for td in page.find_all("td", "refs")).split()
    # The op-amp sections U1A and U1B are bought as the chip U1, which also gets a socket line.
    expected = [p.designator for p in kit.parts() if p.designator not in ("U1A", "U1B")]
    expected += ["U1", "U1"]
    assert sorted(refs) == sorted(expected)
    warnings = [w.all_text() for w in page.find_all("p", "rating-warning")]
    # 8.8 V / 0.8 = 11 V, and the next stocked rating above is 16 V (common practice).
    assert len(warnings) == 1 and "C10" in warnings[0] and "16 V or more" in warnings[0]
    ticks = page.find_all("input")
    assert len(ticks) == len(page.find_all("tr", "bom-line"))
    assert all(t.attrs.get("type") == "checkbox" for t in ticks)


def test_each_off_path_section_says_what_its_current_is(site):
    page = parse_page(site / "heron-opamp-boost" / "index.html")
    captions = [c.all_text() for c in page.find_all("caption")]
    # the power section feeds the stages; the op-amp's unused half feeds nothing
    assert sum("besides the stages it feeds" in c for c in captions) == 1
    assert sum(c == "What this section draws from the supply." for c in captions) == 1
