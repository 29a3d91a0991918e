"""Rating checks: a part whose stated rating is too low for the stress the solver computed.

A capacitor should see at most 80 % of its voltage rating, a resistor or pot dissipate at most
50 % of its power rating (common practice, no source). A resistor with no stated rating is
checked against 1/4 W and a pot against 1/8 W, the usual sizes in kits; a polarised capacitor
with no stated rating is flagged, since it cannot be bought without one; an unpolarised one is
not checked (common practice, no source).
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from dataclasses import dataclass, replace
from types import MappingProxyType
from typing import TYPE_CHECKING

from kitleaf.bom.describe import power_text
from kitleaf.bom.order import POLARISED_DIELECTRICS
from kitleaf.errors import SourceSpan
from kitleaf.values import format_value

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


@dataclass(frozen=True)
class _Rule:
    quantity: str  # of the stress and the rating
    derating: float  # the fraction of the rating a part may use
    stocked: tuple[float, ...]  # the ratings sold, to suggest one
    assumed: float | None  # the rating of a part that states none, or None to flag it


# Stocked ratings: common practice, no source.
_RULES: Mapping[str, _Rule] = MappingProxyType(
    {
        "capacitor": _Rule("voltage", 0.8,
                           (6.3, 10, 16, 25, 35, 50, 63, 100, 160, 250, 400, 450), None),
        "resistor": _Rule("power", 0.5, (0.125, 0.25, 0.5, 1, 2, 3, 5), 0.25),
        "pot": _Rule("power", 0.5, (0.125, 0.25, 0.5, 1, 2), 0.125),
    }
)


def _show(x: float, quantity: str) -> str:
    return power_text(x) if quantity == "power" else format_value(x, quantity)


def _suggest(stress: float, rule: _Rule) -> str:
    needed = stress / rule.derating
    fits = [r for r in rule.stocked if r >= needed * (1 - 1e-9)]
    if not fits:
        return f"a part rated over {_show(needed, rule.quantity)}"
    return f"{_show(fits[0], rule.quantity)} or more"


def _check(line: BomLine, designator: str, stress: float, span) -> RatingWarning | None:
    rule = _RULES.get(line.type)
    if rule is None:
        return None
    stress = abs(stress)
    shown = _show(stress, rule.quantity)
    rating = line.rating or rule.assumed
    if rating is None:
        if dict(line.attrs).get("dielectric") not in POLARISED_DIELECTRICS:
            return None
        message = f"{designator} sees {shown} but states no rating; use {_suggest(stress, rule)}"
        return RatingWarning(designator, message, span)
    if stress <= rule.derating * rating * (1 + 1e-9):
        return None
    stated = "" if line.rating else " (assumed: none stated)"
    message = (f"{designator} sees {shown}, over {rule.derating:.0%} of its "
               f"{_show(rating, rule.quantity)} rating{stated}; use {_suggest(stress, rule)}")
    return RatingWarning(designator, message, span)


def _line_warnings(line: BomLine, stresses: Mapping[str, float]) -> tuple[RatingWarning, ...]:
    spans = line.spans or (None,) * len(line.designators)
    found = (_check(line, d, stresses[d], span)
             for d, span in zip(line.designators, spans, strict=True) if d in stresses)
    return tuple(w for w in found if w is not None)


def rating_warnings(lines: Iterable[BomLine],
                    stresses: Mapping[str, float]) -> tuple[BomLine, ...]:
    """``lines`` with a warning on each part stressed beyond its derated rating.

    ``stresses`` maps a designator to the computed DC voltage across a capacitor (volts) or
    the power in a resistor or pot (watts); designators it does not name are not checked.
    """
    return tuple(
        replace(line, warnings=line.warnings + _line_warnings(line, stresses)) for line in lines
    )
