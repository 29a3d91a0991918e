"""The corner search's refinement: a column without a crossing stays inside the searched band.

A response that stays within 3 dB up to 10 MHz has no high corner (NaN). Its column is still
solved at each refinement step; solved again at an end of the band, a response can come back a
rounding step away from the grid's value, and the false-position step between two nearly
equal ends then lands far outside the band (2.6e10 Hz was seen): a frequency whose square
overflows in the modal sum, which a check reports as a numeric failure.
"""

from __future__ import annotations

import numpy as np

from kitleaf.specs.response import SEARCH, SEARCH_HIGH_HZ, SEARCH_LOW_HZ, _crossings


def low_pass(f):
    """A first-order low-pass at 2 kHz: |H| = 1 / sqrt(1 + (f / 2 kHz)^2), -3.01 dB there."""
    return 1.0 / np.sqrt(1.0 + (f / 2000.0) ** 2)


def test_a_flat_response_is_never_solved_outside_the_band():
    # column 0 stays above the target of 1/sqrt(2) everywhere (no crossing); column 1, a
    # low-pass whose crossing takes several steps, keeps the refinement going
    flat = 0.75
    mags = np.stack([np.full(SEARCH.size, flat), low_pass(SEARCH)])[None]
    asked = []

    def response(freqs: np.ndarray) -> np.ndarray:
        asked.append(freqs[:, 0].copy())
        # solved afresh, the flat value differs from the grid's in its last bits
        again = np.nextafter(flat, 1.0) * (1.0 + 4e-16 * len(asked))
        return np.stack([np.full(freqs.shape[0], again), low_pass(freqs[:, 1])], axis=1)

    found = _crossings(response, mags, np.full((1, 2), 2 ** -0.5), np.full((1, 2), 100.0),
                       np.array([True, True]))
    assert np.isnan(found[0, 0]) and abs(found[0, 1] / 2000.0 - 1.0) < 1e-9
    every = np.concatenate(asked)
    assert every.size and ((every >= SEARCH_LOW_HZ) & (every <= SEARCH_HIGH_HZ * 1.000001)).all()


def test_a_crossing_between_grid_points_is_found():
    mags = low_pass(SEARCH)[None, None, :]
    found = _crossings(low_pass, mags, np.array([[2 ** -0.5]]), np.array([[100.0]]),
                       np.array([True]))
    assert abs(found[0, 0] / 2000.0 - 1.0) < 1e-9  # textbook first-order corner
