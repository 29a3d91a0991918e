"""The error hierarchy: one base class, one subclass per pipeline stage, each carrying its source.

A user error prints as one line, ``path:line: error: message``; the CLI turns any
:class:`KitleafError` into that line and exit code 1, never a traceback.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

# An echoed word longer than this is cut: a line of the guide can be any length.
LONGEST_ECHO = 60
_LONG_WORD = re.compile(rf"\S{{{LONGEST_ECHO + 1},}}")
# A path is kept whole (the user needs all of it to find the file) up to the longest path a
# POSIX system accepts (PATH_MAX, 4096 on Linux; common practice, no source).
LONGEST_PATH = 4096


def printable(text: str, cut: bool = True) -> str:
    """``text`` safe for a terminal on one line: every unprintable character (escape sequences,
    bidirectional overrides, line breaks, tabs) written as its Python escape, and with ``cut``
    each word longer than LONGEST_ECHO cut short."""
    shown = "".join(ch if ch.isprintable() else repr(ch)[1:-1] for ch in text)
    if not cut:
        return shown
    return _LONG_WORD.sub(_cut_word, shown)


def _cut_word(found: re.Match[str]) -> str:
    word = found[0]
    if "/" in word and len(word) <= LONGEST_PATH:
        return word
    return f"{word[:LONGEST_ECHO]}…[{len(word)} characters]"


def printable_line(line: str) -> str:
    """A ``path:line: kind: message`` line made :func:`printable`, its location never cut."""
    where, sep, message = line.partition(": ")
    return printable(where, cut=False) + sep + printable(message)


@dataclass(frozen=True)
class SourceSpan:
    """Where something came from: a file or folder and, inside a guide, a 1-based line."""

    path: str
    line: int | None = None  # None for a whole file or folder: no line to point at

    def __str__(self) -> str:
        return self.path if self.line is None else f"{self.path}:{self.line}"


class KitleafError(Exception):
    """Base of every error a user can cause; carries the guide location when known."""

    kind = "error"

    def __init__(self, message: str, span: SourceSpan | None = None) -> None:
        super().__init__(message)
        self.message = message
        self.span = span

    def __str__(self) -> str:
        where = printable(f"{self.span}: ", cut=False) if self.span else ""
        return f"{where}{self.kind}: {printable(self.message)}"

    def __reduce__(self):  # picklable across the build's process pool
        return (self.__class__, (self.message, self.span))

    def located(self, span: SourceSpan) -> KitleafError:
        """The same error, placed at ``span`` if it has no location yet."""
        if self.span is not None:
            return self
        return self.__class__(self.message, span)


class ValueFormatError(KitleafError):
    """A part value, tolerance or rating that cannot be read."""


class GuideError(KitleafError):
    """A guide's Markdown or one of its blocks is malformed."""


class CircuitError(KitleafError):
    """The parts of a stage do not make a circuit (missing role, wrong part type, unknown kind)."""


class ModelError(KitleafError):
    """An unknown device model or an invalid element value."""


class SolveError(KitleafError):
    """The engine could not find a trustworthy answer (singular circuit, no convergence)."""


class SpecError(KitleafError):
    """A claim the guide states does not hold, or a reference to a value that does not exist."""


class RenderError(KitleafError):
    """A theme template or drawing failed."""


class BuildError(KitleafError):
    """The site could not be written."""


class ErrorList(KitleafError):
    """Several errors of one guide, reported together: one ``path:line: error:`` line each."""

    def __init__(self, errors: list[KitleafError] | tuple[KitleafError, ...]) -> None:
        self.errors = tuple(errors)
        first = self.errors[0]
        super().__init__(first.message, first.span)

    def __str__(self) -> str:
        return "\n".join(str(e) for e in self.errors)

    def __reduce__(self):
        return (self.__class__, (self.errors,))


def raise_all(errors: list[KitleafError]) -> None:
    """Raise nothing, the one error, or an :class:`ErrorList` of them all."""
    if len(errors) == 1:
        raise errors[0]
    if errors:
        raise ErrorList(errors)
