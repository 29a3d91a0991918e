"""Reading a frequency response: gain in dB, band gain and -3 dB corners found by root-finding."""

from __future__ import annotations

from typing import Callable

import numpy as np
from scipy.optimize import brentq

REFERENCE_HZ = 1000.0
# The plotted and searched band: 10 Hz to 40 kHz, log-spaced, with 1 kHz itself on the grid.
FREQS = np.unique(np.append(np.geomspace(10.0, 40e3, 200), REFERENCE_HZ))


def to_db(h: np.ndarray) -> np.ndarray:
    return 20.0 * np.log10(np.maximum(np.abs(h), 1e-300))


def corners(freqs: np.ndarray, h: np.ndarray,
            evaluate: Callable[[float], complex]) -> tuple[float | None, float | None]:
    """The low and high -3 dB frequencies around the response's peak on ``freqs``.

    The grid only brackets each crossing; ``evaluate`` (the response at any one frequency,
    solved afresh) is then root-found, so corners are not snapped to the grid. None where the
    response does not fall 3 dB inside the band.
    """
    db = to_db(h)
    peak = int(np.argmax(db))
    target = db[peak] - 3.0103  # half power

    def excess(f: float) -> float:
        return float(to_db(np.array([evaluate(f)]))[0] - target)

    below = np.nonzero(db[:peak] < target)[0]
    above = np.nonzero(db[peak:] < target)[0]
    low = high = None
    if below.size:
        i = below[-1]
        low = brentq(excess, freqs[i], freqs[i + 1], xtol=1e-9, rtol=1e-7)
    if above.size:
        j = peak + above[0]
        high = brentq(excess, freqs[j - 1], freqs[j], xtol=1e-9, rtol=1e-7)
    return low, high
