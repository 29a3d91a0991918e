"""Measurements on an AC result: gain, phase, band gain and -3 dB corners found by root-finding."""

from __future__ import annotations

import math

import numpy as np
from scipy.optimize import brentq, minimize_scalar

from kitleaf.engine.ac import AcResult
from kitleaf.errors import SolveError

CORNER_DB = 20.0 * math.log10(math.sqrt(0.5))  # -3.0103 dB, the half-power point


def _db(h: np.ndarray) -> np.ndarray:
    with np.errstate(divide="ignore"):
        return 20.0 * np.log10(np.abs(h))


def gain_db_at(ac: AcResult, node: str, freq: float) -> float:
    """Gain in dB from the source to ``node`` at ``freq`` Hz (solved there, not interpolated)."""
    return float(_db(ac.at([freq]).transfer(node))[0])


def phase_deg_at(ac: AcResult, node: str, freq: float) -> float:
    """Phase of the transfer to ``node`` at ``freq`` Hz, degrees in (-180, 180]."""
    return float(np.degrees(np.angle(ac.at([freq]).transfer(node)))[0])


def band_gain_db(ac: AcResult, node: str, f_low: float, f_high: float,
                 points: int = 64) -> tuple[float, float]:
    """Lowest and highest gain in dB over ``f_low``..``f_high`` on a log grid of ``points``."""
    if not 0 < f_low < f_high:
        raise SolveError(f"band {f_low!r}..{f_high!r} Hz must be positive and increasing")
    gains = _db(ac.at(np.geomspace(f_low, f_high, points)).transfer(node))
    return float(gains.min()), float(gains.max())


def corners(ac: AcResult, node: str, ref_hz: float | None = None
            ) -> tuple[float | None, float | None]:
    """Low and high -3 dB corners of the response at ``node``, in Hz.

    The reference is the gain at ``ref_hz``, or the response's peak when none is given (the
    peak is refined between grid points). Each corner is the half-power crossing nearest the
    reference, bracketed on the analysed grid and found by Brent's method on the exact
    response; None where the response stays within 3 dB to the end of the grid.
    """
    freqs = np.asarray(ac.freqs)
    if freqs.size < 2 or np.any(np.diff(freqs) <= 0):
        raise SolveError("corners need an AC result on increasing frequencies (two or more)")
    ref_f, ref_db = _reference(ac, node, ref_hz)

    def excess(log_f: float) -> float:
        return float(_db(ac.at([math.exp(log_f)]).transfer(node))[0]) - ref_db - CORNER_DB

    grid_excess = _db(ac.transfer(node)) - ref_db - CORNER_DB
    below, above = freqs < ref_f, freqs > ref_f
    low = _crossing(excess, freqs[below][::-1], grid_excess[below][::-1], ref_f)
    high = _crossing(excess, freqs[above], grid_excess[above], ref_f)
    return low, high


def _reference(ac: AcResult, node: str, ref_hz: float | None) -> tuple[float, float]:
    if ref_hz is not None:
        return float(ref_hz), gain_db_at(ac, node, ref_hz)
    gains = _db(ac.transfer(node))
    i = int(np.argmax(gains))
    lo, hi = ac.freqs[max(i - 1, 0)], ac.freqs[min(i + 1, ac.freqs.size - 1)]
    if lo == hi:
        return float(ac.freqs[i]), float(gains[i])
    found = minimize_scalar(lambda lf: -gain_db_at(ac, node, math.exp(lf)),
                            bounds=(math.log(lo), math.log(hi)), method="bounded",
                            options={"xatol": 1e-9})
    if -found.fun > gains[i]:
        return float(math.exp(found.x)), float(-found.fun)
    return float(ac.freqs[i]), float(gains[i])


def _crossing(excess, freqs: np.ndarray, values: np.ndarray, start: float) -> float | None:
    """First half-power crossing walking away from ``start`` along ``freqs``."""
    prev_f, prev_v = start, excess(math.log(start))
    for f, v in zip(freqs, values, strict=True):
        if v < 0.0 <= prev_v:
            root = brentq(excess, math.log(min(f, prev_f)), math.log(max(f, prev_f)),
                          xtol=1e-12, rtol=1e-12)
            return float(math.exp(root))
        prev_f, prev_v = f, v
    return None
