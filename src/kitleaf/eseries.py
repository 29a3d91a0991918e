"""The IEC 60063 preferred-number series (E3 to E192) and lookups of stocked part values.

Each table is one decade of mantissas in [1, 10), written as the standard prints them
(two figures up to E24, three from E48). The tables are data, not a formula: the standard's
values depart from the rounded geometric series in places (E24 2.7 to 4.7 and 8.2, E192 9.20).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from types import MappingProxyType

_E24 = (10, 11, 12, 13, 15, 16, 18, 20, 22, 24, 27, 30, 33, 36, 39, 43, 47, 51, 56, 62, 68, 75, 82,
        91)  # fmt: skip

_E192 = (
    100, 101, 102, 104, 105, 106, 107, 109, 110, 111, 113, 114, 115, 117, 118, 120,
    121, 123, 124, 126, 127, 129, 130, 132, 133, 135, 137, 138, 140, 142, 143, 145,
    147, 149, 150, 152, 154, 156, 158, 160, 162, 164, 165, 167, 169, 172, 174, 176,
    178, 180, 182, 184, 187, 189, 191, 193, 196, 198, 200, 203, 205, 208, 210, 213,
    215, 218, 221, 223, 226, 229, 232, 234, 237, 240, 243, 246, 249, 252, 255, 258,
    261, 264, 267, 271, 274, 277, 280, 284, 287, 291, 294, 298, 301, 305, 309, 312,
    316, 320, 324, 328, 332, 336, 340, 344, 348, 352, 357, 361, 365, 370, 374, 379,
    383, 388, 392, 397, 402, 407, 412, 417, 422, 427, 432, 437, 442, 448, 453, 459,
    464, 470, 475, 481, 487, 493, 499, 505, 511, 517, 523, 530, 536, 542, 549, 556,
    562, 569, 576, 583, 590, 597, 604, 612, 619, 626, 634, 642, 649, 657, 665, 673,
    681, 690, 698, 706, 715, 723, 732, 741, 750, 759, 768, 777, 787, 796, 806, 816,
    825, 835, 845, 856, 866, 876, 887, 898, 909, 920, 931, 942, 953, 965, 976, 988,
)  # fmt: skip


def _decade(figures: tuple[int, ...], step: int, scale: int) -> tuple[float, ...]:
    """Every ``step``-th entry of a table of figures, as mantissas in [1, 10)."""
    return tuple(f / scale for f in figures[::step])


# The lower series are every 2nd, 4th or 8th member of the next: that nesting is the standard's.
SERIES: Mapping[str, tuple[float, ...]] = MappingProxyType(
    {
        "E3": _decade(_E24, 8, 10),
        "E6": _decade(_E24, 4, 10),
        "E12": _decade(_E24, 2, 10),
        "E24": _decade(_E24, 1, 10),
        "E48": _decade(_E192, 4, 100),
        "E96": _decade(_E192, 2, 100),
        "E192": _decade(_E192, 1, 100),
    }
)

# The tolerance each series was made for (IEC 60063); E3 serves wider ones.
_SERIES_TOLERANCE = (
    (0.005, "E192"),
    (0.01, "E96"),
    (0.02, "E48"),
    (0.05, "E24"),
    (0.10, "E12"),
    (0.20, "E6"),
)

_REL = 1e-9  # two floats this close are the same part value


def series(name: str) -> tuple[float, ...]:
    """The mantissas of series ``name`` ("E12"), for one decade."""
    try:
        return SERIES[name]
    except KeyError:
        raise ValueError(f"unknown E-series {name!r}; one of {', '.join(SERIES)}") from None


def series_for_tolerance(tol: float) -> str:
    """The series a part of tolerance ``tol`` (a fraction) is stocked in.

    The series of the nearest standard tolerance at or above ``tol``: 5 % -> E24, 10 % -> E12,
    1 % -> E96, 2 % -> E48, 20 % -> E6, 0.5 % and tighter -> E192, wider than 20 % -> E3.
    A 3 % part falls to E24, the series of the next wider standard tolerance.
    """
    if not tol > 0:
        raise ValueError(f"tolerance must be positive, got {tol!r}")
    for limit, name in _SERIES_TOLERANCE:
        if tol <= limit * (1 + _REL):
            return name
    return "E3"


def _candidates(x: float, name: str) -> list[float]:
    """The series' values in the decade of ``x`` and its neighbours, ascending."""
    decade = math.floor(math.log10(x))
    mantissas = series(name)
    # Through the decimal text, so 4.7 in the 1e3 decade is exactly 4700.0.
    return [float(f"{m!r}e{d}") for d in (decade - 1, decade, decade + 1) for m in mantissas]


def in_series(x: float, name: str) -> bool:
    """Whether ``x`` is a value of series ``name`` in any decade (4700 is in E12)."""
    if not x > 0:
        return False
    return any(math.isclose(x, c, rel_tol=_REL) for c in _candidates(x, name))


def nearest_in_series(x: float, name: str) -> tuple[float, float]:
    """The stocked values just below and just above ``x``; both are ``x`` if it is stocked."""
    if not x > 0:
        raise ValueError(f"a part value must be positive, got {x!r}")
    values = _candidates(x, name)
    for value in values:
        if math.isclose(x, value, rel_tol=_REL):
            return value, value
    below = max(v for v in values if v < x)
    above = min(v for v in values if v > x)
    return below, above
