"""The guide's prose as HTML, split where the kit and stage blocks stand, for pages to fill in."""

from __future__ import annotations

import re
from collections.abc import Callable
from dataclasses import dataclass

from markdown_it import MarkdownIt

from kitleaf.guide.fences import BLOCK_NAMES, block_header
from kitleaf.guide.parse import markdown_parser

# Markdown plugins by name: a plugin takes the parser and returns nothing (``md.use`` style).
PLUGINS: dict[str, Callable[[MarkdownIt], None]] = {}
# NUL cannot come from guide text (CommonMark replaces it), so these markers are safe to split on.
_MARK = re.compile("\x00(kit|stage):([a-z0-9-]*)\x00")


@dataclass(frozen=True)
class Piece:
    """A run of rendered prose (``kind == "html"``) or the place of a block (``kit``/``stage``)."""

    kind: str
    content: str


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
    _load_plugins()
    for plugin in PLUGINS.values():
        md.use(plugin)
    return md


def _load_plugins() -> None:
    # Our own plugins register themselves in PLUGINS when their module is imported.
    import kitleaf.render.inline  # noqa: F401


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
