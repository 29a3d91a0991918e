"""Which fenced blocks of a guide are ours, and the near misses that would silently be prose."""

from __future__ import annotations

import difflib

from markdown_it.token import Token

from kitleaf.errors import GuideError, SourceSpan

BLOCK_NAMES = ("kit", "stage", "device")


def block_header(info: str) -> tuple[str, str]:
    """A fence's info string as its name and argument (```stage boost -> stage, boost); any
    run of blanks, spaces or tabs, separates them."""
    name, _, argument = info.strip().replace("\t", " ").partition(" ")
    return name, argument.strip()


def is_ours(token: Token, lines: list[str], path: str) -> bool:
    """Whether ``token`` is a kit, stage or device block; an error for one that almost is.

    A misspelt or capitalised name (```Stage, ```stgae) or a fence indented into a code block
    would turn a stage into a code sample without a word, a block inside a quote or a list
    would be cut out of its container when the page is assembled, and a fence never closed
    swallows the rest of the guide: each is refused at the fence's line. ``lines`` are the
    guide's lines, to see whether the fence was closed.
    """
    if token.map is None or token.type not in ("fence", "code_block"):
        return False
    # token.map is 0-based; the fence line itself is map[0] + 1 in 1-based lines.
    span = SourceSpan(path, token.map[0] + 1)
    if token.type == "code_block":
        _refuse_indented(token.content, span)
        return False
    name = block_header(token.info)[0]
    if name not in BLOCK_NAMES:
        _refuse_near_miss(name, span)
        return False
    if token.level > 0:
        raise GuideError(f"a {name} block cannot stand inside a quote or a list; start its "
                         "fence at the beginning of a line, outside any '>' or list item", span)
    _refuse_unclosed(token, lines, name, span)
    return True


def _refuse_indented(content: str, span: SourceSpan) -> None:
    first = content.lstrip().split("\n", 1)[0]
    name = block_header(first.lstrip("`~"))[0] if first[:3] in ("```", "~~~") else ""
    if name in BLOCK_NAMES:
        raise GuideError(f"this {name} block is indented four spaces or more, so it reads as a "
                         "code sample; start its fence at the beginning of the line", span)


def _refuse_unclosed(token: Token, lines: list[str], name: str, span: SourceSpan) -> None:
    """A fence runs to its closing line, or to the end of the guide when there is none."""
    last = lines[token.map[1] - 1].strip() if token.map[1] - 1 < len(lines) else ""
    closed = token.map[1] - token.map[0] > 1 and last.startswith(token.markup) \
        and not last.strip(token.markup[0])
    if not closed:
        raise GuideError(f"this {name} block is never closed; end it with a line of "
                         f"{token.markup} after its last entry", span)


def _refuse_near_miss(name: str, span: SourceSpan) -> None:
    if len(name) < 3:  # a language tag such as 'js' or 'c' is not a near miss
        return
    close = difflib.get_close_matches(name.lower(), BLOCK_NAMES, n=1, cutoff=0.75)
    if close:
        raise GuideError(f"a fence named {name!r} reads as a code sample; if it is a "
                         f"{close[0]} block, open it with ```{close[0]} (spelt so, in lower "
                         "case)", span)
