"""Values a builder reads a part's marking as: IEC 60062 colour bands one colour off or read
from the wrong end, capacitor codes one power of ten off."""

from __future__ import annotations

import math

from kitleaf.errors import ValueFormatError
from kitleaf.eseries import in_series, series_for_tolerance
from kitleaf.marking import capacitor_code, neighbours, read_bands, resistor_bands


def resistor_misreads(ohms: float, tolerance: float) -> tuple[tuple[float, str], ...]:
    """(value, how it was misread) for each confusion whose value is a stocked one (the
    E-series of the part's tolerance): a part of that value is what ends up fitted."""
    try:
        bands = resistor_bands(ohms, tolerance)
    except ValueFormatError:
        return ()
    colours = tuple(b.colour for b in bands)
    figures = sum(b.role == "figure" for b in bands)
    found: dict[float, str] = {}
    for i, band in enumerate(bands):
        if band.role == "tolerance":
            continue
        for other in neighbours(band.colour, band.role):
            read = colours[:i] + (other,) + colours[i + 1:]
            _keep(found, read_bands(read, figures), ohms, tolerance,
                  f"band {i + 1} {band.colour} read as {other}")
    _keep(found, read_bands(colours[::-1], figures), ohms, tolerance,
          "bands read from the wrong end")
    return tuple(sorted(found.items()))


def _keep(found: dict[float, str], value: float | None, ohms: float, tolerance: float,
          how: str) -> None:
    if value is None or math.isclose(value, ohms, rel_tol=1e-9) or value in found:
        return
    # kits stock E24 values in every tolerance, and the tolerance's own series
    if in_series(value, "E24") or in_series(value, series_for_tolerance(tolerance)):
        found[value] = how


def capacitor_misreads(farads: float) -> tuple[tuple[float, str], ...]:
    """(value, how) for a code read with its last figure one off (104 as 103 or 105)."""
    try:
        code = capacitor_code(farads)
    except ValueFormatError:
        return ()
    if not code.isdigit():
        return ()
    out = []
    for step in (-1, 1):
        power = int(code[-1]) + step
        if 0 <= power <= 6:
            wrong = f"{code[:-1]}{power}"
            out.append((farads * 10.0**step, f"code {code} read as {wrong}"))
    return tuple(out)
