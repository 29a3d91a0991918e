"""The bill of materials: parts grouped into lines a builder can buy and find, in build order."""

from __future__ import annotations

import re
from collections.abc import Iterable
from dataclasses import dataclass, replace

from kitleaf.bom.describe import PartDescription, describe
from kitleaf.bom.order import build_group, build_rank
from kitleaf.bom.pinouts import Pinout
from kitleaf.bom.ratings import RatingWarning
from kitleaf.circuit.parts import Part
from kitleaf.errors import SourceSpan
from kitleaf.marking import Band
from kitleaf.specs.ratings import LIMITS

# Attributes that change what is bought; any other word on a part line does not split a line.
BUYING_ATTRS = ("dielectric", "taper", "package", "colour", "size", "shaft", "mount")
# The voltage rating an unpolarised capacitor is bought at when its line states none (common
# practice, no source); resistors and pots take the rating the checks assume for them.
USUAL_CAP_RATING = {"ceramic": 50.0, "c0g": 50.0, "np0": 50.0, "x7r": 50.0,
                    "film": 63.0, "polyester": 63.0, "polypropylene": 63.0}


def buying_rating(part_type: str, rating: float | None, attrs) -> float | None:
    """The rating a part is bought at: its own, else the usual one for its kind, so a line
    that writes the usual rating out is the same part as one that leaves it to the default."""
    if rating is not None:
        return rating
    if part_type == "capacitor":
        return USUAL_CAP_RATING.get(dict(attrs).get("dielectric", ""))
    limit = LIMITS.get(part_type)
    return limit.assumed if limit else None


@dataclass(frozen=True)
class BomLine:
    """One line of the bill of materials: every part of one kind, value and buying attributes.

    ``value_text`` is the value the way the trade writes it (4k7, 100n, 100k log, 2N3904, or
    the hardware's description); ``value_display`` is the same with SI prefix and unit
    (4.7 kΩ). ``attributes`` are the buying attributes as display text (film, 5%, 50 V).
    """

    type: str
    value_text: str
    value_display: str
    designators: tuple[str, ...]
    attributes: tuple[str, ...]
    value: float | None = None
    model: str | None = None
    tolerance: float | None = None
    rating: float | None = None
    attrs: tuple[tuple[str, str], ...] = ()
    bands: tuple[Band, ...] = ()
    code: str | None = None
    pinout: Pinout | None = None
    polarity: str | None = None
    notes: tuple[str, ...] = ()
    warnings: tuple[RatingWarning, ...] = ()
    fitting: tuple[str, ...] = ()  # which way round each polarised capacitor goes (bom/fitting)
    spans: tuple[SourceSpan, ...] = ()  # where each designator's part is written, in order

    @property
    def quantity(self) -> int:
        return len(self.designators)

    @property
    def group(self) -> str:
        """The build group (see :data:`kitleaf.bom.order.BUILD_ORDER`)."""
        return build_group(self.type, self.designators[0], dict(self.attrs))

    @property
    def rank(self) -> int:
        """Where the line falls in the build order (lower parts first)."""
        return build_rank(self.type, self.designators[0], dict(self.attrs))

    @property
    def key(self) -> tuple:
        """What makes two lines the same part to buy, in any guide."""
        return (self.type, self.value, self.model, self.tolerance,
                buying_rating(self.type, self.rating, self.attrs), self.attrs,
                self.value_text if self.type == "hardware" else "")


def natural_key(designator: str) -> tuple:
    """Sort key putting R2 before R10: letters, then the number, then any suffix."""
    match = re.match(r"^([A-Za-z]*)(\d*)(.*)$", designator)
    letters, number, rest = match.groups()  # type: ignore[union-attr]
    return (letters.upper(), int(number) if number else -1, rest)


def _group_key(part: Part) -> tuple:
    attrs = tuple((k, part.attrs[k]) for k in BUYING_ATTRS if k in part.attrs)
    text = part.text if part.type == "hardware" else ""
    rating = buying_rating(part.type, part.rating, attrs)
    return (part.type, part.value, part.model, part.tolerance, rating, attrs, text)


def _line(parts: list[Part]) -> BomLine:
    parts = sorted(parts, key=lambda p: natural_key(p.designator))
    # Described as the part that writes its rating out, if one does: that is what is bought.
    first = next((p for p in parts if p.rating is not None), parts[0])
    designators = tuple(p.designator for p in parts)
    found: PartDescription = describe(first)
    return BomLine(
        type=first.type,
        value_text=found.value_text,
        value_display=found.value_display,
        designators=designators,
        attributes=found.attributes,
        value=first.value,
        model=first.model,
        tolerance=first.tolerance,
        rating=first.rating,
        attrs=_group_key(first)[5],
        bands=found.bands,
        code=found.code,
        pinout=found.pinout,
        polarity=found.polarity,
        notes=found.notes,
        spans=tuple(p.span for p in parts),
    )


def _sockets(lines: list[BomLine]) -> list[BomLine]:
    """One socket line per DIP size, for the chips that go in them."""
    by_size: dict[int, list[str]] = {}
    for line in lines:
        if line.type == "opamp" and line.pinout and line.pinout.package.startswith("DIP"):
            by_size.setdefault(line.pinout.pin_count, []).extend(line.designators)
    return [
        BomLine(
            type="socket",
            value_text=f"DIP-{size} socket",
            value_display=f"DIP-{size} socket",
            designators=tuple(sorted(chips, key=natural_key)),
            attributes=(),
            notes=(f"for {', '.join(sorted(chips, key=natural_key))}; "
                   "match the notch to the board's outline",),
        )
        for size, chips in sorted(by_size.items())
    ]


_SECTION = re.compile(r"^([A-Z]+\d+)[A-H]$")


def packages(parts: Iterable[Part]) -> list[Part]:
    """Parts as bought: the sections U1A and U1B of one dual op-amp are the one chip U1."""
    seen: set[tuple] = set()
    out = []
    for part in parts:
        match = _SECTION.match(part.designator) if part.type == "opamp" else None
        if match is not None:
            if (match[1], part.model) in seen:
                continue
            seen.add((match[1], part.model))
            part = replace(part, designator=match[1])
        out.append(part)
    return out


def bom_lines(parts: Iterable[Part]) -> tuple[BomLine, ...]:
    """The bill of materials of ``parts``: grouped, counted, and sorted in build order.

    Lines of one build group keep the order of their first designator (R2 before R10); the
    groups follow :data:`kitleaf.bom.order.BUILD_ORDER`. Chips in DIP packages add a socket
    line.
    """
    groups: dict[tuple, list[Part]] = {}
    for part in packages(parts):
        groups.setdefault(_group_key(part), []).append(part)
    lines = [_line(group) for group in groups.values()]
    lines += _sockets(lines)
    lines.sort(key=lambda line: natural_key(line.designators[0]))
    lines.sort(key=lambda line: line.rank)  # stable: designator order within a group
    return tuple(lines)
