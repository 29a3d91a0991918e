"""The BOM pages printed by headless chromium on A4 and US Letter, read back with poppler."""

from __future__ import annotations

import re
import subprocess
from pathlib import Path

import pytest

from chromium_pipe import Browser, Page, require_tool
from kitleaf.bom import bom_lines
from kitleaf.circuit.build import build_circuit
from kitleaf.guide import parse_guide
from site_pages import DEMO_GUIDES, build_demo_site

pytestmark = pytest.mark.slow

SLUGS = sorted(p.stem for p in DEMO_GUIDES.glob("*.md"))
# Page sizes in PostScript points: A4 is 210 x 297 mm (ISO 216), Letter 8.5 x 11 in (ANSI).
PAGE_POINTS = {"A4": (595.3, 841.9), "Letter": (612.0, 792.0)}
MAX_PAGES = 2  # a demo kit's checklist fits on one sheet, printed both sides


@pytest.fixture(scope="module")
def pdfs(tmp_path_factory) -> dict[tuple[str, str], Path]:
    """Every demo BOM page printed on each paper, with the browser's default print settings."""
    chromium = require_tool("chromium")
    require_tool("pdfinfo")
    require_tool("pdftotext")
    root = tmp_path_factory.mktemp("print")
    site = build_demo_site(root)
    printed = {}
    with Browser(chromium) as browser:
        for slug in SLUGS:
            page = Page(browser, (site / slug / "bom.html").as_uri())
            for paper in PAGE_POINTS:
                out = root / f"{slug}-{paper}.pdf"
                out.write_bytes(page.pdf(paper))
                printed[slug, paper] = out
    return printed


def run(*args: str) -> str:
    return subprocess.run(args, check=True, capture_output=True, text=True, timeout=60).stdout


def page_count_and_size(pdf: Path) -> tuple[int, tuple[float, float]]:
    info = run("pdfinfo", str(pdf))
    pages = int(re.search(r"^Pages:\s+(\d+)", info, re.M)[1])
    size = re.search(r"^Page size:\s+([\d.]+) x ([\d.]+) pts", info, re.M)
    return pages, (float(size[1]), float(size[2]))


def page_texts(pdf: Path, pages: int) -> list[str]:
    return [run("pdftotext", "-f", str(n), "-l", str(n), str(pdf), "-") for n in
            range(1, pages + 1)]


def demo_lines(slug: str):
    return bom_lines(build_circuit(parse_guide(DEMO_GUIDES / f"{slug}.md")).parts())


def has_word(text: str, word: str) -> bool:
    return re.search(rf"(?<![\w-]){re.escape(word)}(?![\w-])", text) is not None


@pytest.mark.parametrize("paper", sorted(PAGE_POINTS))
@pytest.mark.parametrize("slug", SLUGS)
def test_bom_prints_on_at_most_two_pages_of_the_paper(pdfs, slug, paper):
    pages, size = page_count_and_size(pdfs[slug, paper])
    assert 1 <= pages <= MAX_PAGES
    assert size == pytest.approx(PAGE_POINTS[paper], abs=1.0)


@pytest.mark.parametrize("paper", sorted(PAGE_POINTS))
@pytest.mark.parametrize("slug", SLUGS)
def test_every_designator_is_printed_and_no_line_is_cut(pdfs, slug, paper):
    pdf = pdfs[slug, paper]
    texts = page_texts(pdf, page_count_and_size(pdf)[0])
    for line in demo_lines(slug):
        # A line is whole when one page holds its designators, its value and its colour names.
        words = [*line.designators, line.value_text.split()[0], *(b.colour for b in line.bands)]
        holders = [t for t in texts if all(has_word(t, w) for w in words)]
        assert holders, f"{slug} on {paper}: {' '.join(words)} not together on one page"


@pytest.mark.parametrize("slug", SLUGS)
def test_colour_band_swatches_print_without_background_graphics(pdfs, slug, tmp_path):
    """Swatches must reach paper even with the print dialog's background graphics off."""
    require_tool("pdftoppm")
    swatches = {b.swatch for line in demo_lines(slug) for b in line.bands}
    pixels = rendered_pixels(pdfs[slug, "A4"], tmp_path)
    for swatch in sorted(swatches):
        rgb = tuple(int(swatch[i:i + 2], 16) for i in (1, 3, 5))
        assert rgb in pixels, f"{slug}: no pixel of the {swatch} swatch on the printed page"


def rendered_pixels(pdf: Path, folder: Path) -> set[tuple[int, int, int]]:
    """Every colour on the first page, rendered at 100 dpi as a binary PPM (netpbm P6)."""
    run("pdftoppm", "-r", "100", "-f", "1", "-l", "1", str(pdf), str(folder / "p"))
    data = next(folder.glob("p*.ppm")).read_bytes()
    header = re.match(rb"P6\s+(\d+)\s+(\d+)\s+(\d+)\s", data)
    body = memoryview(data)[header.end():]
    return {tuple(body[i:i + 3]) for i in range(0, len(body), 3)}
