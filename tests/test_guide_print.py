"""The guide pages printed by headless chromium on A4 and US Letter, read back with poppler:
numbered pages, the kit at a glance on the first, the voltage table and the parts list each
opening a page, no page holding only a heading, and every designator on paper."""

from __future__ import annotations

import re

import pytest

from chromium_pipe import Browser, Page, require_tool
from kitleaf.circuit.build import build_circuit
from kitleaf.circuit.harness import build_harness
from kitleaf.guide import parse_guide
from kitleaf.render.wiring_list import wiring_rows
from kitleaf.site.build import build_site
from site_pages import DEMO_GUIDES, build_demo_site
from test_bom_print import PAGE_POINTS, has_word, page_count_and_size, page_texts

pytestmark = pytest.mark.slow

SLUGS = sorted(p.stem for p in DEMO_GUIDES.glob("*.md"))
HEADED = "brookside-boost"  # printed once more with the voltages under the maker's own heading
MAKER_HEADING = "Measure the voltages"
WIRING = "Wiring the jacks, footswitch and power"
FOOTER = re.compile(r"^Page (\d+) of (\d+)$")
# The most pages each demo guide may print on, A4 and Letter alike: its length on the longer
# paper when the print layout was last tightened, rounded up to spare a page where it had
# none. A change that lengthens a guide on paper must raise its figure here, on purpose.
PAGE_BUDGET = {"alder-drive": 11, "brookside-boost": 10, "heron-opamp-boost": 13,
               "kestrel-drive": 21, "millrace-jfet-boost": 10}


@pytest.fixture(scope="module")
def printed(tmp_path_factory) -> dict[tuple[str, str], list[str]]:
    """Each demo guide page (and the headed variant) printed on each paper: its pages' text."""
    chromium = require_tool("chromium")
    require_tool("pdfinfo")
    require_tool("pdftotext")
    root = tmp_path_factory.mktemp("guide-print")
    site = build_demo_site(root)
    headed = root / "headed"
    headed.mkdir()
    text = (DEMO_GUIDES / f"{HEADED}.md").read_text(encoding="utf-8")
    (headed / f"{HEADED}.md").write_text(f"{text}\n## {MAKER_HEADING}\n\n{{@voltages}}\n",
                                         encoding="utf-8")
    build_site(headed, root / "headed-site", jobs=1, use_cache=False)
    urls = {slug: site / slug / "index.html" for slug in SLUGS}
    urls["headed"] = root / "headed-site" / HEADED / "index.html"
    found = {}
    with Browser(chromium) as browser:
        for name, path in urls.items():
            page = Page(browser, path.as_uri())
            for paper in PAGE_POINTS:
                pdf = root / f"{name}-{paper}.pdf"
                pdf.write_bytes(page.pdf(paper))
                pages, size = page_count_and_size(pdf)
                assert size == pytest.approx(PAGE_POINTS[paper], abs=1.0)
                found[name, paper] = page_texts(pdf, pages)
    return found


def lines_of(text: str) -> list[str]:
    return [line.strip() for line in text.splitlines() if line.strip()]


def body_of(text: str) -> list[str]:
    """A page's lines without its page-number foot."""
    return [line for line in lines_of(text) if not FOOTER.match(line)]


CASES = [(slug, paper) for slug in [*SLUGS, "headed"] for paper in sorted(PAGE_POINTS)]


@pytest.mark.parametrize("paper", sorted(PAGE_POINTS))
@pytest.mark.parametrize("slug", SLUGS)
def test_each_demo_guide_prints_within_its_page_budget(printed, slug, paper):
    assert sorted(PAGE_BUDGET) == SLUGS
    assert len(printed[slug, paper]) <= PAGE_BUDGET[slug]


@pytest.mark.parametrize(("name", "paper"), CASES)
def test_every_page_is_numbered_page_n_of_the_count(printed, name, paper):
    pages = printed[name, paper]
    feet = [[FOOTER.match(line).groups() for line in lines_of(text) if FOOTER.match(line)]
            for text in pages]
    assert feet == [[(str(n), str(len(pages)))] for n in range(1, len(pages) + 1)]


@pytest.mark.parametrize(("name", "paper"), CASES)
def test_no_page_holds_only_a_heading(printed, name, paper):
    """A heading always has some of what it heads on its page: more than one short line."""
    for number, text in enumerate(printed[name, paper], start=1):
        body = body_of(text)
        assert len(body) > 2 and sum(map(len, body[1:])) > 80, (number, body)


@pytest.mark.parametrize(("name", "paper"), CASES)
def test_first_page_carries_the_title_and_the_kit_at_a_glance(printed, name, paper):
    first = printed[name, paper][0]
    slug = HEADED if name == "headed" else name
    guide = parse_guide(DEMO_GUIDES / f"{slug}.md")
    assert body_of(first)[0] == guide.kit.title
    # A kit that clips by design says "Small-signal gain at 1 kHz"; poppler may break the label
    # around its table cell's neighbours, so "kHz" is looked for on its own.
    assert "The kit at a glance" in first
    assert re.search(r"gain at 1\b", first, re.IGNORECASE) and "kHz" in first, first


@pytest.mark.parametrize(("name", "paper"), CASES)
def test_the_voltage_table_and_the_parts_list_each_open_a_page(printed, name, paper):
    pages = printed[name, paper]
    opening = "Voltages to measure" if name != "headed" else MAKER_HEADING
    voltages = [n for n, text in enumerate(pages) if body_of(text)[0] == opening]
    parts = [n for n, text in enumerate(pages) if body_of(text)[0] == "Bill of materials"]
    assert len(voltages) == 1 and len(parts) == 1
    assert "Measured" in pages[voltages[0]]
    assert voltages[0] < parts[0]


@pytest.mark.parametrize(("name", "paper"), CASES)
def test_every_designator_is_printed(printed, name, paper):
    slug = HEADED if name == "headed" else name
    kit = build_circuit(parse_guide(DEMO_GUIDES / f"{slug}.md"))
    text = "\n".join(printed[name, paper])
    missing = [p.designator for p in kit.parts() if not has_word(text, p.designator)]
    assert missing == []



@pytest.mark.parametrize(("name", "paper"), CASES)
def test_the_wiring_opens_a_page_holding_its_whole_drawing_and_list(printed, name, paper):
    """The drawing (its labels are text in the PDF) and every wire of the list on one page,
    before the voltages unless the maker placed those in the guide's own text."""
    pages = printed[name, paper]
    slug = HEADED if name == "headed" else name
    guide = parse_guide(DEMO_GUIDES / f"{slug}.md")
    harness = build_harness(guide, build_circuit(guide))
    opening = [n for n, text in enumerate(pages) if body_of(text)[0] == WIRING]
    assert len(opening) == 1
    page = " ".join(lines_of(pages[opening[0]]))
    for label in ("The board: pads as the schematic names them", "switched lug", "centre pin",
                  "cathode (-)", "IN", "OUT", "GND", "+9 V"):
        assert label in page, label
    rows = wiring_rows(harness)
    for end in {text for row in rows for text in (row.start, row.end)}:
        assert page.count(end) >= sum((row.start, row.end).count(end) for row in rows), end
    assert "take precedence over this guide" in page
    voltages = [n for n, text in enumerate(pages) if body_of(text)[0] == "Voltages to measure"]
    assert name == "headed" or opening[0] < voltages[0]


@pytest.mark.parametrize(("name", "paper"), CASES)
def test_a_wrong_reading_and_its_causes_stay_on_one_page(printed, name, paper):
    """The symptom list's readings never split: each cause printed sits on the page of its
    reading, so a page never opens with a cause numbered past 1 without its reading."""
    pages = printed[name, paper]
    start = next(n for n, text in enumerate(pages) if "When a reading is wrong" in text)
    for text in pages[start + 1:]:
        first = body_of(text)[0]
        if first == "Bill of materials":
            break
        assert not re.match(r"^[2-9]\. ", first), first
