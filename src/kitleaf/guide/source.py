"""Reading a guide file's text: UTF-8 with or without a byte-order mark, and nothing else."""

from __future__ import annotations

import re
from pathlib import Path

from kitleaf.errors import GuideError, SourceSpan

# Far above any guide's prose (the demo guides are under 10 kB); a bigger file is most likely
# not a guide, and Markdown parsing time grows with it.
LARGEST_GUIDE = 2_000_000
_BOM = "\ufeff"
# A line ends at LF, CR LF or a lone CR (an old Mac save), as markdown-it counts lines.
_LINE_END = re.compile(rb"\r\n?|\n")
# Control characters (an escape sequence, a backspace, a NUL) and the bidirectional overrides
# that make text read other than it is stored: none belongs in a guide. Tab, line ends and
# form feed are a text file's own.
_HIDDEN = re.compile("[\x00-\x08\x0b\x0e-\x1f\x7f-\x9f\u202a-\u202e\u2066-\u2069]")


def read_text(path: Path) -> str:
    """The text of the guide at ``path``; a located error if it is not a readable guide."""
    try:
        with path.open("rb") as file:
            data = file.read(LARGEST_GUIDE + 1)
    except OSError as exc:
        raise GuideError(f"cannot read the guide: {exc.strerror}",
                         SourceSpan(str(path), 1)) from None
    if len(data) > LARGEST_GUIDE:
        raise GuideError(f"the file is larger than {LARGEST_GUIDE // 1_000_000} MB, too large "
                         "for a guide; split it or check it is the right file",
                         SourceSpan(str(path), 1))
    return decoded(data, str(path))


def decoded(data: bytes, path: str) -> str:
    """``data`` as UTF-8 text; an undecodable byte is reported at its own line."""
    try:
        return checked_text(data.decode("utf-8"), path)
    except UnicodeDecodeError as exc:
        line = len(_LINE_END.findall(data, 0, exc.start)) + 1
        raise GuideError(f"byte 0x{data[exc.start]:02x} is not UTF-8 text ({exc.reason}); save "
                         "the guide as UTF-8", SourceSpan(path, line)) from None


def checked_text(text: str, path: str) -> str:
    """``text`` without a leading byte-order mark; a control character is refused at its line
    (a NUL means a binary file)."""
    # One line end everywhere, so every later count of lines agrees with markdown-it's.
    text = text.removeprefix(_BOM).replace("\r\n", "\n").replace("\r", "\n")
    found = _HIDDEN.search(text)
    if found is None:
        return text
    span = SourceSpan(path, text.count("\n", 0, found.start()) + 1)
    if found[0] == "\x00":
        raise GuideError("the file holds a NUL character, so it is not a text guide; save the "
                         "guide as plain UTF-8 text", span)
    raise GuideError(f"the line holds the control character {found[0]!r}, which shows as "
                     "nothing or rewrites the terminal; delete it", span)
