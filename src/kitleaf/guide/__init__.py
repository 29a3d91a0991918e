"""Guide parsing: Markdown files in, frozen :class:`Guide` records out."""

from kitleaf.guide.model import Block, Entry, Guide, HardwareLine, KitBlock, Knob, StageBlock
from kitleaf.guide.parse import markdown_parser, parse_guide

__all__ = [
    "Block", "Entry", "Guide", "HardwareLine", "KitBlock", "Knob", "StageBlock",
    "markdown_parser", "parse_guide",
]
