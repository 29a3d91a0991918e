"""Where the computed sections stand on a guide page: where the maker places them, else by default.

A paragraph that is only ``{@name}`` places the computed section ``name`` there (the names are
:data:`SECTIONS`); a plain Markdown viewer shows the marker as written. A marker anywhere else
(in a list, a quote, a heading, a table or among other words) is a located error, as is a name
placed twice or one the guide has nothing for. Unplaced sections take
their default places: the maker's introduction (the prose before its first heading or block)
comes first, then the kit at a glance, the checks and the cautions, then the rest of the guide,
then the off-board wiring, the voltage table and the fault finder. A stage or section right
after a maker's heading takes that heading as its own, so no two headings stand in a row.
"""

from __future__ import annotations

import re
from dataclasses import replace

from markdown_it import MarkdownIt
from markdown_it.rules_core import StateCore
from markdown_it.token import Token

from kitleaf.errors import RenderError, SourceSpan
from kitleaf.render.inline import PATH_KEY, prose_env
from kitleaf.render.prose import Piece, register_plugin

# Section name -> its template, in default order; the first three stand before the guide's
# body, the others after it.
SECTIONS = {"glance": "_kit_specs.html", "checks": "_claims.html",
            "cautions": "_cautions.html", "wiring": "_wiring.html", "voltages": "_voltages.html",
            "faults": "_symptoms.html"}
BEFORE_BODY = ("glance", "checks", "cautions")
# The prose env's key for sections this guide has nothing to show in: name -> what to add.
ABSENT_KEY = "absent_sections"
TOKEN = "section_place"
_MARKER = re.compile(r"\{@\s*([A-Za-z0-9_-]*)\s*\}")
_ENDS_WITH_HEADING = re.compile(r"</h[1-6]>\s*$")
_FIRST_HEADING = re.compile(r"<h[1-6][ >]")


def page_env(path: str, values, harness) -> dict:
    """The prose env of a guide page (its computed values, the sections it has nothing for),
    the same for ``kitleaf check`` as for the build."""
    env = prose_env(path, values)
    if harness is None:
        env[ABSENT_KEY] = {"wiring": "add 'bypass: true' (or buffered, none) to the kit block "
                                     "to draw the off-board wiring"}
    return env


@register_plugin("placement")
def placement_plugin(md: MarkdownIt) -> None:
    md.core.ruler.after("inline", "section_place", _place)
    md.add_render_rule(TOKEN, _render)


def _render(renderer, tokens, idx, options, env) -> str:
    return f"\x00section:{tokens[idx].info}\x00"


def _place(state: StateCore) -> None:
    """Core rule: a paragraph holding only ``{@name}`` becomes one placement token; a marker
    anywhere else (in a list, a quote, a sentence, a heading) is a located error."""
    tokens, placed = state.tokens, {}
    path = state.env.get(PATH_KEY, "")
    found = []
    for i, inline in enumerate(tokens):
        if inline.type != "inline":
            continue
        match = _MARKER.fullmatch(inline.content.strip())
        if match is None:
            _refuse_in_text(inline, path)
            continue
        line = (inline.map or [0])[0] + 1
        span = SourceSpan(path, line)
        _refuse_nested(tokens[i - 1], match[0], span)
        _check_name(match[1], state.env.get(ABSENT_KEY, {}), placed, span)
        placed[match[1]] = line
        found.append((i, match[1]))
    for i, name in reversed(found):  # from the end, so earlier indices stay put
        token = Token(TOKEN, "", 0)
        token.info, token.map, token.block = name, tokens[i - 1].map, True
        tokens[i - 1:i + 2] = [token]


def _refuse_in_text(inline: Token, path: str) -> None:
    """A marker inside other words would show as written: name it, where it stands. A code
    span or a backslash before the brace shows the syntax on purpose, and passes."""
    words = "".join(c.content for c in inline.children or () if c.type == "text")
    match = _MARKER.search(words)
    at = inline.content.find(match[0]) if match else -1
    if at < 0:
        return
    before = inline.content[:at]
    span = SourceSpan(path, (inline.map or [0])[0] + 1 + before.count("\n"))
    raise RenderError(f"'{match[0]}' stands among other text, where it places nothing; put it "
                      "alone on a line, with a blank line before and after", span)


def _refuse_nested(opener: Token, marker: str, span: SourceSpan) -> None:
    """Only a paragraph of its own at the top level places a section (as with stage blocks)."""
    if opener.type != "paragraph_open":  # a heading or a table cell of the marker alone
        raise RenderError(f"'{marker}' stands in a heading or a table, where it places "
                          "nothing; put it alone on a line, with a blank line before and "
                          "after", span)
    if opener.level:
        raise RenderError(f"'{marker}' cannot stand inside a quote or a list; put it alone "
                          "on a line of its own, outside them", span)


def _check_name(name: str, absent: dict, placed: dict, span: SourceSpan) -> None:
    if name not in SECTIONS:
        raise RenderError(f"'{{@{name}}}' places no section; the sections are "
                          f"{', '.join(SECTIONS)}", span)
    if name in absent:
        raise RenderError(f"'{{@{name}}}' places a section this guide has nothing for; "
                          f"{absent[name]}", span)
    if name in placed:
        raise RenderError(f"'{{@{name}}}' is placed twice (first at line {placed[name]}); "
                          "keep one", span)


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
