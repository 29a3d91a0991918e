"""Reading the body of a fenced block: one ``key: value`` entry per line, comments after ``#``."""

from __future__ import annotations

import re

from kitleaf.errors import GuideError, SourceSpan
from kitleaf.guide.fences import block_header
from kitleaf.guide.model import Block, Entry

_ENTRY = re.compile(r"^(?P<key>[A-Za-z][A-Za-z0-9_-]*)\s*:\s*(?P<value>.*?)\s*$")


def read_entries(body: str, path: str, first_line: int) -> tuple[Entry, ...]:
    """Entries of a block body whose first line is ``first_line`` (1-based) of ``path``."""
    entries = []
    for offset, raw in enumerate(body.splitlines()):
        line = _strip_comment(raw).strip()
        if not line:
            continue
        span = SourceSpan(path, first_line + offset)
        match = _ENTRY.match(line)
        if match is None:
            raise GuideError(
                f"cannot read {raw.strip()!r}: each line of a block is 'key: value', "
                "for example 'collector: R3 10k'",
                span,
            )
        entries.append(Entry(match["key"].lower(), match["value"], span))
    return tuple(entries)


def _strip_comment(line: str) -> str:
    """Drop a ``#`` comment unless the ``#`` sits inside double quotes."""
    quoted = False
    for i, ch in enumerate(line):
        if ch == '"':
            quoted = not quoted
        elif ch == "#" and not quoted:
            return line[:i]
    return line


def make_block(info: str, body: str, path: str, fence_line: int) -> Block:
    """A :class:`Block` from a fence's info string and body; ``fence_line`` is 1-based."""
    name, argument = block_header(info)
    entries = read_entries(body, path, fence_line + 1)
    return Block(name, argument, entries, SourceSpan(path, fence_line))


def at_most_once(block: Block, key: str, what: str) -> Entry | None:
    """The entry ``key`` of ``block`` or None; an error if it is given twice or left empty."""
    found = block.all(key)
    if len(found) > 1:
        raise GuideError(
            f"{what} gives '{key}:' twice (first at line {found[0].span.line}); keep one",
            found[1].span,
        )
    if found and not found[0].value:
        raise GuideError(f"'{key}:' is empty; write its value after it or drop the line",
                         found[0].span)
    return found[0] if found else None


def require_single(block: Block, key: str, what: str) -> Entry:
    """The one entry ``key`` of ``block``; an error naming the block if missing or repeated."""
    found = block.all(key)
    if not found:
        raise GuideError(f"{what} has no '{key}:' line; add one, for example '{key}: ...'",
                         block.span)
    if len(found) > 1:
        raise GuideError(
            f"{what} gives '{key}:' twice (first at line {found[0].span.line}); keep one",
            found[1].span,
        )
    return found[0]
