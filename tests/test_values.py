"""Reading and writing part values: RKM codes, SI prefixes, capacitor codes, ratings, tolerances."""

from __future__ import annotations

import math

import pytest

from kitleaf.errors import ValueFormatError
from kitleaf.values import (
    READABLE_RANGE,
    format_db,
    format_range,
    format_rkm,
    format_value,
    parse_rating,
    parse_tolerance,
    parse_value,
)

# Spellings builders write, with the value the trade reads in them. RKM rows (letter as the
# decimal point: 4k7, 2R2, R47, 2u2, 1M0) follow IEC 60062's letter-and-digit code, from memory.
ACCEPTED = [
    ("4k7", "resistance", 4700.0),
    ("4.7k", "resistance", 4700.0),
    ("4700", "resistance", 4700.0),
    ("4.7 kΩ", "resistance", 4700.0),
    ("4.7 k\u2126", "resistance", 4700.0),  # OHM SIGN, as some keyboards type it
    ("4.7kohm", "resistance", 4700.0),
    ("4.7 kohms", "resistance", 4700.0),
    ("4K7", "resistance", 4700.0),
    ("4k7Ω", "resistance", 4700.0),
    ("1M", "resistance", 1e6),
    ("1M0", "resistance", 1e6),
    ("2M2", "resistance", 2.2e6),
    ("2R2", "resistance", 2.2),
    ("R47", "resistance", 0.47),
    ("470R", "resistance", 470.0),
    ("470", "resistance", 470.0),
    ("100 Ω", "resistance", 100.0),
    ("100n", "capacitance", 100e-9),
    ("0.1u", "capacitance", 100e-9),
    (".1u", "capacitance", 100e-9),
    ("100nF", "capacitance", 100e-9),
    ("100 nF", "capacitance", 100e-9),
    ("2u2", "capacitance", 2.2e-6),
    ("2u2F", "capacitance", 2.2e-6),
    ("2.2 µF", "capacitance", 2.2e-6),  # MICRO SIGN
    ("2.2 μF", "capacitance", 2.2e-6),  # GREEK SMALL LETTER MU
    ("2.2 uF", "capacitance", 2.2e-6),
    ("2.2uf", "capacitance", 2.2e-6),
    ("470p", "capacitance", 470e-12),
    ("470pF", "capacitance", 470e-12),
    ("4n7", "capacitance", 4.7e-9),
    ("4p7", "capacitance", 4.7e-12),
    ("100mH", "inductance", 0.1),
    ("10uH", "inductance", 10e-6),
    ("9V", "voltage", 9.0),
    ("9 V", "voltage", 9.0),
    ("9", "voltage", 9.0),
    ("4.5V", "voltage", 4.5),
    ("2.3mA", "current", 2.3e-3),
    ("0.25W", "power", 0.25),
    ("1/4W", "power", 0.25),
    ("1/2 W", "power", 0.5),
    ("250mW", "power", 0.25),
    ("1.2kHz", "frequency", 1200.0),
    ("1.2KHz", "frequency", 1200.0),
    ("720 Hz", "frequency", 720.0),
]


@pytest.mark.parametrize(("text", "quantity", "expected"), ACCEPTED)
def test_accepted_spellings(text, quantity, expected):
    assert parse_value(text, quantity) == pytest.approx(expected, rel=1e-12)


# IEC 60062 three-digit capacitor code: two figures, then the power of ten, in pF (from memory).
CODES = [
    ("104", 100e-9),
    ("473", 47e-9),
    ("101", 100e-12),
    ("100", 10e-12),
    ("470", 47e-12),
    ("222", 2.2e-9),
    ("105", 1e-6),
]


@pytest.mark.parametrize(("text", "farads"), CODES)
def test_three_digit_capacitor_code(text, farads):
    assert parse_value(text, "capacitance") == pytest.approx(farads, rel=1e-12)


def test_three_digit_number_is_a_plain_number_for_a_resistance():
    # The code reading applies to capacitance only: 104 ohms stays 104 ohms.
    assert parse_value("104", "resistance") == 104.0


def test_parsed_values_are_the_nearest_floats():
    # 100n must equal 1e-7 exactly, or equal values would not group in a bill of materials.
    assert parse_value("100n", "capacitance") == 1e-7
    assert parse_value("104", "capacitance") == 1e-7
    assert parse_value("4k7", "resistance") == 4700.0


REJECTED = [
    ("100nF", "resistance", "capacitance"),  # unit contradicts the quantity
    ("4k7", "capacitance", "capacitance such as"),  # k is no capacitor multiplier
    ("4k7F", "resistance", "capacitance"),
    ("9V", "current", "voltage"),
    ("10mH", "capacitance", "inductance"),
    ("2R2", "capacitance", "R marks"),
    ("47", "capacitance", "multiplier"),  # bare number for a capacitor
    ("4700", "capacitance", "multiplier"),
    ("0.1", "capacitance", "multiplier"),
    ("1000", "capacitance", "multiplier"),  # four digits: not a code
    ("10", "inductance", "multiplier"),
    ("107", "capacitance", "0-6"),  # code ending in 7
    ("0", "resistance", "positive"),
    ("0R", "resistance", "positive"),
    ("000", "capacitance", "positive"),
    ("-9V", "voltage", "positive"),
    ("-4k7", "resistance", "positive"),
    ("", "resistance", "not a number"),
    ("abc", "resistance", "not a number"),
    ("4.7k7", "resistance", "not a number"),
    ("4k7k", "resistance", "not a unit"),
    ("4.7 kQ", "resistance", "not a multiplier or unit"),
    ("1m", "resistance", "write M for mega"),  # lowercase m is milli, never mega
    ("1M", "capacitance", "not used here"),
    ("1/0W", "power", "division by zero"),
    ("1e99999", "resistance", "too large"),  # overflows a float to inf
    ("1e-99999", "resistance", "too small"),  # underflows to 0
    ("1e308", "resistance", "too large"),
    ("1e308u", "capacitance", "too large"),
    ("1e-300u", "capacitance", "too small"),
    ("1e9999999999999", "inductance", "too large"),
]


@pytest.mark.parametrize(("text", "quantity", "says"), REJECTED)
def test_rejected_inputs_say_what_was_expected(text, quantity, says):
    with pytest.raises(ValueFormatError) as caught:
        parse_value(text, quantity)
    message = str(caught.value)
    assert says in message
    assert f"expected a{'n' if quantity[0] in 'aeiou' else ''} {quantity} such as" in message


@pytest.mark.parametrize("quantity", sorted(READABLE_RANGE))
def test_readable_range_ends_are_read_and_beyond_is_refused(quantity):
    low, high = READABLE_RANGE[quantity]
    unit = {"resistance": "R", "capacitance": "F", "inductance": "H"}.get(quantity, "")
    assert parse_value(f"{low!r}{unit}", quantity) == low
    assert parse_value(f"{high!r}{unit}", quantity) == high
    for beyond, says in ((low / 10, "too small"), (high * 10, "too large")):
        with pytest.raises(ValueFormatError, match=says):
            parse_value(f"{beyond!r}{unit}", quantity)


# Past int()'s 4300-digit limit, and past any value a builder writes.
LONG = {"digits": "1" + "0" * 5000, "exponent": "1e" + "9" * 5000,
        "fraction": "1/" + "1" * 5000 + "W", "decimal fraction": "1/0." + "0" * 400 + "1W"}


@pytest.mark.parametrize("text", LONG.values(), ids=LONG.keys())
def test_long_values_are_refused_before_conversion(text):
    with pytest.raises(ValueFormatError, match="longer than any value") as caught:
        parse_rating(text) if text.endswith("W") else parse_value(text, "resistance")
    assert len(caught.value.message) < 200


def test_unknown_quantity_is_a_programming_error():
    with pytest.raises(ValueError, match="unknown quantity"):
        parse_value("4k7", "resistence")


# Display: three significant figures with an SI prefix; trailing zeros only when rounding
# happened (values.py's documented rule). Part values as the trade writes them on schematics
# and bags (common practice, no source); computed values round to three figures.
DISPLAYED = [
    (4700.0, "resistance", "4.7 kΩ"),
    (100e-9, "capacitance", "100 nF"),
    (2.2e-6, "capacitance", "2.2 µF"),
    (1e6, "resistance", "1 MΩ"),
    (470.0, "resistance", "470 Ω"),
    (0.47, "resistance", "0.47 Ω"),  # never milliohm for a resistor
    (2200e-6, "capacitance", "2200 µF"),  # capacitors stop at µF, as printed on the can
    (470e-12, "capacitance", "470 pF"),
    (0.1, "inductance", "100 mH"),
    (9.0, "voltage", "9 V"),
    (-4.5, "voltage", "-4.5 V"),
    (0.0, "voltage", "0 V"),
    (1 / (2 * math.pi * 10e3 * 1e-6), "frequency", "15.9 Hz"),  # 15.915... Hz
    (1199.7, "frequency", "1.20 kHz"),
    (0.0023004, "current", "2.30 mA"),
    (999.7, "frequency", "1.00 kHz"),  # rounding carries into the next prefix
    (0.25, "power", "250 mW"),
]


@pytest.mark.parametrize(("x", "quantity", "expected"), DISPLAYED)
def test_format_value(x, quantity, expected):
    assert format_value(x, quantity) == expected


def test_format_value_digits():
    assert format_value(4990.0, "resistance", digits=2) == "5.0 kΩ"
    assert format_value(4990.0, "resistance", digits=4) == "4.99 kΩ"


@pytest.mark.parametrize("bad", [math.nan, math.inf])
def test_format_value_refuses_non_finite(bad):
    with pytest.raises(ValueError):
        format_value(bad, "voltage")


# IEC 60062 letter-and-digit code (from memory): the letter stands for the decimal point.
RKM = [
    (4700.0, "resistance", "4k7"),
    (100e-9, "capacitance", "100n"),
    (2.2e-6, "capacitance", "2u2"),
    (1e6, "resistance", "1M"),
    (470.0, "resistance", "470R"),
    (2.2, "resistance", "2R2"),
    (0.47, "resistance", "R47"),
    (4.7e-12, "capacitance", "4p7"),
    (47e3, "resistance", "47k"),
]


@pytest.mark.parametrize(("x", "quantity", "expected"), RKM)
def test_format_rkm(x, quantity, expected):
    assert format_rkm(x, quantity) == expected


@pytest.mark.parametrize(("x", "quantity", "expected"), RKM)
def test_rkm_reads_back(x, quantity, expected):
    assert parse_value(format_rkm(x, quantity), quantity) == pytest.approx(x, rel=1e-12)


def test_format_rkm_refuses_other_quantities():
    with pytest.raises(ValueError):
        format_rkm(1e-3, "inductance")


def test_format_db():
    assert format_db(25.83) == "25.8 dB"
    assert format_db(-3.01) == "-3.0 dB"
    assert format_db(-0.01) == "0.0 dB"  # no negative zero on a page


def test_format_range():
    assert format_range(10e3, 100e3, "resistance") == "10–100 kΩ"
    assert format_range(20.0, 20e3, "frequency") == "20 Hz–20 kHz"
    with pytest.raises(ValueError):
        format_range(2.0, 1.0, "voltage")


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        ("5%", 0.05),
        ("5 %", 0.05),
        ("±1%", 0.01),
        ("+/-10%", 0.10),
        ("0.1%", 0.001),
        # IEC 60062 tolerance letters (from memory).
        ("J", 0.05),
        ("K", 0.10),
        ("F", 0.01),
        ("M", 0.20),
    ],
)
def test_parse_tolerance(text, expected):
    assert parse_tolerance(text) == pytest.approx(expected)


@pytest.mark.parametrize("text", ["5", "five %", "0%", "100%", "-5%", "Q"])
def test_parse_tolerance_rejects(text):
    with pytest.raises(ValueFormatError, match="expected a percentage such as 5%"):
        parse_tolerance(text)


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        ("25V", 25.0),
        ("50 V", 50.0),
        ("16VDC", 16.0),
        ("63 V DC", 63.0),
        ("0.25W", 0.25),
        ("1/4W", 0.25),
        ("1/2 W", 0.5),
        ("500mW", 0.5),
    ],
)
def test_parse_rating(text, expected):
    assert parse_rating(text) == pytest.approx(expected)


def test_parse_rating_checks_the_quantity():
    assert parse_rating("25V", "voltage") == 25.0
    assert parse_rating("1/4W", "power") == 0.25
    with pytest.raises(ValueFormatError, match="expected a power rating such as 1/4W"):
        parse_rating("25V", "power")
    with pytest.raises(ValueFormatError, match="expected a voltage rating such as 25V"):
        parse_rating("0.25W", "voltage")


@pytest.mark.parametrize("text", ["25", "100nF", "2mA", "-25V", "0V", "V"])
def test_parse_rating_rejects(text):
    with pytest.raises(ValueFormatError):
        parse_rating(text)
