"""A builder's readings from the command line, checked: known test points, numbers, volts
the supply can give."""

from __future__ import annotations

import math

from kitleaf.errors import KitleafError
from kitleaf.faults.probes import Probe, meter_error
from kitleaf.values import parse_value

FRESH = 1.1  # a fresh battery or an unregulated adapter reads up to 10 % over its rating
# (common practice, no source)


class ReadingError(KitleafError):
    """A reading the fault finder cannot use (unknown point, not a number, impossible)."""


def parse_readings(words: list[str], points: tuple[Probe, ...], supply_v: float
                   ) -> dict[str, float]:
    """``NAME=VOLTS`` words as {probe name: volts}, in the order given."""
    if not words:
        raise ReadingError("no readings given; add them as TEST-POINT=VOLTS, e.g. "
                           f"{points[0].name}=4.5 (the names: kitleaf pinpoint GUIDE --points)")
    by_name = {p.name.lower(): p.name for p in points}
    out: dict[str, float] = {}
    for word in words:
        name, sep, text = word.partition("=")
        if not sep or not name.strip():
            raise ReadingError(f"cannot read {word!r}: write a reading as TEST-POINT=VOLTS, "
                               f"e.g. {points[0].name}=4.5")
        key = by_name.get(name.strip().lower())
        if key is None:
            raise ReadingError(f"there is no test point {name.strip()!r}; the kit's test "
                               f"points are {', '.join(p.name for p in points)}")
        out[key] = _volts(key, text.strip(), supply_v)
    return out


def _volts(name: str, text: str, supply_v: float) -> float:
    sign, body = (-1.0, text[1:]) if text.startswith("-") else (1.0, text.lstrip("+"))
    try:
        volts = sign * float(body)
    except ValueError:
        try:
            volts = sign * parse_value(body, "voltage")
        except KitleafError:
            raise ReadingError(f"the reading for {name}, {text!r}, is not a number of volts; "
                               f"write it as the meter shows it, e.g. {name}=4.52") from None
    if not math.isfinite(volts):
        raise ReadingError(f"the reading for {name}, {text!r}, is not a number of volts")
    limit = supply_v * FRESH + meter_error(supply_v * FRESH)
    if abs(volts) > limit:
        raise ReadingError(f"the reading for {name}, {volts:g} V, is beyond what the "
                           f"{supply_v:g} V supply can give (at most {limit:.2f} V either way, "
                           "with a fresh battery and the meter's error); check the meter's "
                           "range and the decimal point")
    return volts
