"""Build progress on a terminal: guides done of total, shown only once a build runs past ~2 s.

Nothing is written when the stream is not a terminal (a pipe, a log file, CI), so build logs
hold only the one-line summary.
"""

from __future__ import annotations

import sys
import time
from typing import TextIO

DELAY_S = 2.0


class Progress:
    """A single status line rewritten in place; ``done()`` clears it."""

    def __init__(self, total: int, stream: TextIO | None = None, delay: float = DELAY_S,
                 label: str = "guides") -> None:
        self.total = total
        self.count = 0
        self.stream = stream if stream is not None else sys.stderr
        self.delay = delay
        self.label = label
        self.started = time.perf_counter()
        self.shown = False
        self.live = _is_terminal(self.stream)

    def advance(self, n: int = 1) -> None:
        self.count += n
        self.tick()

    def tick(self) -> None:
        """Redraw the line if the build has run long enough to deserve one."""
        if not self.live or time.perf_counter() - self.started < self.delay:
            return
        elapsed = time.perf_counter() - self.started
        self.stream.write(f"\rkitleaf: {self.count}/{self.total} {self.label} "
                          f"({elapsed:.0f} s)\x1b[K")
        self.stream.flush()
        self.shown = True

    def done(self) -> None:
        if self.shown:
            self.stream.write("\r\x1b[K")
            self.stream.flush()
            self.shown = False


def _is_terminal(stream: TextIO) -> bool:
    try:
        return stream.isatty()
    except (AttributeError, ValueError):
        return False
