"""Every demo page opened from disk in headless chromium: no errors, every image loads."""

from __future__ import annotations

import json

import pytest

from chromium_pipe import Page
from site_pages import DEMO_GUIDES

pytestmark = pytest.mark.slow

SLUGS = sorted(p.stem for p in DEMO_GUIDES.glob("*.md"))
PAGES = ["index.html", *(f"{slug}/{name}" for slug in SLUGS for name in ("index.html",
                                                                            "bom.html"))]
IMAGES = "JSON.stringify([...document.images].map(i => [i.getAttribute('src'), i.complete, " \
         "i.naturalWidth, i.naturalHeight]))"


@pytest.fixture(scope="module")
def site(demo_site):
    return demo_site


@pytest.mark.parametrize("name", PAGES)
def test_page_opens_without_errors_and_every_image_loads(site, browser, name):
    page = Page(browser, (site / name).as_uri())
    assert page.errors() == []
    images = json.loads(page.evaluate(IMAGES))
    if name.endswith("/index.html"):
        assert images, f"{name} shows no drawing or plot"
    for src, complete, width, height in images:
        assert complete and width > 0 and height > 0, f"{name}: {src} did not load"


def test_the_checks_see_a_broken_image_and_a_console_error(browser, tmp_path):
    """The harness itself: a page outside the site with a missing image and a logged error."""
    (tmp_path / "bad.html").write_text(
        '<!doctype html><img src="missing.svg" alt="x"><script>console.error("seen")</script>'
    )
    page = Page(browser, (tmp_path / "bad.html").as_uri())
    errors = page.errors()
    assert any("seen" in e for e in errors)
    assert any("missing.svg" in e for e in errors)
    [(src, _complete, width, _height)] = json.loads(page.evaluate(IMAGES))
    assert src == "missing.svg" and width == 0
