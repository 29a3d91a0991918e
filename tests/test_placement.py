"""Page order: the maker's introduction first, computed sections where the maker places them,
and never two headings in a row."""

from __future__ import annotations

import re

import pytest

from kitleaf.errors import RenderError
from kitleaf.render.inline import prose_env
from kitleaf.render.placement import ABSENT_KEY, SECTIONS, arrange
from kitleaf.render.prose import render_prose
from site_pages import build_demo_site

GUIDE = """\
```kit
title: Fernbrook Order Test
```

Our smallest kit, built in an evening.

## The boost

```stage boost
kind: volume
```

{@voltages}

## Level

```stage level
kind: volume
```
"""


def order(text: str) -> list[tuple[str, str, bool]]:
    pieces = arrange(render_prose(text, prose_env("order.md", {})))
    return [(p.kind, p.content if p.kind != "html" else p.content.strip()[:12], p.headed)
            for p in pieces]


def test_the_makers_introduction_comes_first_then_the_sections_before_the_body():
    kinds = order(GUIDE)
    assert kinds[0] == ("html", "<p>Our small", False)
    assert [c for k, c, _ in kinds[1:4]] == ["glance", "checks", "cautions"]


def test_a_placed_section_stands_where_the_maker_put_it_and_the_rest_keep_their_defaults():
    names = [c for k, c, _ in order(GUIDE) if k in ("stage", "section")]
    assert names == ["glance", "checks", "cautions", "boost", "voltages", "level", "wiring",
                     "faults"]


def test_a_stage_right_after_a_makers_heading_takes_it_as_its_own():
    headed = {c: h for k, c, h in order(GUIDE) if k == "stage"}
    assert headed == {"boost": True, "level": True}


@pytest.mark.parametrize(("marker", "message"), [
    ("{@parts}", "'{@parts}' places no section"),
    ("{@voltages}\n\n{@voltages}", "placed twice"),
])
def test_a_wrong_marker_is_a_located_error(marker, message):
    text = GUIDE.replace("{@voltages}", marker)
    with pytest.raises(RenderError, match=re.escape(message)) as raised:
        order(text)
    assert raised.value.span.line == text.splitlines().index(marker.split("\n")[0]) + 1 + (
        2 if "twice" in message else 0)


@pytest.mark.parametrize(("marker", "message"), [
    ("- {@voltages}", "cannot stand inside a quote or a list"),
    ("> {@voltages}", "cannot stand inside a quote or a list"),
    ("1. Measure:\n\n   {@voltages}", "cannot stand inside a quote or a list"),
    ("## {@voltages}", "stands in a heading or a table"),
    ("| a |\n| --- |\n| {@voltages} |", "stands in a heading or a table"),
    ("Measure them\nin the table {@voltages} first.", "stands among other text"),
    ("## Readings {@voltages}", "stands among other text"),
])
def test_a_marker_where_it_places_nothing_is_a_located_error(marker, message):
    """Markdown keeps a marker in a list, a quote or a sentence as text there (a list item
    cannot hold a section, as it cannot hold a stage block): an error at the marker's line."""
    text = GUIDE.replace("{@voltages}", marker)
    with pytest.raises(RenderError, match=re.escape(message)) as raised:
        order(text)
    lines = text.splitlines()
    assert raised.value.span.line == next(n for n, line in enumerate(lines, start=1)
                                          if "{@voltages}" in line)


@pytest.mark.parametrize("shown", ["Write `{@voltages}` alone on a line.",
                                   "Write \\{@voltages} alone on a line."])
def test_a_marker_in_a_code_span_or_escaped_shows_as_written(shown):
    text = GUIDE.replace("{@voltages}", shown)
    html = "".join(p.content for p in render_prose(text, prose_env("order.md", {}))
                   if p.kind == "html")
    assert "{@voltages}" in html
    sections = [c for k, c, _ in order(text) if k == "section"]
    assert sections[-3:] == ["wiring", "voltages", "faults"]  # placed by default


def test_every_section_has_a_template():
    assert set(SECTIONS) == {"glance", "checks", "cautions", "wiring", "voltages", "faults"}


# Two headings with nothing but closing and opening tags between them (common practice, no
# source: a heading introduces content).
HEADINGS_IN_A_ROW = re.compile(r"</h[1-6]>(?:\s|</?(?:div|section)[^>]*>)*<h[1-6][ >]")


def test_no_demo_site_page_has_two_headings_in_a_row(tmp_path):
    site = build_demo_site(tmp_path)
    for page in site.rglob("*.html"):
        html = page.read_text(encoding="utf-8")
        assert HEADINGS_IN_A_ROW.search(html) is None, page
    guide = (site / "heron-opamp-boost" / "index.html").read_text(encoding="utf-8")
    assert guide.index("cleanest boost") < guide.index("The kit at a glance")


def test_the_wiring_placed_in_a_guide_without_a_bypass_scheme_is_a_located_error():
    text = GUIDE.replace("{@voltages}", "{@wiring}")
    env = {**prose_env("order.md", {}), ABSENT_KEY: {"wiring": "add 'bypass: true'"}}
    with pytest.raises(RenderError, match="add 'bypass: true'") as raised:
        render_prose(text, env)
    assert raised.value.span.line == text.splitlines().index("{@wiring}") + 1
    assert [p.content for p in render_prose(text, prose_env("order.md", {}))
            if p.kind == "section"] == ["wiring"]
