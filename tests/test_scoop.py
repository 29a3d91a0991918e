"""The mid scoop figure: the deepest dip of a response between two higher shoulders."""

from __future__ import annotations

import numpy as np
import pytest

from kitleaf.specs.response import FREQS, deepest_dip


def notch(centre_hz: float, damping_zero: float, damping_pole: float) -> np.ndarray:
    """H(s) = (s^2 + 2 a s + 1) / (s^2 + 2 b s + 1), s in units of the centre: a second-order
    notch, |H| = a / b at the centre and 1 far from it (hand derivation: at s = j the s^2 and 1
    cancel, leaving 2ja / 2jb)."""
    s = 1j * FREQS / centre_hz
    return (s * s + 2 * damping_zero * s + 1) / (s * s + 2 * damping_pole * s + 1)


@pytest.mark.parametrize("centre_hz", [140.0, 700.0, 1000.0, 3300.0])
def test_a_broad_notch_is_found_at_its_centre_and_depth(centre_hz):
    h = notch(centre_hz, 0.3, 1.0)
    depth, where = deepest_dip(h[None, :])
    # the broad notch has not quite come back to 0 dB at the band's ends: the lower end counts
    shoulder = 20 * np.log10(np.abs(h[[0, -1]])).min()
    assert depth[0] == pytest.approx(shoulder - 20 * np.log10(0.3), abs=0.02)
    assert where[0] == pytest.approx(centre_hz, rel=0.01)


def test_the_shallower_shoulder_sets_the_depth():
    # a notch on a shelf: the top end sits 6 dB below the bottom end, so the dip is measured
    # from the top end's level, 6 dB less deep than from the bottom's
    shelf = 10 ** (-6 / 20) + (1 - 10 ** (-6 / 20)) / (1 + 1j * FREQS / 20.0)
    h = notch(700.0, 0.3, 1.0) * shelf
    depth, where = deepest_dip(h[None, :])
    db = 20 * np.log10(np.abs(h))
    nearest = np.argmin(np.abs(FREQS - where[0]))
    assert depth[0] == pytest.approx(db[-1] - db[nearest], abs=0.05)
    assert db[0] - db[-1] > 5.0


def test_a_response_that_never_dips_has_no_depth():
    low_pass = 1 / (1 + 1j * FREQS / 1e3)
    depth, _ = deepest_dip(np.stack([low_pass, 1 / low_pass]))
    assert depth == pytest.approx([0.0, 0.0], abs=1e-12)
