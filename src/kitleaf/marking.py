"""What is printed on a part: IEC 60062 resistor colour bands and capacitor marking codes.

Resistors: four bands (two figures, multiplier, tolerance) for 5 % and 10 %; five bands (three
figures, multiplier, tolerance) for 2 % and tighter; three bands (no tolerance band) for 20 %.
Capacitors: from 10 pF the three-digit code (two figures and the power of ten in pF: 473 is
47 nF); under 10 pF the standard's letter-and-digit code with p as the decimal point (4p7,
1p0, p47), since the three-digit code cannot write them.

The swatches are our own colours, picked to stay distinct in print and on screen (white and
silver need an outline on white paper; the page draws one).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from types import MappingProxyType

from kitleaf.errors import ValueFormatError
from kitleaf.values import format_value

# Colour -> our swatch. Order is the code's: index is the figure for black..white.
SWATCHES: Mapping[str, str] = MappingProxyType(
    {
        "black": "#1b1b1b",
        "brown": "#7a4a23",
        "red": "#d22b2b",
        "orange": "#f07f13",
        "yellow": "#f5d21f",
        "green": "#2f9443",
        "blue": "#2458c6",
        "violet": "#8446b5",
        "grey": "#8c8c8c",
        "white": "#fafafa",
        "gold": "#c9a12b",
        "silver": "#b9bec4",
    }
)

_FIGURES = ("black", "brown", "red", "orange", "yellow", "green", "blue", "violet", "grey", "white")

# Power of ten -> multiplier band.
_MULTIPLIERS: Mapping[int, str] = MappingProxyType(
    {-2: "silver", -1: "gold", **{power: _FIGURES[power] for power in range(10)}}
)

# Tolerance -> (tolerance band or None, significant figures in the code).
_TOLERANCES: Mapping[float, tuple[str | None, int]] = MappingProxyType(
    {
        0.20: (None, 2),
        0.10: ("silver", 2),
        0.05: ("gold", 2),
        0.02: ("red", 3),
        0.01: ("brown", 3),
        0.005: ("green", 3),
        0.0025: ("blue", 3),
        0.001: ("violet", 3),
        0.0005: ("grey", 3),
    }
)


@dataclass(frozen=True)
class Band:
    """One colour band: its colour name, our swatch for it, and what it encodes."""

    colour: str
    swatch: str
    role: str  # "figure", "multiplier" or "tolerance"


def _band(colour: str, role: str) -> Band:
    return Band(colour, SWATCHES[colour], role)


def _tolerance_entry(tolerance: float) -> tuple[str | None, int]:
    for known, entry in _TOLERANCES.items():
        if math.isclose(tolerance, known, rel_tol=1e-9):
            return entry
    listed = ", ".join(f"{t * 100:g}%" for t in _TOLERANCES)
    raise ValueFormatError(
        f"no colour code for a {tolerance * 100:g}% resistor; use one of {listed}"
    )


def _figures_and_power(value: float, figures: int) -> tuple[int, int] | None:
    """``value`` as an integer of exactly ``figures`` digits times a power of ten, if exact."""
    power = math.floor(math.log10(value)) - figures + 1
    number = round(value / 10.0**power)
    if number == 10**figures:  # 999.9999 rounding up
        number, power = number // 10, power + 1
    if not math.isclose(number * 10.0**power, value, rel_tol=1e-9):
        return None
    return number, power


def resistor_bands(ohms: float, tolerance: float) -> tuple[Band, ...]:
    """The colour bands of a resistor, read from the end nearer a lead."""
    if not ohms > 0:
        raise ValueFormatError(f"a resistor value must be positive, got {ohms!r}")
    tolerance_colour, figures = _tolerance_entry(tolerance)
    split = _figures_and_power(ohms, figures)
    shown = format_value(ohms, "resistance", digits=6)
    if split is None:
        raise ValueFormatError(
            f"{shown} has more than {figures} significant figures, which a "
            f"{tolerance * 100:g}% colour code cannot show; round it or give a tighter tolerance"
        )
    number, power = split
    if power not in _MULTIPLIERS:
        raise ValueFormatError(f"{shown} is outside what a colour code can show")
    digits = [_band(_FIGURES[int(d)], "figure") for d in str(number)]
    bands = [*digits, _band(_MULTIPLIERS[power], "multiplier")]
    if tolerance_colour:
        bands.append(_band(tolerance_colour, "tolerance"))
    return tuple(bands)


def read_bands(colours: tuple[str, ...], figures: int) -> float | None:
    """The resistance ``colours`` encode when read as ``figures`` figure bands and a
    multiplier (any bands after them ignored); None when they are no valid code."""
    if len(colours) < figures + 1 or colours[0] not in _FIGURES[1:]:
        return None
    if any(c not in _FIGURES for c in colours[:figures]):
        return None
    power = next((p for p, c in _MULTIPLIERS.items() if c == colours[figures]), None)
    if power is None:
        return None
    number = int("".join(str(_FIGURES.index(c)) for c in colours[:figures]))
    return number * 10.0**power


def neighbours(colour: str, role: str) -> tuple[str, ...]:
    """The colours either side of ``colour`` in its band's order (figures black..white;
    multipliers silver, gold, black..white): the colours it is most easily read as."""
    order = _FIGURES if role == "figure" else tuple(_MULTIPLIERS[p] for p in sorted(_MULTIPLIERS))
    if colour not in order:
        return ()
    i = order.index(colour)
    return tuple(order[j] for j in (i - 1, i + 1) if 0 <= j < len(order))


def capacitor_code(farads: float) -> str:
    """The marking on a small capacitor: 47 nF -> "473", 100 pF -> "101", 4.7 pF -> "4p7"."""
    if not farads > 0:
        raise ValueFormatError(f"a capacitor value must be positive, got {farads!r}")
    picofarads = farads * 1e12
    split = _figures_and_power(picofarads, 2)
    shown = format_value(farads, "capacitance", digits=6)
    if split is None:
        raise ValueFormatError(f"{shown} has more than two significant figures; no marking code")
    number, power = split
    if power < -2 or power > 6:
        raise ValueFormatError(f"{shown} is outside the marking codes (0.1 pF to 99 µF)")
    if power >= 0:
        return f"{number}{power}"
    return _small_code(number, power)


def _small_code(number: int, power: int) -> str:
    """Under 10 pF: the two figures with p where the decimal point falls (1p0, 4p7, p47)."""
    figures = str(number)
    if power == -1:
        return f"{figures[0]}p{figures[1]}"
    return f"p{figures}"
