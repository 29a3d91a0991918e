"""Resistor colour bands and capacitor marking codes against IEC 60062."""

from __future__ import annotations

import re

import pytest

from kitleaf.errors import ValueFormatError
from kitleaf.marking import SWATCHES, capacitor_code, resistor_bands

# IEC 60062 colour code table, written from memory:
#   figure: black 0, brown 1, red 2, orange 3, yellow 4, green 5, blue 6, violet 7, grey 8,
#           white 9
#   multiplier: silver 0.01, gold 0.1, black 1 ... white 1e9
#   tolerance: silver 10 %, gold 5 %, red 2 %, brown 1 %, green 0.5 %, blue 0.25 %,
#              violet 0.1 %, grey 0.05 %, no band 20 %
# Each row below is read off that table by hand.
BANDS = [
    (4700.0, 0.05, "yellow violet red gold"),
    (10e3, 0.05, "brown black orange gold"),
    (1e6, 0.05, "brown black green gold"),
    (100.0, 0.05, "brown black brown gold"),
    (10.0, 0.05, "brown black black gold"),
    (4.7, 0.05, "yellow violet gold gold"),
    (0.47, 0.10, "yellow violet silver silver"),
    (2.2e3, 0.10, "red red red silver"),
    (33e3, 0.05, "orange orange orange gold"),
    (390e3, 0.05, "orange white yellow gold"),
    (68e3, 0.05, "blue grey orange gold"),
    (82.0, 0.05, "grey red black gold"),
    (56e6, 0.05, "green blue blue gold"),
    (91e7, 0.05, "white brown violet gold"),
    (1.2e9, 0.05, "brown red grey gold"),
    (91e9, 0.05, "white brown white gold"),
    (220e3, 0.20, "red red yellow"),
    (4.99e3, 0.01, "yellow white white brown brown"),
    (100.0, 0.01, "brown black black black brown"),
    (1.0, 0.01, "brown black black silver brown"),
    (10e3, 0.02, "brown black black red red"),
    (12.1e3, 0.005, "brown red brown red green"),
    (1.5e3, 0.0025, "brown green black brown blue"),
    (3.57e3, 0.001, "orange green violet brown violet"),
    (2.49e3, 0.0005, "red yellow white brown grey"),
]


@pytest.mark.parametrize(("ohms", "tolerance", "colours"), BANDS)
def test_bands_match_iec_60062(ohms, tolerance, colours):
    assert [band.colour for band in resistor_bands(ohms, tolerance)] == colours.split()


def test_band_roles_and_counts():
    # Four bands for 5 % and 10 %, five for 2 % and tighter (IEC 60062, from memory).
    four = resistor_bands(4700.0, 0.05)
    five = resistor_bands(4.99e3, 0.01)
    assert [b.role for b in four] == ["figure", "figure", "multiplier", "tolerance"]
    assert [b.role for b in five] == ["figure"] * 3 + ["multiplier", "tolerance"]


def test_swatches_are_distinct_hex_colours():
    assert all(re.fullmatch(r"#[0-9a-f]{6}", swatch) for swatch in SWATCHES.values())
    assert len(set(SWATCHES.values())) == len(SWATCHES)
    band = resistor_bands(4700.0, 0.05)[0]
    assert band.swatch == SWATCHES["yellow"]


@pytest.mark.parametrize(
    ("ohms", "tolerance", "says"),
    [
        (4.99e3, 0.05, "more than 2 significant figures"),
        (4.991e3, 0.01, "more than 3 significant figures"),
        (0.01, 0.05, "outside"),  # below silver's 0.01 multiplier with two figures
        (100e9, 0.05, "outside"),
        (4700.0, 0.03, "no colour code"),
        (0.0, 0.05, "positive"),
    ],
)
def test_bands_refused(ohms, tolerance, says):
    with pytest.raises(ValueFormatError, match=says):
        resistor_bands(ohms, tolerance)


# IEC 60062 marking codes for capacitors (from memory): from 10 pF two figures and the power of
# ten in pF; under 10 pF the letter-and-digit code with p as the decimal point.
CODES = [
    (47e-9, "473"),
    (100e-12, "101"),
    (100e-9, "104"),
    (10e-12, "100"),
    (22e-12, "220"),
    (2.2e-9, "222"),
    (68e-9, "683"),
    (1e-6, "105"),
    (4.7e-6, "475"),
    (4.7e-12, "4p7"),
    (1e-12, "1p0"),
    (0.47e-12, "p47"),
]


@pytest.mark.parametrize(("farads", "code"), CODES)
def test_capacitor_code(farads, code):
    assert capacitor_code(farads) == code


@pytest.mark.parametrize(
    ("farads", "says"),
    [
        (4.75e-9, "more than two significant figures"),
        (100e-6, "outside"),
        (0.01e-12, "outside"),
        (-1e-9, "positive"),
    ],
)
def test_capacitor_code_refused(farads, says):
    with pytest.raises(ValueFormatError, match=says):
        capacitor_code(farads)
