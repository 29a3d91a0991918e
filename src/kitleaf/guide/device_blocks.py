"""Reading ``device NAME`` blocks: a guide's own device models, named and kept whole.

Their parameter lines are read into engine models by :mod:`kitleaf.circuit.devices`; here
each block is only checked for a usable name, given once.
"""

from __future__ import annotations

import re

from kitleaf.errors import GuideError
from kitleaf.guide.model import Block

# A model name is one word of a part line (``Q1 FB-GE2``): letters, digits, hyphens and
# dots, starting with a letter or digit.
_NAME = re.compile(r"^[A-Za-z0-9][A-Za-z0-9.-]{0,29}$")


def read_devices(blocks: list[Block]) -> tuple[Block, ...]:
    """The device blocks, each with a name of its own."""
    seen: dict[str, Block] = {}
    for block in blocks:
        name = block.argument
        if not _NAME.match(name):
            raise GuideError(
                f"device name {name!r} must be one word of letters, digits, hyphens and dots "
                "(at most 30), like ```device FB-GE2" if name else
                "a device block needs a name after 'device', like ```device FB-GE2", block.span)
        first = seen.get(name.upper())
        if first is not None:
            raise GuideError(f"device '{name}' is defined twice (first at line "
                             f"{first.span.line}); keep one", block.span)
        seen[name.upper()] = block
    return tuple(blocks)
