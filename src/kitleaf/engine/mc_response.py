"""The AC half of Monte Carlo: per-sample gains by direct solve, corners by pole-residue search."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from kitleaf.engine.compile import System, incidence
from kitleaf.engine.newton import Problem, extend, solve_batch
from kitleaf.engine.poles import PoleResidue, half_power_crossings, pole_residue
from kitleaf.errors import SolveError

GRID_PER_DECADE = 8
AGREEMENT = 1e-6  # pole-residue vs direct solve, relative; beyond it a sample is re-solved


@dataclass(frozen=True)
class McResponse:
    gain_db: dict[tuple[str, float], np.ndarray]
    corners: dict[str, tuple[np.ndarray, np.ndarray]]


def _linearised(system: System, problem: Problem, x: np.ndarray, factors: np.ndarray):
    """G, C (s, n, n) at the operating points, and C's factors: incidence A and values d."""
    g, c = system.matrices(factors)
    g = np.broadcast_to(g, (x.shape[0], *g.shape[1:]))
    cap_a, cap_d = system.cap_columns(factors)
    cap_d = np.broadcast_to(cap_d, (x.shape[0], cap_d.shape[1]))
    if problem.devices.banks:
        v = problem.devices.junctions(extend(x))
        _, dev_g = problem.devices.linearise(v, v)
        dev_d = problem.devices.cap_values(v)
        g, c = g + dev_g, c + problem.devices.capacitance(v)
        cap_a = np.concatenate([cap_a, incidence(system.layout.size,
                                                 problem.devices.cap_pairs())], axis=1)
        cap_d = np.concatenate([cap_d, dev_d], axis=1)
    return g, c, cap_a, cap_d


def direct(g: np.ndarray, c: np.ndarray, rhs: np.ndarray, freqs: np.ndarray) -> np.ndarray:
    """Solutions (samples, frequencies, n) by one batched solve."""
    s = 2j * np.pi * freqs
    a = g[:, None] + s[None, :, None, None] * c[:, None]
    b = np.broadcast_to(rhs.astype(complex), a.shape[:-1])
    return solve_batch(a, b)


def mc_response(system: System, problem: Problem, x: np.ndarray, factors: np.ndarray,
                source: str, freqs: np.ndarray, outputs: list[str],
                band: tuple[float, float], ref_hz: float | None) -> McResponse:
    if source not in system.stamper.source_cols:
        raise SolveError(f"{source!r} is not a source of the circuit")
    g, c, cap_a, cap_d = _linearised(system, problem, x, factors)
    rhs = system.rhs(only=source)[0]
    rows = [system.layout.row(n) for n in outputs]
    check = direct(g, c, rhs, freqs[:1])[:, 0, rows]  # the pole-residue form is checked here
    decades = np.log10(band[1] / band[0])
    grid = np.geomspace(band[0], band[1], int(GRID_PER_DECADE * decades) + 1)
    gain, corners = {}, {}
    models = pole_residue(g, cap_a, cap_d, rhs, rows)
    for k, (node, model) in enumerate(zip(outputs, models, strict=True)):
        bad = ~np.isclose(model(freqs[:1])[:, 0], check[:, k], rtol=AGREEMENT, atol=0)
        response = _Exact(model, g, c, rhs, rows[k], bad)
        with np.errstate(divide="ignore"):
            db = 20 * np.log10(np.abs(response(freqs)))
        gain.update({(node, float(f)): db[:, i] for i, f in enumerate(freqs)})
        corners[node] = _corners(response, grid, ref_hz)
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


def _corners(response, grid: np.ndarray, ref_hz: float | None):
    mags = np.abs(response(grid))
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
