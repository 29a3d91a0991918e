"""The one reader and the one writer of every part value, rating and tolerance in kitleaf.

Inside, values are SI floats; these functions turn what builders write (``4k7``, ``100n``,
``2u2``, ``104``, ``1/4W``) into floats and floats back into text for display.

Display rule (``format_value``): engineering SI prefix, ``digits`` significant figures.
Trailing zeros mean rounding happened: a value that is exact at ``digits`` figures shows only
its own digits (4700 -> "4.7 kΩ", 1e6 -> "1 MΩ", 9 -> "9 V"); a value that had to be rounded
keeps all of them (1199.7 -> "1.20 kHz", 0.0023004 -> "2.30 mA"). Capacitance never goes above
µ (2200 µF, as printed on the can); resistance never goes below the plain ohm (0.47 Ω); voltage
goes down to p (hum of "71.1 pV"; display.py shows anything smaller as a bound).
Symbols: Ω is U+03A9, µ is U+00B5 MICRO SIGN; the range dash is U+2013.
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping
from fractions import Fraction
from types import MappingProxyType

from kitleaf.errors import ValueFormatError

# Quantity -> (display unit, example for error messages).
QUANTITIES: Mapping[str, tuple[str, str]] = MappingProxyType(
    {
        "resistance": ("Ω", "4k7, 4.7k or 4.7 kΩ"),
        "capacitance": ("F", "100n, 100nF, 2u2 or 104"),
        "inductance": ("H", "100mH or 10uH"),
        "voltage": ("V", "9V"),
        "current": ("A", "2.3mA"),
        "power": ("W", "0.25W or 1/4W"),
        "frequency": ("Hz", "1.2kHz"),
    }
)

# Every unit spelling we read, and the quantity it belongs to ("R" is the RKM ohm).
_UNITS: Mapping[str, str] = MappingProxyType(
    {
        "Ω": "resistance", "\u2126": "resistance", "ohm": "resistance", "ohms": "resistance",
        "Ohm": "resistance", "Ohms": "resistance", "R": "resistance",
        "F": "capacitance", "f": "capacitance",
        "H": "inductance",
        "V": "voltage", "v": "voltage",
        "A": "current",
        "W": "power", "w": "power",
        "Hz": "frequency", "hz": "frequency", "HZ": "frequency",
    }
)

_PREFIX_EXP: Mapping[str, int] = MappingProxyType(
    {"p": -12, "n": -9, "u": -6, "m": -3, "k": 3, "K": 3, "M": 6, "G": 9}
)

# Prefixes the trade uses per quantity; anything else is more likely a typo than a value.
_ALLOWED_PREFIXES: Mapping[str, str] = MappingProxyType(
    {
        "resistance": "kKMG",
        "capacitance": "pnum",
        "inductance": "num",
        "voltage": "umkK",
        "current": "pnum",
        "power": "umkK",
        "frequency": "mkKMG",
    }
)

# Display prefixes per quantity: (lowest, highest) power-of-ten exponent.
_DISPLAY_RANGE: Mapping[str, tuple[int, int]] = MappingProxyType(
    {
        "resistance": (0, 9),
        "capacitance": (-12, -6),
        "inductance": (-9, 0),
        "voltage": (-12, 3),  # down to pV: hum and leakage at -200 dBV and below
        "current": (-12, 0),
        "power": (-6, 3),
        "frequency": (0, 9),
    }
)

_DISPLAY_PREFIX: Mapping[int, str] = MappingProxyType(
    {-12: "p", -9: "n", -6: "µ", -3: "m", 0: "", 3: "k", 6: "M", 9: "G"}
)
_RKM_PREFIX: Mapping[int, str] = MappingProxyType(
    {-12: "p", -9: "n", -6: "u", -3: "m", 0: "R", 3: "k", 6: "M", 9: "G"}
)

# The span of values kitleaf reads per quantity, wide enough for any part a kit could hold
# (a 1 mΩ shunt, a 1 TΩ input, a 0.1 pF stray) and narrow enough that the solver's products
# of values stay far from a float's overflow (common practice, no source).
READABLE_RANGE: Mapping[str, tuple[float, float]] = MappingProxyType(
    {
        "resistance": (1e-3, 1e12),
        "capacitance": (1e-13, 1.0),
        "inductance": (1e-9, 1e3),
        "voltage": (1e-6, 1e5),
        "current": (1e-15, 1e3),
        "power": (1e-6, 1e5),
        "frequency": (1e-3, 1e12),
    }
)
# Longer than any value a builder writes: refused before any digit is converted (a number of
# thousands of digits would be slow, or refused by Python's int()).
_LONGEST_VALUE = 40

# Quantities whose bare number is too easily misread (47 what? farads?) to accept.
_NEEDS_MULTIPLIER = frozenset({"capacitance", "inductance"})

_DECIMAL = re.compile(r"^(\d+(?:\.\d*)?|\.\d+)(?:[eE]([-+]?\d+))?\s*([^\d.+/-]*)$")
_RKM = re.compile(r"^(\d*)([pnumkKMGR])(\d+)\s*([^\d.+/-]*)$")
_FRACTION = re.compile(r"^(\d+)\s*/\s*(\d+)\s*([^\d.+/-]*)$")
_CODE = re.compile(r"^\d{3}$")

# IEC 60062 tolerance letters, from memory of the standard.
_TOLERANCE_LETTERS: Mapping[str, float] = MappingProxyType(
    {"B": 0.001, "C": 0.0025, "D": 0.005, "F": 0.01, "G": 0.02, "J": 0.05, "K": 0.1, "M": 0.2}
)


def _expected(quantity: str) -> str:
    article = "an" if quantity[0] in "aeiou" else "a"
    return f"expected {article} {quantity} such as {QUANTITIES[quantity][1]}"


def _fail(text: str, quantity: str, why: str) -> ValueFormatError:
    return ValueFormatError(f"cannot read {text!r}: {why}; {_expected(quantity)}")


def _check_length(text: str, what: str, example: str) -> None:
    if len(text.strip()) > _LONGEST_VALUE:
        raise ValueFormatError(f"cannot read {what}: it is {len(text.strip())} characters "
                               f"long, longer than any value; {example}")


def _check_quantity(quantity: str) -> None:
    if quantity not in QUANTITIES:
        raise ValueError(f"unknown quantity {quantity!r}; one of {', '.join(QUANTITIES)}")


def _normalise(text: str) -> str:
    """Micro signs to ``u``, the ohm sign to omega, and no blanks around the text."""
    return text.strip().replace("µ", "u").replace("μ", "u").replace("\u2126", "Ω")


def _suffix_exponent(suffix: str, text: str, quantity: str) -> int:
    """The power of ten named by what follows the number, once its unit is checked."""
    suffix = suffix.replace(" ", "")
    if suffix in _UNITS:
        _check_unit(_UNITS[suffix], text, quantity)
        return 0
    if suffix[:1] in _PREFIX_EXP and (suffix[1:] in _UNITS or suffix[1:] == ""):
        _check_unit(_UNITS.get(suffix[1:]), text, quantity)
        return _prefix_exponent(suffix[0], text, quantity)
    raise _fail(text, quantity, f"{suffix!r} is not a multiplier or unit")


def _prefix_exponent(prefix: str, text: str, quantity: str) -> int:
    if prefix not in _ALLOWED_PREFIXES[quantity]:
        hint = " (lowercase m is milli; write M for mega)" if prefix == "m" else ""
        raise _fail(text, quantity, f"the multiplier {prefix!r} is not used here{hint}")
    return _PREFIX_EXP[prefix]


def _check_unit(unit_quantity: str | None, text: str, quantity: str) -> None:
    if unit_quantity is not None and unit_quantity != quantity:
        raise _fail(text, quantity, f"its unit is a {unit_quantity}")


def _read_decimal(match: re.Match[str], text: str, quantity: str) -> tuple[float, bool]:
    number, exponent, suffix = match.groups()
    power = _suffix_exponent(suffix, text, quantity) if suffix else 0
    bare = not suffix and exponent is None
    # Through the decimal text, so 100n is exactly the float nearest 1e-7 (an exponent of a
    # thousand or more overflows or underflows to inf or 0, which _in_range names).
    return float(f"{number}e{power + int(exponent or 0)}"), bare


def _read_rkm(match: re.Match[str], text: str, quantity: str) -> float:
    whole, letter, tail, unit = match.groups()
    if letter == "R":
        if quantity != "resistance":
            raise _fail(text, quantity, "R marks the decimal point of a resistance")
        power = 0
    else:
        power = _prefix_exponent(letter, text, quantity)
    if unit and unit.replace(" ", "") not in _UNITS:
        raise _fail(text, quantity, f"{unit!r} is not a unit")
    _check_unit(_UNITS.get(unit.replace(" ", "")), text, quantity)
    return float(f"{whole or '0'}.{tail}e{power}")


def _read_code(text: str, quantity: str) -> float:
    """IEC 60062 three-digit capacitor code: two figures and a power of ten, in picofarads."""
    if text[2] not in "0123456":
        raise _fail(text, quantity, "a three-digit code ends in 0-6; write small values as 4p7")
    return float(f"{text[:2]}e{int(text[2]) - 12}")


def _read_fraction(match: re.Match[str], text: str, quantity: str) -> tuple[float, bool]:
    top, bottom, suffix = match.groups()
    if int(bottom) == 0:
        raise _fail(text, quantity, "division by zero")
    power = _suffix_exponent(suffix, text, quantity) if suffix else 0
    return float(Fraction(int(top), int(bottom)) * Fraction(10) ** power), not suffix


def parse_value(text: str, quantity: str) -> float:
    """The SI value of ``text`` read as ``quantity`` (4k7 -> 4700.0 for "resistance").

    A bare three-digit integer is a capacitor code (104 -> 100 nF) for capacitance only; any
    other bare number for a capacitance or an inductance is refused (it needs a multiplier).
    """
    _check_quantity(quantity)
    _check_length(text, "the value", _expected(quantity))
    clean = _normalise(text)
    if quantity == "capacitance" and _CODE.match(clean):
        return _in_range(_read_code(clean, quantity), text, quantity)
    value, bare = _read_any(clean, text, quantity)
    if bare and quantity in _NEEDS_MULTIPLIER:
        raise _fail(text, quantity, "a bare number needs a multiplier")
    return _in_range(value, text, quantity)


def _read_any(clean: str, text: str, quantity: str) -> tuple[float, bool]:
    if match := _DECIMAL.match(clean):
        return _read_decimal(match, text, quantity)
    if match := _RKM.match(clean):
        return _read_rkm(match, text, quantity), False
    if match := _FRACTION.match(clean):
        return _read_fraction(match, text, quantity)
    if clean.startswith("-"):
        raise _fail(text, quantity, "values are positive")
    raise _fail(text, quantity, "not a number")


def _in_range(value: float, text: str, quantity: str) -> float:
    """``value`` if it lies in the quantity's readable range; an error saying which way not."""
    low, high = READABLE_RANGE[quantity]
    if low <= value <= high:
        return value
    if value <= 0 and not re.search(r"[1-9]", text):
        raise _fail(text, quantity, "values are positive")
    span = f"kitleaf reads {format_range(low, high, quantity)}"
    raise _fail(text, quantity, f"{'too large' if value > high else 'too small'} ({span})")


def parse_tolerance(text: str) -> float:
    """A tolerance as a fraction: "5%", "±5 %", "+/-1%" or an IEC 60062 letter ("J") -> 0.05."""
    _check_length(text, "the tolerance", "write it like 5%")
    clean = text.strip().removeprefix("±").removeprefix("+/-").strip()
    if clean in _TOLERANCE_LETTERS:
        return _TOLERANCE_LETTERS[clean]
    match = re.fullmatch(r"(\d+(?:\.\d*)?|\.\d+)\s*%", clean)
    if not match or not 0 < float(match.group(1)) < 100:
        raise ValueFormatError(
            f"cannot read the tolerance {text!r}: expected a percentage such as 5% or 1%"
        )
    return float(match.group(1)) / 100


def parse_rating(text: str, quantity: str | None = None) -> float:
    """A voltage rating in volts or a power rating in watts: "25V" -> 25.0, "1/4W" -> 0.25.

    The unit is required (a bare "25" could be either); a trailing "DC" is ignored. With
    ``quantity`` ("voltage" for a capacitor, "power" for a resistor) the unit must match it.
    """
    _check_length(text, "the rating", "write it like 25V or 1/4W")
    clean = re.sub(r"\s*(?:DC|dc|Dc)$", "", _normalise(text))
    found = _UNITS.get(clean[-1:])
    wanted = (quantity,) if quantity else ("voltage", "power")
    if found not in wanted:
        example = {"voltage": "25V", "power": "1/4W"}
        such = " or ".join(example[q] for q in wanted)
        raise ValueFormatError(
            f"cannot read the rating {text!r}: "
            f"expected a {' or '.join(wanted)} rating such as {such}"
        )
    return parse_value(clean, found)


def _engineering_exponent(x: float, quantity: str) -> int:
    low, high = _DISPLAY_RANGE[quantity]
    exponent = 3 * math.floor(math.log10(abs(x)) / 3)
    return min(max(exponent, low), high)


def _round_figures(x: float, digits: int) -> float:
    return round(x, digits - 1 - math.floor(math.log10(abs(x))))


def _scaled(x: float, quantity: str, digits: int) -> tuple[str, int]:
    """The mantissa text and its power of ten; trailing zeros kept only if rounding happened."""
    rounded = _round_figures(x, digits)
    exponent = _engineering_exponent(rounded, quantity)
    mantissa = rounded / 10.0**exponent
    decimals = max(digits - 1 - math.floor(math.log10(abs(mantissa))), 0)
    text = f"{mantissa:.{decimals}f}"
    if "." in text and math.isclose(rounded, x, rel_tol=1e-9):
        text = text.rstrip("0").rstrip(".")
    return text, exponent


def format_value(x: float, quantity: str, digits: int = 3) -> str:
    """``x`` for display: "4.7 kΩ", "100 nF", "1.20 kHz" (see the module's display rule)."""
    _check_quantity(quantity)
    if not math.isfinite(x):
        raise ValueError(f"cannot display {x!r} as a {quantity}")
    unit = QUANTITIES[quantity][0]
    if x == 0:
        return f"0 {unit}"
    mantissa, exponent = _scaled(x, quantity, digits)
    return f"{mantissa} {_DISPLAY_PREFIX[exponent]}{unit}"


def format_rkm(x: float, quantity: str) -> str:
    """``x`` in the IEC 60062 letter-and-digit code: "4k7", "100n", "2u2", "1M", "470R", "R47".

    Three significant figures at most; the letter stands where the decimal point would be.
    Only resistance and capacitance have an RKM code here (an inductor's 1R5 means µH).
    """
    if quantity not in ("resistance", "capacitance"):
        raise ValueError(f"no RKM code for {quantity!r}")
    if not (math.isfinite(x) and x > 0):
        raise ValueError(f"cannot write {x!r} as an RKM code")
    mantissa, exponent = _scaled(x, quantity, 3)
    whole, _, fraction = mantissa.partition(".")
    letter = _RKM_PREFIX[exponent]
    if whole == "0":
        whole = ""
    return f"{whole}{letter}{fraction}"


def format_db(x: float) -> str:
    """A level or gain in decibels to one decimal: "25.8 dB", "-3.0 dB"."""
    if not math.isfinite(x):
        raise ValueError(f"cannot display {x!r} in dB")
    text = f"{x:.1f}"
    return f"{'0.0' if text == '-0.0' else text} dB"


def format_range(lo: float, hi: float, quantity: str) -> str:
    """Two values joined by an en dash, sharing the unit when both use the same prefix.

    "10–100 kΩ", "20 Hz–20 kHz".
    """
    if lo > hi:
        raise ValueError(f"range {lo!r} to {hi!r} is reversed")
    low, high = format_value(lo, quantity), format_value(hi, quantity)
    low_number, _, low_unit = low.partition(" ")
    high_number, _, high_unit = high.partition(" ")
    if low_unit == high_unit:
        return f"{low_number}–{high_number} {high_unit}"
    return f"{low}–{high}"


# A model parameter: a signed decimal, an optional exponent and an optional SI prefix.
_PARAMETER = re.compile(r"^([-+]?(?:\d+(?:\.\d*)?|\.\d+))(?:[eE]([-+]?\d+))?([a-zA-Z]*)$")
_PARAMETER_PREFIX: Mapping[str, int] = MappingProxyType(
    {"f": -15, "p": -12, "n": -9, "u": -6, "m": -3, "k": 3, "G": 9, "T": 12}
)


def parse_number(text: str) -> float:
    """A device model's parameter, ``2.5e-6``, ``2.5u``, ``-1.2`` or ``40``, as a float.

    SI prefixes from f to T are read; M and meg are refused, since SPICE reads M as milli
    and SI as mega.
    """
    _check_length(text, "a number", "write it like 2.5e-6 or 2.5u")
    match = _PARAMETER.match(_normalise(text))
    if match is None or (match[3] and match[3] not in _PARAMETER_PREFIX):
        hint = " (M means milli to SPICE and mega to SI: write 1e6 or 1e-3)" \
            if match is not None and match[3].lower() in ("m", "meg") else ""
        raise ValueFormatError(f"cannot read {text.strip()!r} as a number{hint}; write it "
                               "like 2.5e-6, 2.5u or 40")
    power = _PARAMETER_PREFIX.get(match[3], 0) + int(match[2] or 0)
    value = float(f"{match[1]}e{power}")
    if not math.isfinite(value):
        raise ValueFormatError(f"cannot read {text.strip()!r}: it is out of range; write a "
                               "number like 2.5e-6")
    return value
