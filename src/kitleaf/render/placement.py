"""Where the computed sections stand on a guide page: where the maker places them, else by default.

A paragraph that is only ``{@name}`` places the computed section ``name`` there (the names are
:data:`SECTIONS`); a plain Markdown viewer shows the marker as written. Unplaced sections take
their default places: the maker's introduction (the prose before its first heading or block)
comes first, then the kit at a glance, its sound previews, the checks and the cautions, then
the rest of the guide, then the off-board wiring, the voltage table and the fault finder. A
stage or section right after a maker's heading takes that heading as its own, so no two
headings stand in a row.
"""

from __future__ import annotations

import re
from dataclasses import replace

from markdown_it import MarkdownIt
from markdown_it.rules_core import StateCore
from markdown_it.token import Token

from kitleaf.errors import RenderError, SourceSpan
from kitleaf.render.inline import PATH_KEY
from kitleaf.render.prose import Piece, register_plugin

# Section name -> its template, in default order; the first four stand before the guide's
# body, the others after it.
SECTIONS = {"glance": "_kit_specs.html", "previews": "_previews.html", "checks": "_claims.html",
            "cautions": "_cautions.html", "wiring": "_wiring.html", "voltages": "_voltages.html",
            "faults": "_symptoms.html"}
BEFORE_BODY = ("glance", "previews", "checks", "cautions")
# The prose env's key for sections this guide has nothing to show in: name -> what to add.
ABSENT_KEY = "absent_sections"
TOKEN = "section_place"
_MARKER = re.compile(r"\{@\s*([A-Za-z0-9_-]*)\s*\}")
_ENDS_WITH_HEADING = re.compile(r"</h[1-6]>\s*$")
_FIRST_HEADING = re.compile(r"<h[1-6][ >]")


@register_plugin("placement")
def placement_plugin(md: MarkdownIt) -> None:
    md.core.ruler.after("inline", "section_place", _place)
    md.add_render_rule(TOKEN, _render)


def _render(renderer, tokens, idx, options, env) -> str:
    return f"\x00section:{tokens[idx].info}\x00"


def _place(state: StateCore) -> None:
    """Core rule: a paragraph holding only ``{@name}`` becomes one placement token."""
    tokens, placed = state.tokens, {}
    found = []
    for i in range(1, len(tokens) - 1):
        inline = tokens[i]
        match = _MARKER.fullmatch(inline.content.strip()) if inline.type == "inline" else None
        if match is None or tokens[i - 1].type != "paragraph_open":
            continue
        line = (tokens[i - 1].map or [0])[0] + 1
        name, span = match[1], SourceSpan(state.env.get(PATH_KEY, ""), line)
        if name not in SECTIONS:
            raise RenderError(f"'{{@{name}}}' places no section; the sections are "
                              f"{', '.join(SECTIONS)}", span)
        absent = state.env.get(ABSENT_KEY, {})
        if name in absent:
            raise RenderError(f"'{{@{name}}}' places a section this guide has nothing for; "
                              f"{absent[name]}", span)
        if name in placed:
            raise RenderError(f"'{{@{name}}}' is placed twice (first at line {placed[name]}); "
                              "keep one", span)
        placed[name] = line
        found.append((i, name))
    for i, name in reversed(found):  # from the end, so earlier indices stay put
        token = Token(TOKEN, "", 0)
        token.info, token.map, token.block = name, tokens[i - 1].map, True
        tokens[i - 1:i + 2] = [token]


def arrange(pieces: tuple[Piece, ...]) -> tuple[Piece, ...]:
    """The page's pieces in order: placed sections where they stand, the others by default,
    each stage or section after a maker's heading marked to take that heading as its own."""
    pieces = tuple(p for p in pieces if p.kind != "kit")  # the kit block shows in the header
    placed = {p.content for p in pieces if p.kind == "section"}
    intro, body = _split_intro(pieces)
    before = [Piece("section", n) for n in BEFORE_BODY if n not in placed]
    after = [Piece("section", n) for n in SECTIONS if n not in BEFORE_BODY and n not in placed]
    return _mark_headed([*intro, *before, *body, *after])


def _split_intro(pieces: tuple[Piece, ...]) -> tuple[list[Piece], list[Piece]]:
    """The maker's introduction (prose before the first heading or block) and the rest."""
    if not pieces or pieces[0].kind != "html":
        return [], list(pieces)
    html = pieces[0].content
    heading = _FIRST_HEADING.search(html)
    if heading is None:
        return [pieces[0]], list(pieces[1:])
    intro, rest = html[:heading.start()], html[heading.start():]
    first = [Piece("html", intro)] if intro.strip() else []
    return first, [Piece("html", rest), *pieces[1:]]


def _mark_headed(pieces: list[Piece]) -> tuple[Piece, ...]:
    marked: list[Piece] = []
    for piece in pieces:
        after_heading = bool(marked) and marked[-1].kind == "html" and bool(
            _ENDS_WITH_HEADING.search(marked[-1].content))
        marked.append(replace(piece, headed=after_heading) if piece.kind != "html" else piece)
    return tuple(marked)
