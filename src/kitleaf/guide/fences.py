"""Which fenced blocks of a guide are ours, and the near misses that would silently be prose."""

from __future__ import annotations

import difflib

from markdown_it.token import Token

from kitleaf.errors import GuideError, SourceSpan

BLOCK_NAMES = ("kit", "stage")


def block_header(info: str) -> tuple[str, str]:
    """A fence's info string as its name and argument (```stage boost -> stage, boost); any
    run of blanks, spaces or tabs, separates them."""
    name, _, argument = info.strip().replace("\t", " ").partition(" ")
    return name, argument.strip()


def is_ours(token: Token, path: str) -> bool:
    """Whether ``token`` is a kit or stage block; an error for one that almost is.

    A misspelt or capitalised name (```Stage, ```stgae) would turn a stage into a code sample
    without a word, and a block inside a quote or a list would be cut out of its container
    when the page is assembled, so both are refused at the fence's line.
    """
    if token.type != "fence" or token.map is None:
        return False
    name = block_header(token.info)[0]
    # token.map is 0-based; the fence line itself is map[0] + 1 in 1-based lines.
    span = SourceSpan(path, token.map[0] + 1)
    if name not in BLOCK_NAMES:
        _refuse_near_miss(name, span)
        return False
    if token.level > 0:
        raise GuideError(f"a {name} block cannot stand inside a quote or a list; start its "
                         "fence at the beginning of a line, outside any '>' or list item", span)
    return True


def _refuse_near_miss(name: str, span: SourceSpan) -> None:
    if len(name) < 3:  # a language tag such as 'js' or 'c' is not a near miss
        return
    close = difflib.get_close_matches(name.lower(), BLOCK_NAMES, n=1, cutoff=0.75)
    if close:
        raise GuideError(f"a fence named {name!r} reads as a code sample; if it is a "
                         f"{close[0]} block, open it with ```{close[0]} (spelt so, in lower "
                         "case)", span)
