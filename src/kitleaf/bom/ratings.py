"""Rating warnings on the bill of materials: each part whose rating is too low for its stress.

The limits and the worst-case stress come from :mod:`kitleaf.specs.ratings`, the same that the
design rules ``cap-voltage`` and ``resistor-power`` read, so the BOM and the guide page agree.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from dataclasses import dataclass, replace
from typing import TYPE_CHECKING

from kitleaf.errors import SourceSpan
from kitleaf.specs.ratings import Stress, rating_problem

if TYPE_CHECKING:
    from kitleaf.bom.lines import BomLine


@dataclass(frozen=True)
class RatingWarning:
    """A located finding: the part ``designator`` is stressed beyond its derated rating."""

    designator: str
    message: str
    span: SourceSpan | None = None

    def __str__(self) -> str:
        where = f"{self.span}: " if self.span else ""
        return f"{where}warning: {self.message}"


def _line_warnings(line: BomLine, stresses: Mapping[str, Stress]) -> tuple[RatingWarning, ...]:
    spans = line.spans or (None,) * len(line.designators)
    dielectric = dict(line.attrs).get("dielectric")
    found = []
    for designator, span in zip(line.designators, spans, strict=True):
        if designator in stresses:
            message = rating_problem(designator, line.type, line.rating, dielectric,
                                     stresses[designator])
            if message is not None:
                found.append(RatingWarning(designator, message, span))
    return tuple(found)


def rating_warnings(lines: Iterable[BomLine],
                    stresses: Mapping[str, Stress]) -> tuple[BomLine, ...]:
    """``lines`` with a warning on each part stressed beyond its derated rating.

    ``stresses`` maps a designator to its worst computed stress (``Checks.stresses``);
    designators it does not name are not checked.
    """
    return tuple(
        replace(line, warnings=line.warnings + _line_warnings(line, stresses)) for line in lines
    )
