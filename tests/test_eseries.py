"""The E-series tables against IEC 60063, and the stocked-value lookups."""

from __future__ import annotations

import pytest

from kitleaf.eseries import (
    SERIES,
    in_series,
    nearest_in_series,
    series,
    series_for_tolerance,
)

# IEC 60063 table, written from memory, one decade as the standard prints it. Each series is
# written out in full here (not sliced from a larger one) so the nesting is checked too.
PUBLISHED = {
    "E3": "1.0 2.2 4.7",
    "E6": "1.0 1.5 2.2 3.3 4.7 6.8",
    "E12": "1.0 1.2 1.5 1.8 2.2 2.7 3.3 3.9 4.7 5.6 6.8 8.2",
    "E24": "1.0 1.1 1.2 1.3 1.5 1.6 1.8 2.0 2.2 2.4 2.7 3.0 3.3 3.6 3.9 4.3 4.7 5.1 5.6 6.2 "
    "6.8 7.5 8.2 9.1",
    "E48": "1.00 1.05 1.10 1.15 1.21 1.27 1.33 1.40 1.47 1.54 1.62 1.69 1.78 1.87 1.96 2.05 "
    "2.15 2.26 2.37 2.49 2.61 2.74 2.87 3.01 3.16 3.32 3.48 3.65 3.83 4.02 4.22 4.42 4.64 4.87 "
    "5.11 5.36 5.62 5.90 6.19 6.49 6.81 7.15 7.50 7.87 8.25 8.66 9.09 9.53",
    "E96": "1.00 1.02 1.05 1.07 1.10 1.13 1.15 1.18 1.21 1.24 1.27 1.30 1.33 1.37 1.40 1.43 "
    "1.47 1.50 1.54 1.58 1.62 1.65 1.69 1.74 1.78 1.82 1.87 1.91 1.96 2.00 2.05 2.10 2.15 2.21 "
    "2.26 2.32 2.37 2.43 2.49 2.55 2.61 2.67 2.74 2.80 2.87 2.94 3.01 3.09 3.16 3.24 3.32 3.40 "
    "3.48 3.57 3.65 3.74 3.83 3.92 4.02 4.12 4.22 4.32 4.42 4.53 4.64 4.75 4.87 4.99 5.11 5.23 "
    "5.36 5.49 5.62 5.76 5.90 6.04 6.19 6.34 6.49 6.65 6.81 6.98 7.15 7.32 7.50 7.68 7.87 8.06 "
    "8.25 8.45 8.66 8.87 9.09 9.31 9.53 9.76",
    "E192": "1.00 1.01 1.02 1.04 1.05 1.06 1.07 1.09 1.10 1.11 1.13 1.14 1.15 1.17 1.18 1.20 "
    "1.21 1.23 1.24 1.26 1.27 1.29 1.30 1.32 1.33 1.35 1.37 1.38 1.40 1.42 1.43 1.45 1.47 1.49 "
    "1.50 1.52 1.54 1.56 1.58 1.60 1.62 1.64 1.65 1.67 1.69 1.72 1.74 1.76 1.78 1.80 1.82 1.84 "
    "1.87 1.89 1.91 1.93 1.96 1.98 2.00 2.03 2.05 2.08 2.10 2.13 2.15 2.18 2.21 2.23 2.26 2.29 "
    "2.32 2.34 2.37 2.40 2.43 2.46 2.49 2.52 2.55 2.58 2.61 2.64 2.67 2.71 2.74 2.77 2.80 2.84 "
    "2.87 2.91 2.94 2.98 3.01 3.05 3.09 3.12 3.16 3.20 3.24 3.28 3.32 3.36 3.40 3.44 3.48 3.52 "
    "3.57 3.61 3.65 3.70 3.74 3.79 3.83 3.88 3.92 3.97 4.02 4.07 4.12 4.17 4.22 4.27 4.32 4.37 "
    "4.42 4.48 4.53 4.59 4.64 4.70 4.75 4.81 4.87 4.93 4.99 5.05 5.11 5.17 5.23 5.30 5.36 5.42 "
    "5.49 5.56 5.62 5.69 5.76 5.83 5.90 5.97 6.04 6.12 6.19 6.26 6.34 6.42 6.49 6.57 6.65 6.73 "
    "6.81 6.90 6.98 7.06 7.15 7.23 7.32 7.41 7.50 7.59 7.68 7.77 7.87 7.96 8.06 8.16 8.25 8.35 "
    "8.45 8.56 8.66 8.76 8.87 8.98 9.09 9.20 9.31 9.42 9.53 9.65 9.76 9.88",
}


@pytest.mark.parametrize("name", list(PUBLISHED))
def test_table_matches_iec_60063(name):
    expected = tuple(float(v) for v in PUBLISHED[name].split())
    assert len(expected) == int(name[1:])
    assert SERIES[name] == expected


def test_all_series_present():
    assert set(SERIES) == set(PUBLISHED)


@pytest.mark.parametrize(
    ("x", "name", "stocked"),
    [
        (4700.0, "E12", True),
        (47.0, "E3", True),  # any decade
        (0.47, "E6", True),
        (4.7e-9, "E12", True),  # capacitors too
        (5100.0, "E12", False),
        (5100.0, "E24", True),
        (4990.0, "E96", True),
        (4990.0, "E24", False),
        (9.2e3, "E192", True),  # IEC 60063's 9.20, where the formula gives 9.19
        (9.19e3, "E192", False),
        (2.7e3, "E24", True),  # IEC 60063's 2.7, where the formula gives 2.6
        (2.6e3, "E24", False),
        (0.0, "E12", False),
    ],
)
def test_in_series(x, name, stocked):
    assert in_series(x, name) is stocked


@pytest.mark.parametrize(
    ("x", "name", "below", "above"),
    [
        (4800.0, "E12", 4700.0, 5600.0),
        (4700.0, "E12", 4700.0, 4700.0),
        (9.9e3, "E24", 9.1e3, 10e3),  # crosses into the next decade
        (1.05e3, "E12", 1.0e3, 1.2e3),
        (95e-9, "E6", 68e-9, 100e-9),
        (5e3, "E96", 4.99e3, 5.11e3),
    ],
)
def test_nearest_in_series(x, name, below, above):
    assert nearest_in_series(x, name) == (pytest.approx(below), pytest.approx(above))


def test_nearest_returns_clean_floats():
    # 4.7 times 1000 in floats is 4700.000000000001; the lookup must give the part value.
    assert nearest_in_series(4800.0, "E12") == (4700.0, 5600.0)


@pytest.mark.parametrize(
    ("tolerance", "name"),
    [
        # Tolerances each series was made for, IEC 60063 (from memory).
        (0.20, "E6"),
        (0.10, "E12"),
        (0.05, "E24"),
        (0.02, "E48"),
        (0.01, "E96"),
        (0.005, "E192"),
        (0.001, "E192"),
        (0.03, "E24"),  # between standard tolerances: the next wider one's series
        (0.40, "E3"),
    ],
)
def test_series_for_tolerance(tolerance, name):
    assert series_for_tolerance(tolerance) == name


def test_bad_lookups():
    with pytest.raises(ValueError, match="unknown E-series"):
        series("E13")
    with pytest.raises(ValueError):
        series_for_tolerance(0.0)
    with pytest.raises(ValueError):
        nearest_in_series(-1.0, "E12")
