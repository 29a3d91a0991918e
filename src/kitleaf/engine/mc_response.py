"""The AC half of Monte Carlo: per-sample gains and corners from the batched pole-residue form."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from kitleaf.engine.compile import System
from kitleaf.engine.newton import Problem
from kitleaf.engine.poles import half_power_crossings
from kitleaf.engine.ports import PoleResidue, modal, port_form
from kitleaf.engine.reduce import Reduced, partition
from kitleaf.errors import SolveError

GRID_PER_DECADE = 8
DEFAULT_BAND = (1.0, 1e6)


@dataclass(frozen=True)
class McResponse:
    gain_db: dict[tuple[str, float], np.ndarray]
    corners: dict[str, tuple[np.ndarray, np.ndarray]]


def mc_response(system: System, problem: Problem, x: np.ndarray, factors: np.ndarray,
                source: str, freqs: np.ndarray, outputs: list[str],
                band: tuple[float, float] | None, ref_hz: float | None,
                reduced: Reduced | None = None) -> McResponse:
    if source not in system.stamper.source_cols:
        raise SolveError(f"{source!r} is not a source of the circuit")
    rows = [system.layout.row(n) for n in outputs]
    ports = port_form(system, partition(system), problem, x, factors,
                      system.rhs(only=source), rows, reduced)
    form = modal(ports, freqs[[0, -1]])
    grid = corner_grid(freqs, band)
    gain, corners = {}, {}
    for k, node in enumerate(outputs):
        response = _Row(form.take([k]))
        mags = response.magnitude(freqs)
        with np.errstate(divide="ignore"):
            db = 20 * np.log10(mags)
        gain.update({(node, float(f)): db[:, i] for i, f in enumerate(freqs)})
        grid_mags = mags if grid is freqs else response.magnitude(grid)
        corners[node] = _corners(response, grid, grid_mags, ref_hz)
    return McResponse(gain, corners)


class _Row:
    """One output's response (samples, frequencies)."""

    def __init__(self, form: PoleResidue) -> None:
        self.form = form

    def __call__(self, freqs: np.ndarray) -> np.ndarray:
        return self.form(freqs)[..., 0]

    def magnitude(self, freqs: np.ndarray) -> np.ndarray:
        return self.form.magnitude(freqs)[..., 0]


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
        ref = response.magnitude(np.array([ref_hz]))[:, 0]
    return half_power_crossings(response, ref, grid, mags, start)
