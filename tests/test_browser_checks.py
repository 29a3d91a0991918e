"""The check tables and the bench notes of a guide page in headless chromium, on a desktop
(1280 px) and a phone (390 px): what each shows, how it is laid out, and the look it avoids.

The Brookside guide is built once as published and once without its ``allow:`` for the
coupling corner, so its page holds every verdict: claims that hold, a finding the maker
accepted (with its reason) and one that needs a look. Screenshots of both widths are written
to the folder named by ``KITLEAF_SCREENSHOTS`` when it is set, for a person to look at.
"""

from __future__ import annotations

import json
import os
import re
import shutil
import struct
from pathlib import Path

import pytest

from chromium_pipe import Browser, Page, require_tool
from kitleaf.render.verdicts import VERDICTS
from kitleaf.site.build import build_site
from site_pages import DEMO_GUIDES

pytestmark = pytest.mark.slow

WIDTHS = (1280, 390)
PAGE = "brookside-boost/index.html"
# Each check row as shown: its class, the three cells' text, and where the cells sit.
ROWS = """JSON.stringify([...document.querySelectorAll('.check-table')].map(t => ({
  scope: t.closest('section').id,
  rows: [...t.querySelectorAll('tbody tr')].map(r => ({
    cls: r.className,
    cells: [...r.children].map(c => c.innerText.trim()),
    lefts: [...r.children].map(c => Math.round(c.getBoundingClientRect().left)),
    transform: getComputedStyle(r.querySelector('.verdict-words')).textTransform,
  })),
})))"""
# Every box of the checks, the bench notes and the wiring's cautions: its borders and
# background, as computed.
BOXES = """JSON.stringify([...document.querySelectorAll(
    '.checks, .checks *, .bench-notes, .bench-notes *, .wiring-notes, .wiring-notes *')].map(e => {
  const s = getComputedStyle(e);
  return {tag: e.tagName, cls: e.className, background: s.backgroundColor,
          widths: [s.borderTopWidth, s.borderRightWidth, s.borderBottomWidth,
                   s.borderLeftWidth].map(parseFloat),
          colours: [s.borderTopColor, s.borderRightColor, s.borderBottomColor,
                    s.borderLeftColor],
          transform: s.textTransform};
}))"""
PAGE_WIDTH = "JSON.stringify([document.documentElement.scrollWidth, window.innerWidth])"
# Where the cells of the symptom table's first row start, left to right.
SYMPTOM_LEFTS = """JSON.stringify([...document.querySelector('.symptom-table tbody tr').children]
    .map(c => Math.round(c.getBoundingClientRect().left)))"""


@pytest.fixture(scope="module")
def site(tmp_path_factory) -> Path:
    require_tool("chromium")
    root = tmp_path_factory.mktemp("checks")
    shutil.copytree(DEMO_GUIDES, root / "guides")
    guide = root / "guides" / "brookside-boost.md"
    kept = [line for line in guide.read_text(encoding="utf-8").splitlines(keepends=True)
            if not line.startswith("allow: coupling-corner")]
    guide.write_text("".join(kept), encoding="utf-8")
    build_site(root / "guides", root / "published", jobs=2, use_cache=False)
    return root / "published"


@pytest.fixture(scope="module")
def pages(site):
    """The guide page opened at each width, with what the tests read from it."""
    found = {}
    with Browser(require_tool("chromium")) as browser:
        for width in WIDTHS:
            page = Page(browser, (site / PAGE).as_uri(), width=width)
            shot = page.screenshot()
            folder = os.environ.get("KITLEAF_SCREENSHOTS")
            if folder:
                Path(folder).mkdir(parents=True, exist_ok=True)
                (Path(folder) / f"guide-{width}.png").write_bytes(shot)
            found[width] = {"rows": json.loads(page.evaluate(ROWS)),
                            "boxes": json.loads(page.evaluate(BOXES)),
                            "width": json.loads(page.evaluate(PAGE_WIDTH)),
                            "symptom_lefts": json.loads(page.evaluate(SYMPTOM_LEFTS)),
                            "shot": shot, "errors": page.errors()}
    return found


def rows_of(page, scope: str) -> list[dict]:
    return [row for table in page["rows"] if table["scope"] == scope for row in table["rows"]]


@pytest.mark.parametrize("width", WIDTHS)
def test_kit_and_stage_tables_show_each_check_with_its_value_and_verdict(pages, width):
    page = pages[width]
    assert page["errors"] == []
    kit, stage = rows_of(page, "checks"), rows_of(page, "stage-boost")
    # The guide's kit block: one claim (current) and the accepted input-impedance finding.
    assert [r["cls"].split()[1:] for r in kit] == [["check-claim", "verdict-holds"],
                                                  ["check-rule", "verdict-accepted"]]
    # Its boost stage: two claims, and the coupling corner no longer allowed.
    assert [r["cls"].split()[1:] for r in stage] == [
        ["check-claim", "verdict-holds"], ["check-claim", "verdict-holds"],
        ["check-rule", "verdict-look"]]
    claim, accepted = kit
    assert claim["cells"][0].startswith("current below 3 mA")
    assert claim["cells"][1].startswith(("2.", "1.")) and "mA" in claim["cells"][1]
    assert "one transistor keeps the kit simple" in accepted["cells"][2]
    assert "Why it stays:" in accepted["cells"][2]
    assert "35.1 Hz" in stage[2]["cells"][1]


@pytest.mark.parametrize("width", WIDTHS)
def test_a_verdict_is_a_symbol_and_words_in_sentence_case(pages, width):
    """Not colour alone: each verdict cell says its verdict in words, after its symbol, in
    sentence case as written (no upper-casing by the style sheet)."""
    for table in pages[width]["rows"]:
        for row in table["rows"]:
            key = row["cls"].split()[-1].removeprefix("verdict-")
            symbol, words = VERDICTS[key]
            assert row["cells"][2].startswith(f"{symbol} {words}")
            assert words[0].isupper() and words[1:] == words[1:].lower()
            assert row["transform"] == "none"


@pytest.mark.parametrize("width", WIDTHS)
def test_no_tinted_box_with_a_side_bar(pages, width):
    """The checks and the bench notes draw no bar down one side (a left border heavier than
    the others or of another colour) and set no words in capitals by style."""
    for box in pages[width]["boxes"]:
        top, right, bottom, left = box["widths"]
        assert left <= max(top, right, bottom, 1.0), box
        if left > 0 and top > 0:
            assert box["colours"][3] == box["colours"][0], box
        assert box["transform"] in ("none", ""), box
    notes = next(b for b in pages[width]["boxes"] if b["cls"] == "bench-notes")
    assert notes["background"] == "rgb(255, 255, 255)"
    assert len(set(notes["widths"])) == 1  # one frame all round


def test_on_a_phone_each_row_stacks_and_the_page_never_scrolls_sideways(pages):
    wide, narrow = pages[1280], pages[390]
    for page in (wide, narrow):
        scroll, inner = page["width"]
        assert scroll <= inner
    for row in rows_of(wide, "checks"):
        assert row["lefts"][0] < row["lefts"][1] < row["lefts"][2]  # three columns
    for row in rows_of(narrow, "checks"):
        assert len(set(row["lefts"])) == 1  # one under another
    lefts = wide["symptom_lefts"]
    assert len(lefts) == 4 and lefts == sorted(set(lefts))  # point, good, reading, causes
    assert len(set(narrow["symptom_lefts"])) == 1  # a card: one under another


@pytest.mark.parametrize("width", WIDTHS)
def test_the_screenshot_is_the_page_at_its_width(pages, width):
    """A PNG (its signature and IHDR header, ISO/IEC 15948) exactly as wide as the viewport."""
    shot = pages[width]["shot"]
    assert shot[:8] == b"\x89PNG\r\n\x1a\n" and shot[12:16] == b"IHDR"
    png_width, png_height = struct.unpack(">II", shot[16:24])
    assert png_width == width and png_height > 1000


def test_no_page_of_the_site_scrolls_sideways_on_a_phone(site):
    """Wide tables (voltages, parts) scroll in their own box or stack row by row, so at 390 px
    every page is as wide as the screen."""
    names = sorted(p.relative_to(site).as_posix() for p in site.rglob("*.html"))
    assert len(names) == 2 + 2 * len(list(DEMO_GUIDES.glob("*.md")))
    with Browser(require_tool("chromium")) as browser:
        widths = {name: json.loads(Page(browser, (site / name).as_uri(), width=390)
                                   .evaluate(PAGE_WIDTH)) for name in names}
    assert {name: w for name, w in widths.items() if w[0] > w[1]} == {}


# Each element a selector names: its text, and whether all of its box lies inside the
# viewport and inside every ancestor that clips what overflows it.
IN_VIEW = """JSON.stringify([...document.querySelectorAll(SELECTOR)].map(e => {
  const r = e.getBoundingClientRect();
  let shown = r.width > 0 && r.height > 0 && r.left >= 0 && r.right <= window.innerWidth;
  for (let a = e.parentElement; a; a = a.parentElement) {
    if (getComputedStyle(a).overflowX === 'visible') continue;
    const box = a.getBoundingClientRect();
    shown = shown && r.left >= box.left - 0.5 && r.right <= box.right + 0.5;
  }
  return {text: e.innerText.trim(), shown: shown && e.scrollWidth <= e.clientWidth + 1};
}))"""


def in_view(selector: str) -> str:
    return IN_VIEW.replace("SELECTOR", json.dumps(selector))


# Each designator cell of the voltage tables and the parts lists, and each reading and
# 'Measured' cell; each cell of the symptom table.
DESIGNATORS = in_view(".voltage-table th[scope=row], .voltage-table td, "
                      "article.bom .bom-line .refs")
SYMPTOMS = in_view(".symptom-table th[scope=row], .symptom-table td")
# Each figure's picture (the one shown: a <picture> may choose a narrower drawing) and the width
# it is drawn at, in CSS px.
FIGURES = """JSON.stringify([...document.querySelectorAll('.guide figure img')].map(
    i => [decodeURIComponent(new URL(i.currentSrc).pathname.split('/').pop()),
          i.getBoundingClientRect().width]))"""
# The overview's figure: its drawn width and the width its box shows without scrolling.
OVERVIEW = """JSON.stringify((f => f && [f.scrollWidth, f.clientWidth])(
    document.querySelector('.guide figure.overview')))"""
FONT_SIZE = re.compile(r'font-size(?:="|:\s*)([0-9.]+)')


def smallest_text(svg: str) -> float:
    """The smallest font size an SVG sets, as a share of its viewBox width."""
    view_width = float(re.search(r'viewBox="[-0-9.]+ [-0-9.]+ ([0-9.]+)', svg).group(1))
    return min(float(size) for size in FONT_SIZE.findall(svg)) / view_width


@pytest.fixture(scope="module")
def phone_pages(site):
    """Every guide page and parts list of the site opened at 390 px: designators and figures."""
    names = sorted(p.relative_to(site).as_posix() for p in site.glob("*/*.html"))
    found = {}
    with Browser(require_tool("chromium")) as browser:
        for name in names:
            page = Page(browser, (site / name).as_uri(), width=390)
            found[name] = {"designators": json.loads(page.evaluate(DESIGNATORS)),
                           "figures": json.loads(page.evaluate(FIGURES)),
                           "overview": json.loads(page.evaluate(OVERVIEW)),
                           "symptoms": json.loads(page.evaluate(SYMPTOMS))}
    return found


def test_on_a_phone_every_designator_of_the_voltages_and_parts_is_in_view(site, phone_pages):
    """Voltage readings and parts lines reflow to the screen, so no designator, reading or
    'Measured' box hides in a box scrolled sideways or past the right edge."""
    guides = sorted(p.stem for p in DEMO_GUIDES.glob("*.md"))
    assert sorted(phone_pages) == sorted(f"{g}/{n}.html" for g in guides
                                         for n in ("bom", "index"))
    for name, page in phone_pages.items():
        assert page["designators"], name
        hidden = [d["text"] for d in page["designators"] if not d["shown"]]
        assert hidden == [], name
    voltages = phone_pages["brookside-boost/index.html"]["designators"]
    assert {"Q1", "LED1"} <= {d["text"] for d in voltages}
    assert any(d["text"].startswith("4.31 V") for d in voltages)  # Q1 collector, adapter


def test_on_a_phone_every_cell_of_the_symptom_table_is_in_view(phone_pages):
    """The symptom table reflows into a card per test point, so no test point, reading or
    cause hides in a box scrolled sideways."""
    for name, page in phone_pages.items():
        if not name.endswith("index.html"):
            continue
        assert len(page["symptoms"]) > 10, name
        hidden = [d["text"][:40] for d in page["symptoms"] if not d["shown"]]
        assert hidden == [], name


def test_on_a_phone_the_text_of_every_figure_is_at_least_9_px(site, phone_pages):
    """Schematics and plots keep a size at which their smallest label is 9 CSS px or more
    (common practice, no source: below that a label cannot be read on a phone)."""
    for name, page in phone_pages.items():
        if not name.endswith("index.html"):
            continue
        assert page["figures"], name
        for src, width in page["figures"]:
            svg = (site / name).parent.joinpath(src).read_text(encoding="utf-8")
            assert smallest_text(svg) * width >= 9.0, (name, src, width)


def test_on_a_phone_the_kit_overview_is_drawn_one_block_to_a_row_and_fits(phone_pages):
    """The kit at a glance is the narrow drawing on a phone, whole in the column: a builder
    sees the chain without scrolling sideways."""
    for name, page in phone_pages.items():
        if not name.endswith("index.html"):
            continue
        assert "overview-narrow.svg" in [src for src, _ in page["figures"]], name
        drawn, shown = page["overview"]
        assert drawn <= shown, name
