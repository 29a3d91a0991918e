"""The AC half of Monte Carlo: per-sample gains by direct solve, corners by pole-residue search."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from kitleaf.engine.ac import small_signal
from kitleaf.engine.compile import System
from kitleaf.engine.newton import Problem, solve_batch
from kitleaf.engine.poles import PoleResidue, half_power_crossings, pole_residue
from kitleaf.errors import SolveError

GRID_PER_DECADE = 8
DEFAULT_BAND = (1.0, 1e6)
AGREEMENT = 1e-6  # pole-residue vs direct solve, relative; beyond it a sample is re-solved


@dataclass(frozen=True)
class McResponse:
    gain_db: dict[tuple[str, float], np.ndarray]
    corners: dict[str, tuple[np.ndarray, np.ndarray]]


def direct(g: np.ndarray, c: np.ndarray, rhs: np.ndarray, freqs: np.ndarray) -> np.ndarray:
    """Solutions (samples, frequencies, n) by one batched solve."""
    s = 2j * np.pi * freqs
    a = g[:, None] + s[None, :, None, None] * c[:, None]
    b = np.broadcast_to(rhs.astype(complex), a.shape[:-1])
    return solve_batch(a, b)


def mc_response(system: System, problem: Problem, x: np.ndarray, factors: np.ndarray,
                source: str, freqs: np.ndarray, outputs: list[str],
                band: tuple[float, float] | None, ref_hz: float | None) -> McResponse:
    if source not in system.stamper.source_cols:
        raise SolveError(f"{source!r} is not a source of the circuit")
    g, c, cap_a, cap_d = small_signal(system, problem.devices, x, factors)
    rhs = system.rhs(only=source)[0]
    rows = [system.layout.row(n) for n in outputs]
    check = direct(g, c, rhs, freqs[:1])[:, 0, rows]  # the pole-residue form is checked here
    grid = corner_grid(freqs, band)
    gain, corners = {}, {}
    models = pole_residue(g, cap_a, cap_d, rhs, rows)
    for k, (node, model) in enumerate(zip(outputs, models, strict=True)):
        bad = ~np.isclose(model(freqs[:1])[:, 0], check[:, k], rtol=AGREEMENT, atol=0)
        response = _Exact(model, g, c, rhs, rows[k], bad)
        mags = np.abs(response(freqs))
        with np.errstate(divide="ignore"):
            db = 20 * np.log10(mags)
        gain.update({(node, float(f)): db[:, i] for i, f in enumerate(freqs)})
        grid_mags = mags if grid is freqs else np.abs(response(grid))
        corners[node] = _corners(response, grid, grid_mags, ref_hz)
    return McResponse(gain, corners)


class _Exact:
    """Pole-residue response, with samples that disagree with the direct solve re-solved."""

    def __init__(self, model: PoleResidue, g, c, rhs, row: int, bad: np.ndarray) -> None:
        self.model, self.g, self.c, self.rhs, self.row, self.bad = model, g, c, rhs, row, bad

    def __call__(self, freqs: np.ndarray) -> np.ndarray:
        out = self.model(freqs)
        if self.bad.any():
            f = np.asarray(freqs, float)
            for i in np.flatnonzero(self.bad):
                fi = f if f.ndim == 1 else f[i]
                out[i] = direct(self.g[i:i + 1], self.c[i:i + 1], self.rhs, fi)[0, :, self.row]
        return out


def corner_grid(freqs: np.ndarray, band: tuple[float, float] | None) -> np.ndarray:
    """The bracketing grid: ``band`` at GRID_PER_DECADE, or ``freqs`` if that dense."""
    if band is None:
        span = np.log10(freqs[-1] / freqs[0]) if freqs.size > 1 else 0.0
        increasing = freqs.size > 1 and bool(np.all(np.diff(freqs) > 0))
        if increasing and freqs.size >= GRID_PER_DECADE * span:
            return freqs
        band = DEFAULT_BAND
    if not 0 < band[0] < band[1]:
        raise SolveError(f"corner band {band!r} must be two increasing frequencies")
    decades = np.log10(band[1] / band[0])
    return np.geomspace(band[0], band[1], int(GRID_PER_DECADE * decades) + 1)


def _corners(response, grid: np.ndarray, mags: np.ndarray, ref_hz: float | None):
    samples = mags.shape[0]
    if ref_hz is None:
        peak = np.argmax(mags, axis=1)
        start, ref = grid[peak], mags[np.arange(samples), peak]
    else:
        start = np.full(samples, float(ref_hz))
        ref = np.abs(response(np.array([ref_hz])))[:, 0]
    low = half_power_crossings(response, ref, grid, mags, start, upward=False)
    high = half_power_crossings(response, ref, grid, mags, start, upward=True)
    return low, high
