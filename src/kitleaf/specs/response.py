"""Reading a batch of frequency responses: gain in dB, band gain and -3 dB corners per sample.

Every function works on all samples of a :class:`~kitleaf.specs.sampled.Batch` at once; a gain
is the ratio of two node voltages (a stage's output over its input), so it does not depend on
what drives the input.
"""

from __future__ import annotations

import numpy as np

from kitleaf.specs.sampled import Batch

REFERENCE_HZ = 1000.0
# The plotted band: 10 Hz to 40 kHz, log-spaced, with 1 kHz itself on the grid.
FREQS = np.unique(np.append(np.geomspace(10.0, 40e3, 160), REFERENCE_HZ))
# The corner search reaches far beyond the plotted band, so a corner is reported wherever it
# lies; the plotted grid is kept inside it, so the band gain and its frequency stay the same.
SEARCH_LOW_HZ, SEARCH_HIGH_HZ = 0.1, 10e6
SEARCH = np.unique(np.concatenate((np.geomspace(SEARCH_LOW_HZ, FREQS[0], 81), FREQS,
                                   np.geomspace(FREQS[-1], SEARCH_HIGH_HZ, 97))))
AGREEMENT = 1e-6  # pole-residue against direct solve, relative to the largest node voltage
FALSE_POSITION_STEPS = 8  # solves per crossing: far below the shown three figures


def to_db(h: np.ndarray) -> np.ndarray:
    return 20.0 * np.log10(np.maximum(np.abs(h), 1e-300))


class Sweep:
    """One batch's complex node voltages per volt of the signal source, at any frequency.

    Evaluated in pole-residue form (:class:`~kitleaf.specs.sampled.Modal`), checked sample by
    sample against a direct solve at 1 kHz; a sample that disagrees is solved directly.
    """

    def __init__(self, batch: Batch, source: str, direct: np.ndarray | None = None) -> None:
        """``direct``: the batch's direct solution at 1 kHz, if the caller already has it."""
        self.batch = batch
        self.rhs = batch.excitation(source)
        self.modal = batch.modal(self.rhs)
        if direct is None:
            direct = batch.solve(np.array([REFERENCE_HZ]), self.rhs)[:, 0]
        nodes = len(batch.system.layout.nodes)  # the first unknowns; branches are not read
        modal = self.modal.every_node(np.array([REFERENCE_HZ]))[:, 0]
        scale = np.max(np.abs(direct), axis=1, keepdims=True)
        error = np.abs(modal - direct[:, :nodes]) / scale
        self.bad = np.flatnonzero(np.max(error, axis=1) > AGREEMENT)
        self.grid: dict[str, np.ndarray] = {}

    def at(self, freqs: np.ndarray, nodes: list[str]) -> np.ndarray:
        """Node voltages (samples, F, len(nodes)); ``freqs`` is (F,) or (samples, F)."""
        rows = [self.batch.row(n) for n in nodes]
        if None in rows:
            raise ValueError("ground has no response to read")
        out = self.modal(freqs, rows)
        if self.bad.size:
            f = np.broadcast_to(np.asarray(freqs, float), out.shape[:2])[self.bad]
            out[self.bad] = self.batch.subset(self.bad).solve(f, self.rhs)[:, :, rows]
        return out

    def node(self, name: str) -> np.ndarray:
        """The node's voltage over :data:`FREQS`, (samples, frequencies)."""
        if name not in self.grid:
            self.grid[name] = self.at(FREQS, [name])[:, :, 0]
        return self.grid[name]

    def ratio(self, node_in: str, node_out: str) -> np.ndarray:
        """``node_out`` over ``node_in``, (samples, frequencies)."""
        return self.node(node_out) / self.node(node_in)


def band_peak(h: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Per sample, the highest gain on the grid (dB) and the frequency where it lies."""
    db = to_db(h)
    peak = np.argmax(db, axis=1)
    return db[np.arange(db.shape[0]), peak], FREQS[peak]


def deepest_dip(h: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Per sample, the deepest dip of the gain over :data:`FREQS` (dB below the lower of the
    highest gains on either side of it; 0 where the gain never dips) and its frequency.

    The lowest grid point is refined by the parabola through it and its neighbours in log f,
    so the figure does not snap to the grid (its steps are about 5 %)."""
    db = to_db(h)
    left = np.maximum.accumulate(db, axis=1)
    right = np.maximum.accumulate(db[:, ::-1], axis=1)[:, ::-1]
    depth = np.minimum(left, right) - db
    rows, i = np.arange(db.shape[0]), np.argmax(depth, axis=1)
    inner = np.clip(i, 1, FREQS.size - 2)
    x = np.log(FREQS)
    shift, drop = _vertex(x[inner - 1] - x[inner], x[inner + 1] - x[inner],
                          db[rows, inner - 1] - db[rows, inner],
                          db[rows, inner + 1] - db[rows, inner])
    interior = (i == inner) & (depth[rows, i] > 0)
    return (depth[rows, i] - np.where(interior, drop, 0.0),
            FREQS[i] * np.exp(np.where(interior, shift, 0.0)))


def _vertex(u0, u2, v0, v2) -> tuple[np.ndarray, np.ndarray]:
    """The lowest point of v = a u^2 + b u through (u0, v0), (0, 0) and (u2, v2), kept between
    u0 and u2: its u and its v (0 and 0 where the three points bend the other way)."""
    a = (v0 / u0 - v2 / u2) / (u0 - u2)
    b = v0 / u0 - a * u0
    bends_up = a > 0
    a_safe = np.where(bends_up, a, 1.0)
    u = np.where(bends_up, np.clip(-b / (2 * a_safe), u0, u2), 0.0)
    return u, np.where(bends_up, a * u * u + b * u, 0.0)


def corners(sweep: Sweep, node_in: str, node_out: str) -> tuple[np.ndarray, np.ndarray]:
    """Per sample, the low and high -3.01 dB frequencies walking away from the band peak.

    The peak is the highest gain on the plotted band; the walk goes on over :data:`SEARCH`,
    which brackets each crossing, and regula falsi in log f on the exact response (solved
    afresh at each trial frequency) pins it down; NaN where the response stays within 3 dB
    down to :data:`SEARCH_LOW_HZ` or up to :data:`SEARCH_HIGH_HZ`.
    """
    def response(freqs: np.ndarray) -> np.ndarray:
        x = sweep.at(freqs, [node_in, node_out])
        return x[:, :, 1] / x[:, :, 0]

    wide = response(SEARCH)
    peak_db, start = band_peak(sweep.ratio(node_in, node_out))
    target = 10.0 ** (peak_db / 20.0) / np.sqrt(2.0)
    mags = np.abs(wide)
    return (_crossing(response, mags, target, start, upward=False),
            _crossing(response, mags, target, start, upward=True))


def _crossing(response, mags: np.ndarray, target: np.ndarray, start: np.ndarray,
              upward: bool) -> np.ndarray:
    """Per sample, the first step of :data:`SEARCH` from ``start`` where |response| drops
    below ``target``, then the crossing inside it in log f; NaN when there is none.

    The crossing is found by regula falsi with the Illinois step (Dahlquist and Björck,
    Numerical Methods, 6.2.3): on a smooth response it gains several digits per solve, where
    bisection gains one bit, and every step keeps the crossing bracketed."""
    side = SEARCH[None, :] > start[:, None] if upward else SEARCH[None, :] < start[:, None]
    below = (mags < target[:, None]) & side
    walk = below if upward else below[:, ::-1]
    first = np.argmax(walk, axis=1)
    found = walk[np.arange(first.size), first]
    outer_i = first if upward else SEARCH.size - 1 - first
    inner_i = np.clip(outer_i - 1 if upward else outer_i + 1, 0, SEARCH.size - 1)
    rows = np.arange(first.size)
    log_target = np.log(target)
    inner, outer = np.log(SEARCH[inner_i]), np.log(SEARCH[outer_i])
    g_in = np.log(np.maximum(mags[rows, inner_i], 1e-300)) - log_target  # >= 0: above
    g_out = np.log(np.maximum(mags[rows, outer_i], 1e-300)) - log_target  # < 0: below
    for _ in range(FALSE_POSITION_STEPS):
        span = g_in - g_out
        x = np.where(span > 0, (inner * -g_out + outer * g_in) / np.where(span > 0, span, 1.0),
                     (inner + outer) / 2.0)
        g = np.log(np.maximum(np.abs(response(np.exp(x)[:, None]))[:, 0], 1e-300)) - log_target
        low = g < 0
        # Illinois: halve the kept end's value so a one-sided approach still closes in.
        g_in = np.where(low, g_in / 2.0, g)
        g_out = np.where(low, g, g_out / 2.0)
        inner, outer = np.where(low, inner, x), np.where(low, x, outer)
    best = np.where(np.abs(g_in) < np.abs(g_out), inner, outer)
    return np.where(found, np.exp(best), np.nan)
