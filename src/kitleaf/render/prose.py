"""The guide's prose as HTML, split where the kit and stage blocks stand, for pages to fill in."""

from __future__ import annotations

import re
from collections.abc import Callable
from dataclasses import dataclass
from urllib.parse import unquote

from markdown_it import MarkdownIt

from kitleaf.guide.fences import BLOCK_NAMES, block_header
from kitleaf.guide.parse import markdown_parser
from kitleaf.registry import add, load

# Markdown plugins by name: a plugin takes the parser and returns nothing (``md.use`` style).
PLUGINS: dict[str, Callable[[MarkdownIt], None]] = {}
# The modules of kitleaf.render defining plugins, in the order the parser uses them (see
# kitleaf.registry); loaded when a renderer is made, since they import this module.
MODULES = ("inline", "placement")
# NUL cannot come from guide text (CommonMark replaces it), so these markers are safe to split on.
_MARK = re.compile("\x00(kit|stage|section):([a-z0-9-]*)\x00")
# The URL schemes a link or image in prose may name; a link to any other (javascript:, data:,
# vbscript:, file:) stays plain text. A URL without a scheme is a path from the page.
LINK_SCHEMES = frozenset({"http", "https", "mailto"})
_SCHEME = re.compile(r"([a-z][a-z0-9+.-]*):", re.IGNORECASE)
# What a browser drops from a URL before it reads the scheme ("java\tscript:" is javascript:);
# judged after percent-decoding too, so no encoding of it passes as a path.
_IGNORED_IN_URL = re.compile(r"[\x00-\x20\x7f]")


@dataclass(frozen=True)
class Piece:
    """A run of rendered prose (``kind == "html"``), the place of a block (``kit``/``stage``) or
    of a computed section (``section``); ``headed`` when it follows a heading of the maker's."""

    kind: str
    content: str
    headed: bool = False


def prose_renderer() -> MarkdownIt:
    """The Markdown renderer: our parser configuration, block markers, registered plugins."""
    md = markdown_parser()
    default_fence = md.renderer.rules.get("fence")

    def fence(renderer, tokens, idx, options, env):
        name, arg = block_header(tokens[idx].info)
        if name in BLOCK_NAMES:
            return f"\x00{name}:{arg}\x00"
        return default_fence(tokens, idx, options, env)

    md.add_render_rule("fence", fence)
    md.validateLink = safe_link
    load("kitleaf.render", MODULES)  # imported once; later calls find them loaded
    for plugin in PLUGINS.values():
        md.use(plugin)
    return md


def register_plugin(name: str):
    """Decorator: make a plugin function available to the prose renderer as ``name``."""
    def register(plugin: Callable[[MarkdownIt], None]):
        return add(PLUGINS, name, plugin, "prose plugin")

    return register


def safe_link(url: str) -> bool:
    """Whether prose may link to ``url``: a path from the page, or a web or mail address."""
    scheme = _SCHEME.match(_IGNORED_IN_URL.sub("", unquote(url)))
    return scheme is None or scheme[1].lower() in LINK_SCHEMES


def render_prose(text: str, env: dict | None = None) -> tuple[Piece, ...]:
    """The guide's text as prose pieces and block places, in document order.

    ``env`` carries what plugins read, such as the computed values that ``{=name}`` shows
    (:func:`kitleaf.render.inline.prose_env`); without it references stay as written.
    """
    html = prose_renderer().render(text, env if env is not None else {})
    pieces: list[Piece] = []
    at = 0
    for match in _MARK.finditer(html):
        _add_html(pieces, html[at:match.start()])
        pieces.append(Piece(match[1], match[2]))
        at = match.end()
    _add_html(pieces, html[at:])
    return tuple(pieces)


def _add_html(pieces: list[Piece], html: str) -> None:
    if html.strip():
        pieces.append(Piece("html", html))
