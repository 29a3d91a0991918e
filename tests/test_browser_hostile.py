"""A hostile guide opened in headless chromium: nothing its prose, titles or parts say runs.

The guide (fixtures/pages/hostile-prose.md) puts script tags, event-handler attributes,
``javascript:`` and ``data:`` links (raw and as Markdown), iframes, objects and style blocks in
its title, summary, knob and hardware lines, cautions, stage title, headings and prose. Every
payload would call ``alert``; a script that runs before the page's own replaces ``alert`` and
its kin with a recorder. Each page and each drawing is opened on its own, and its document is
searched for anything that could run later (a handler waiting for a click, a script link).
"""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import pytest

from chromium_pipe import Browser, Page, require_tool
from kitleaf.site.build import build_site

pytestmark = pytest.mark.slow

HOSTILE = Path(__file__).resolve().parent / "fixtures" / "pages" / "hostile-prose.md"
SLUG = "hostile-prose"
RECORDER = """
window.kitleafRan = [];
for (const name of ["alert", "confirm", "prompt", "print", "open"]) {
  window[name] = (...args) => { window.kitleafRan.push(name + "(" + args.join(",") + ")"); };
}
"""
# Anything in the document that runs script now or on a click, hover or load: script and
# frame elements (but the theme's own: its scripts in static/, JSON data it embeds, a form that
# posts nowhere), event-handler attributes, links and sources with a scheme other than the
# page's own file, the web or mail; on a page, style blocks and style attributes the theme did
# not write (a drawing styles itself, its text escaped as the ran-nothing check shows).
SUSPECTS = """JSON.stringify((() => {
  const found = [], html = document.contentType === "text/html";
  for (const e of document.querySelectorAll("*")) {
    const tag = e.localName;
    const ours = (tag === "script" && (e.type === "application/json" ||
                                       (e.src || "").startsWith("%STATIC%")))
                 || (tag === "form" && !e.hasAttribute("action") && !e.hasAttribute("target"));
    if (!ours && (["script", "iframe", "frame", "object", "embed", "base", "form",
                   "foreignObject"].includes(tag) || (html && tag === "style")))
      found.push("<" + tag + ">");
    for (const a of e.attributes) {
      if (a.name.toLowerCase().startsWith("on")) found.push(tag + " " + a.name);
      if (html && a.name === "style" && !e.classList.contains("band"))
        found.push(tag + " style");
      if (["href", "src", "xlink:href", "action", "data", "formaction"].includes(a.name)) {
        const url = new URL(a.value, document.baseURI);
        if (!["file:", "http:", "https:", "mailto:"].includes(url.protocol))
          found.push(tag + " " + a.name + "=" + a.value);
      }
    }
    if (tag === "meta" && e.getAttribute("http-equiv")) found.push("meta http-equiv");
  }
  return found;
})())"""


@pytest.fixture(scope="module")
def site(tmp_path_factory) -> Path:
    require_tool("chromium")
    root = tmp_path_factory.mktemp("hostile")
    (root / "guides").mkdir()
    shutil.copy(HOSTILE, root / "guides" / HOSTILE.name)
    build_site(root / "guides", root / "published", jobs=1, use_cache=False)
    return root / "published"


def opened(browser: Browser, path: Path, static: Path | None = None
           ) -> tuple[list[str], list[str], str]:
    """What ran on the page, what in it could still run, and its text as shown; ``static`` is
    the folder of the theme's own scripts."""
    page = Page(browser, path.as_uri(), first_script=RECORDER)
    ran = page.evaluate("JSON.stringify(window.kitleafRan)")
    text = page.evaluate("document.documentElement.textContent")
    ours = (static or path.parent / "static").as_uri() + "/"
    return json.loads(ran), json.loads(page.evaluate(SUSPECTS.replace("%STATIC%", ours))), text


def documents(site: Path) -> list[str]:
    return sorted(str(p.relative_to(site)) for p in site.rglob("*")
                  if p.suffix in (".html", ".svg"))


def test_nothing_runs_and_nothing_waits_to_run(site, browser):
    names = documents(site)
    assert {"index.html", "changes.html", f"{SLUG}/index.html", f"{SLUG}/bom.html",
            f"{SLUG}/response.svg", f"{SLUG}/overview.svg"} <= set(names)
    found = {name: opened(browser, site / name, site / "static")[:2] for name in names}
    assert {name: seen for name, seen in found.items() if seen != ([], [])} == {}


def test_the_guide_page_shows_the_payloads_as_text(site, browser):
    """The hostile words reach the page, as words: the build did not just drop them."""
    _, _, text = opened(browser, site / SLUG / "index.html", site / "static")
    for shown in ("<script>alert(10)</script>", "<img src=x onerror=\"alert(11)\">",
                  "[a link](javascript:alert(14))", "<script>alert(9)</script>",
                  "Boost <script>alert(25)</script>", "<style>body{display:none}</style>"):
        assert shown in text, shown


def test_a_safe_link_in_prose_stays_a_link(site, browser):
    page = Page(browser, (site / SLUG / "index.html").as_uri())
    hrefs = json.loads(page.evaluate(
        "JSON.stringify([...document.querySelectorAll('.prose a')].map(a => a.href))"))
    assert [h for h in hrefs if h.endswith("notes.html#part-2")]


def test_the_checks_see_a_script_that_runs_and_one_that_waits(browser, tmp_path):
    """The harness itself: a page outside the site whose script runs and whose link waits."""
    (tmp_path / "bad.html").write_text(
        '<!doctype html><img src="none.png" onerror="alert(1)">'
        '<a href="javascript:alert(2)">x</a><p style="color: red">y</p>'
        '<form action="https://example.org/"></form><script>var a = 1;</script>')
    ran, suspects, _ = opened(browser, tmp_path / "bad.html")
    assert ran == ["alert(1)"]
    assert set(suspects) == {"img onerror", "a href=javascript:alert(2)", "p style", "<form>",
                             "<script>"}
