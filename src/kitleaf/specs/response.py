"""Reading a batch of frequency responses: gain in dB, band gain and -3 dB corners per sample.

Every function works on all samples of a :class:`~kitleaf.specs.sampled.Batch` at once; a gain
is the ratio of two node voltages (a stage's output over its input), so it does not depend on
what drives the input.
"""

from __future__ import annotations

import numpy as np

from kitleaf.engine.blocks import BlockResponse
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
FALSE_POSITION_STEPS = 8  # solves per crossing at most: far below the shown three figures
# A crossing within this of the target in log magnitude is taken (a relative error of 1e-10
# in the gain, far below rounding of a shown figure and of the response itself).
SETTLED = 1e-10


def to_db(h: np.ndarray) -> np.ndarray:
    return 20.0 * np.log10(np.maximum(np.abs(h), 1e-300))


class Sweep:
    """One batch's complex node voltages per volt of the signal source, at any frequency.

    Evaluated in pole-residue form (:class:`~kitleaf.specs.sampled.Modal`), checked sample by
    sample against a direct solve at 1 kHz; a sample that disagrees is solved directly.
    """

    def __init__(self, batch: Batch, source: str, direct: np.ndarray | None = None,
                 joints: tuple[str, ...] = (), pairs: tuple[tuple[str, str], ...] = ()
                 ) -> None:
        """``direct``: the batch's direct solution at 1 kHz, if the caller already has it;
        ``joints``: the nodes where the kit's stages meet (a large kit is solved stage by
        stage, joined there); ``pairs``: the (input, output) nodes whose corners are found
        together when any one's are asked for (each search step then solves once for all)."""
        self.batch, self.pairs = batch, tuple(pairs)
        self.found: dict[tuple[str, str], tuple[np.ndarray, np.ndarray]] = {}
        self.rhs = batch.excitation(source)
        self.modal = batch.modal(self.rhs, joints)
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

    def corners(self, node_in: str, node_out: str) -> tuple[np.ndarray, np.ndarray]:
        """The low and high corners of ``node_out`` over ``node_in`` (see :func:`corners`),
        found with every pair of :attr:`pairs` not found yet."""
        pair = (node_in, node_out)
        if pair not in self.found:
            wanted = [pair] + [p for p in dict.fromkeys(self.pairs)
                               if p not in self.found and p != pair]
            self.found.update(zip(wanted, corners(self, wanted), strict=True))
        return self.found[pair]

    def confirm(self, freqs: np.ndarray, nodes: list[str], values: np.ndarray) -> np.ndarray:
        """The samples whose ``values`` (samples, F, len(nodes)) at per-sample ``freqs``
        disagree with a direct solve, now answered directly from here on; none for a form
        checked over the whole band already (a large kit's, block by block)."""
        if isinstance(self.modal.form, BlockResponse):
            return np.zeros(0, int)
        f = np.where(np.isfinite(freqs), freqs, REFERENCE_HZ)
        rows = [self.batch.row(n) for n in nodes]
        direct = self.batch.solve(f, self.rhs)[:, :, rows]
        scale = np.max(np.abs(direct), axis=2, keepdims=True)
        error = np.max(np.abs(values - direct) / scale, axis=(1, 2))
        wrong = np.setdiff1d(np.flatnonzero(~(error <= AGREEMENT)), self.bad)
        if wrong.size:
            self.bad = np.union1d(self.bad, wrong)
            self.grid.clear()
        return wrong

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


def corners(sweep: Sweep, pairs: list[tuple[str, str]]
            ) -> list[tuple[np.ndarray, np.ndarray]]:
    """Per pair (input, output node) and sample, the low and high -3.01 dB frequencies
    walking away from the band peak.

    The peak is the highest gain on the plotted band; the walk goes on over :data:`SEARCH`,
    which brackets each crossing, and regula falsi in log f on the exact response (solved
    afresh at each trial frequency, every pair and side at once) pins it down; NaN where the
    response stays within 3 dB down to :data:`SEARCH_LOW_HZ` or up to :data:`SEARCH_HIGH_HZ`.
    The corners found are checked by a direct solve there (a pole-residue form is checked at
    1 kHz alone, and a pole far above it can be wrong): a sample that disagrees is searched
    again on direct solves.
    """
    nodes = list(dict.fromkeys(n for pair in pairs for n in pair))
    ins, outs = ([nodes.index(pair[k]) for pair in pairs] * 2 for k in (0, 1))

    def response(freqs: np.ndarray) -> np.ndarray:
        x = sweep.at(freqs, nodes)
        return x[:, np.arange(freqs.shape[1]), outs] / x[:, np.arange(freqs.shape[1]), ins]

    found = _search(sweep, pairs, nodes, response)
    at = np.where(np.isfinite(found), found, REFERENCE_HZ)
    if sweep.confirm(at, nodes, sweep.at(at, nodes)).size:
        found = _search(sweep, pairs, nodes, response)
    return [(found[:, k], found[:, len(pairs) + k]) for k in range(len(pairs))]


def _search(sweep: Sweep, pairs, nodes: list[str], response) -> np.ndarray:
    """Every pair's low corners, then its high ones (samples, 2 pairs)."""
    wide = sweep.at(SEARCH, nodes)
    ins, outs = ([nodes.index(pair[k]) for pair in pairs] for k in (0, 1))
    mags = np.abs(wide[:, :, outs] / wide[:, :, ins]).transpose(0, 2, 1)  # (s, pairs, F)
    peaks = [band_peak(sweep.ratio(*pair)) for pair in pairs]
    target = np.stack([10.0 ** (db / 20.0) / np.sqrt(2.0) for db, _ in peaks], axis=1)
    start = np.stack([f for _, f in peaks], axis=1)
    upward = np.repeat([False, True], len(pairs))
    return _crossings(response, np.concatenate([mags, mags], axis=1),
                      np.tile(target, 2), np.tile(start, 2), upward)


def _crossings(response, mags: np.ndarray, target: np.ndarray, start: np.ndarray,
               upward: np.ndarray) -> np.ndarray:
    """Per sample and column (samples, C), the first step of :data:`SEARCH` from ``start``
    (below it, or above where ``upward``) where |response| (``mags``, (samples, C, F) on
    the grid) drops below ``target``, then the crossing inside it in log f; NaN when there
    is none. ``response`` answers per-sample frequencies (samples, C), column by column.

    The crossing is found by regula falsi with the Illinois step (Dahlquist and Björck,
    Numerical Methods, 6.2.3): on a smooth response it gains several digits per solve, where
    bisection gains one bit, and every step keeps the crossing bracketed. It stops when every
    crossing is within :data:`SETTLED` in log magnitude (a few solves from the grid's 6 %
    steps), at most :data:`FALSE_POSITION_STEPS` solves."""
    found, inner_i, outer_i = _bracket(mags, target, start, upward)
    log_target = np.log(target)
    inner, outer = np.log(SEARCH[inner_i]), np.log(SEARCH[outer_i])
    at = np.log(np.maximum(mags, 1e-300))
    g_in = np.take_along_axis(at, inner_i[..., None], 2)[..., 0] - log_target  # >= 0: above
    g_out = np.take_along_axis(at, outer_i[..., None], 2)[..., 0] - log_target  # < 0: below
    replaced_outer = None  # which end the last step moved
    for _ in range(FALSE_POSITION_STEPS):
        if np.all(~found | (np.minimum(np.abs(g_in), np.abs(g_out)) < SETTLED)):
            break
        # a column without a crossing is solved at its bracket's middle (its ends' values
        # there are not a bracket: they could put the step anywhere, past any frequency)
        span = np.where(found, g_in - g_out, 0.0)
        x = np.where(span > 0, (inner * -g_out + outer * g_in) / np.where(span > 0, span, 1.0),
                     (inner + outer) / 2.0)
        g = np.log(np.maximum(np.abs(response(np.exp(x))), 1e-300)) - log_target
        low = g < 0
        # Illinois: when a step moves the same end as the last one, halve the kept end's
        # value, so a one-sided approach still closes in.
        again = np.zeros_like(low) if replaced_outer is None else low == replaced_outer
        g_in = np.where(low, np.where(again, g_in / 2.0, g_in), g)
        g_out = np.where(low, g, np.where(again, g_out / 2.0, g_out))
        inner, outer = np.where(low, inner, x), np.where(low, x, outer)
        replaced_outer = low
    best = np.where(np.abs(g_in) < np.abs(g_out), inner, outer)
    return np.where(found, np.exp(best), np.nan)


def _bracket(mags: np.ndarray, target: np.ndarray, start: np.ndarray, upward: np.ndarray):
    """(found, inner index, outer index), each (samples, C): the first step of
    :data:`SEARCH` from ``start`` on each column's side where |response| drops below
    ``target``."""
    grid = SEARCH[None, None, :]
    side = np.where(upward[None, :, None], grid > start[..., None], grid < start[..., None])
    below = (mags < target[..., None]) & side
    last = SEARCH.size - 1
    first_up, first_down = np.argmax(below, axis=2), last - np.argmax(below[..., ::-1], axis=2)
    outer_i = np.where(upward, first_up, first_down)
    found = np.take_along_axis(below, outer_i[..., None], 2)[..., 0]
    inner_i = np.clip(np.where(upward, outer_i - 1, outer_i + 1), 0, last)
    return found, inner_i, outer_i
