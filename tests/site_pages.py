"""Helpers for the whole-site tests: build the demo site into a folder, read its pages as trees.

Pages are parsed with the stdlib's html.parser into a small element tree, so a test can ask
which images sit inside which stage section and where every link points.
"""

from __future__ import annotations

import shutil
from dataclasses import dataclass, field
from html.parser import HTMLParser
from pathlib import Path
from urllib.parse import unquote, urlsplit

from kitleaf.site.build import build_site

REPO = Path(__file__).resolve().parents[1]
DEMO_GUIDES = REPO / "guides"
# Elements that never have an end tag (HTML living standard, "void elements").
VOID = frozenset({"area", "base", "br", "col", "embed", "hr", "img", "input", "link", "meta",
                  "source", "track", "wbr"})
# Attributes whose value is a URL the browser follows or loads.
URL_ATTRS = (("a", "href"), ("img", "src"), ("link", "href"), ("script", "src"),
             ("iframe", "src"), ("source", "src"), ("form", "action"))


@dataclass
class Element:
    """One element of a parsed page: tag, attributes, children and its own text."""

    tag: str
    attrs: dict[str, str | None]
    parent: Element | None = None
    children: list[Element] = field(default_factory=list)
    text: list[str] = field(default_factory=list)

    def iter(self, tag: str | None = None):
        """This element and every descendant, in document order, optionally of one tag."""
        if tag is None or self.tag == tag:
            yield self
        for child in self.children:
            yield from child.iter(tag)

    def classes(self) -> set[str]:
        return set((self.attrs.get("class") or "").split())

    def find_all(self, tag: str, cls: str | None = None) -> list[Element]:
        return [e for e in self.iter(tag) if cls is None or cls in e.classes()]

    def all_text(self) -> str:
        return "".join(self.text) + "".join(c.all_text() for c in self.children)


class _TreeBuilder(HTMLParser):
    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.root = Element("#document", {})
        self.current = self.root

    def handle_starttag(self, tag, attrs):
        element = Element(tag, dict(attrs), self.current)
        self.current.children.append(element)
        if tag not in VOID:
            self.current = element

    def handle_startendtag(self, tag, attrs):
        self.current.children.append(Element(tag, dict(attrs), self.current))

    def handle_endtag(self, tag):
        open_element = self.current
        while open_element is not self.root and open_element.tag != tag:
            open_element = open_element.parent
        if open_element is not self.root:
            self.current = open_element.parent

    def handle_data(self, data):
        self.current.text.append(data)


def parse_page(path: Path) -> Element:
    builder = _TreeBuilder()
    builder.feed(path.read_text(encoding="utf-8"))
    builder.close()
    return builder.root


def urls(page: Element) -> list[tuple[str, str]]:
    """(tag, url) of every link, image, stylesheet or script a page points at."""
    found = []
    for tag, attr in URL_ATTRS:
        found += [(tag, e.attrs[attr]) for e in page.iter(tag) if e.attrs.get(attr) is not None]
    return found


def local_target(page_path: Path, url: str) -> tuple[Path, str] | None:
    """The file and fragment a relative URL points at, or None for another site's address."""
    parts = urlsplit(url)
    if parts.scheme or parts.netloc:
        return None
    target = (page_path.parent / unquote(parts.path)) if parts.path else page_path
    return target.resolve(), unquote(parts.fragment)


def build_demo_site(root: Path, extra: dict[str, str] | None = None,
                    previews: bool = False) -> Path:
    """The demo guides (plus ``extra`` guides, name -> text) built into ``root/site``;
    without ``previews`` the guides' sound previews are turned off, their lines kept (they
    cost seconds of solving a clip, and only their own tests read them)."""
    guides = root / "guides"
    shutil.copytree(DEMO_GUIDES, guides)
    if not previews:
        for path in guides.glob("*.md"):
            text = path.read_text(encoding="utf-8")
            path.write_text(text.replace("\nsound-previews: on\n", "\nsound-previews: off\n"),
                            encoding="utf-8")
    for name, text in (extra or {}).items():
        (guides / name).write_text(text, encoding="utf-8")
    site = root / "published"
    build_site(guides, site, jobs=2, use_cache=False)
    return site


def site_pages(site: Path) -> list[Path]:
    return sorted(site.rglob("*.html"))
