"""Part ratings against the DC stress the solver computes: the limits, the stress, the verdict.

The one home of the rating limits, read by the design rules and by the bill of materials. A
capacitor should see at most 80 % of its voltage rating, a resistor or pot dissipate at most
50 % of its power rating (common practice, no source). A resistor with no stated rating is
checked against 1/4 W, a pot against 1/8 W and a trimmer against 0.1 W, the usual sizes in
kits; a polarised capacitor
with no stated rating is flagged, since it cannot be bought without one; an unpolarised one is
not checked (common practice, no source). The stress is the worst over the knob settings the
rules solve (knobs at half way, then each knob alone at every swept position) and over the
builds drawn within part tolerances (the design rules' context picks it, see
specs/rules/_context.py).
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass
from types import MappingProxyType

from kitleaf.display import power_text
from kitleaf.values import format_value

POLARISED = ("electrolytic", "tantalum")


@dataclass(frozen=True)
class RatingLimit:
    """How one part type is rated: the quantity, the share of it a part may use, what is sold."""

    quantity: str  # of the stress and the rating: "voltage" or "power"
    derating: float  # the fraction of the rating a part may use
    stocked: tuple[float, ...]  # the ratings sold, to suggest one
    assumed: float | None  # the rating of a part that states none, or None to flag it


# Stocked ratings: common practice, no source.
LIMITS: Mapping[str, RatingLimit] = MappingProxyType(
    {
        "capacitor": RatingLimit("voltage", 0.8,
                                 (6.3, 10, 16, 25, 35, 50, 63, 100, 160, 250, 400, 450), None),
        "resistor": RatingLimit("power", 0.5, (0.125, 0.25, 0.5, 1, 2, 3, 5), 0.25),
        "pot": RatingLimit("power", 0.5, (0.125, 0.25, 0.5, 1, 2), 0.125),
        "trimmer": RatingLimit("power", 0.5, (0.1, 0.125, 0.25, 0.5, 1), 0.1),
    }
)


@dataclass(frozen=True)
class Stress:
    """A part's worst DC stress (volts across a capacitor, watts in a resistor or pot) and the
    knob setting it happens at, in words ("" when not known)."""

    value: float
    words: str = ""
    bound: str = ""  # "up to " when the value is a percentile of the builds, not the nominal


def _across(op, a: str, b: str) -> float:
    return op.voltage(a) - op.voltage(b)


def _pot_watts(op, pot, legs=(1.0, 1.0)) -> float:
    """Both legs of the track, each at the resistance the wiper leaves it times its
    multiplier in ``legs`` (lower, upper)."""
    lower, upper = pot.legs()
    return (_across(op, pot.ccw, pot.w) ** 2 / (lower * legs[0])
            + _across(op, pot.w, pot.cw) ** 2 / (upper * legs[1]))


# Part type -> its stress at an operating point, from the engine element placed for it.
_STRESS: Mapping[str, Callable] = MappingProxyType({
    "capacitor": lambda op, e: abs(_across(op, e.a, e.b)),
    "resistor": lambda op, e: _across(op, e.a, e.b) ** 2 / e.value,
    "pot": _pot_watts,
    # in a resistor's place a trimmer is the resistance it is set to; in a custom stage's
    # divider, a pot
    "trimmer": lambda op, e: (_pot_watts(op, e) if hasattr(e, "legs")
                              else _across(op, e.a, e.b) ** 2 / e.value),
})


def part_stress(part_type: str, op, element, factor=1.0, legs=None):
    """A part's stress at an operating point; per build where ``op`` gives arrays and
    ``factor`` holds each build's drawn value multiplier (it scales a resistor, so the power
    at the same voltages goes as one over it). A pot's ``legs`` (lower, upper) are its two
    legs' multipliers, apart where a trimmer is set per build."""
    if legs is not None and hasattr(element, "legs"):
        return _pot_watts(op, element, legs)
    value = _STRESS[part_type](op, element)
    return value / factor if LIMITS[part_type].quantity == "power" else value


def derated_limit(part_type: str, rating: float | None) -> float | None:
    """The most stress a part may take: its derated rating, or the assumed one's; None for a
    part that states no rating and has none assumed (a capacitor)."""
    limit = LIMITS[part_type]
    used = rating or limit.assumed
    return None if used is None else limit.derating * used * (1 + 1e-9)


def _show(x: float, quantity: str) -> str:
    return power_text(x) if quantity == "power" else format_value(x, quantity)


def _suggest(stress: float, limit: RatingLimit) -> str:
    needed = stress / limit.derating
    fits = [r for r in limit.stocked if r >= needed * (1 - 1e-9)]
    if not fits:
        return f"a part rated over {_show(needed, limit.quantity)}"
    return f"{_show(fits[0], limit.quantity)} or more"


def rating_problem(designator: str, part_type: str, rating: float | None,
                   dielectric: str | None, stress: Stress) -> str | None:
    """What is wrong with a part's rating under ``stress``, in words; None when it is fine."""
    limit = LIMITS.get(part_type)
    if limit is None:
        return None
    value = abs(stress.value)
    verb = "dissipates" if limit.quantity == "power" else "sees"
    seen = f"{designator} {verb} {stress.bound}{_show(value, limit.quantity)}"
    seen += f" ({stress.words})" if stress.words else ""
    used = rating or limit.assumed
    if used is None:
        if dielectric not in POLARISED:
            return None
        return f"{seen} but states no rating; use {_suggest(value, limit)}"
    if value <= derated_limit(part_type, rating):
        return None
    over = "over its" if value > used else f"over {limit.derating:.0%} of its"
    stated = "" if rating else " (assumed: none stated)"
    return (f"{seen}, {over} {_show(used, limit.quantity)} rating{stated}; "
            f"use {_suggest(value, limit)}")
