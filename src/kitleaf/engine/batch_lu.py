"""Sparse LU vectorised across a batch of equally-structured matrices (Monte Carlo samples).

LAPACK's batched solve pays a fixed cost per small matrix (about a microsecond); circuit
matrices are sparse and share one structure across samples, so here the elimination runs
once over the structure, each step a numpy operation on all samples at once, laid out with
the samples last so each entry of every sample is one contiguous run. Pivots follow partial
pivoting on the first sample; every sample is checked (by its residual, or by the size of
its multipliers) and any sample the shared pivot order does not suit is solved again by
LAPACK, so the answer is as exact as a dense solve. A plan (row order and fill-in) is kept
per structure, so Newton's repeated solves of one Jacobian shape plan once.
"""

from __future__ import annotations

import warnings

import numpy as np
import scipy.linalg

MIN_BATCH = 32  # below this LAPACK's per-matrix cost does not matter
MIN_SIZE = 14  # below this LAPACK's small dense solves are as quick ...
MIN_RHS = 8  # ... unless there are this many right-hand sides (an elimination's columns)
PLANS_KEPT = 64  # plans cached (keyed by row order and structure), forgotten when full
RESIDUAL = 1e-11  # relative residual above which a sample is re-solved densely
# The largest multiplier a sample may meet under the shared pivots: threshold pivoting with
# the usual u = 0.1 (sparse direct solvers' choice), whose growth stays that of partial
# pivoting in practice; a sample beyond it (or with a zero pivot) is re-solved densely.
GROWTH = 10.0


class Plan:
    """Row order (partial pivoting on one sample) and, per pivot k, the rows below it and the
    columns right of it that are structurally non-zero after fill-in (a slice when they run
    on, which numpy indexes without a copy)."""

    def __init__(self, order: np.ndarray, pattern: np.ndarray) -> None:
        pattern = pattern[order]
        self.order, self.below, self.right = order, [], []
        for k in range(pattern.shape[0]):
            below = k + 1 + np.flatnonzero(pattern[k + 1:, k])
            right = k + 1 + np.flatnonzero(pattern[k, k + 1:])
            pattern[np.ix_(below, right)] = True
            self.below.append(below.tolist())
            self.right.append(_as_slice(right))


def _pivot_order(a: np.ndarray) -> np.ndarray:
    """Row order of partial pivoting on one matrix (a singular one too: the samples its
    order does not suit are solved by LAPACK, which reports the singular ones)."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", scipy.linalg.LinAlgWarning)
        _, piv = scipy.linalg.lu_factor(a, check_finite=False)
    order = np.arange(a.shape[0])
    for k, p in enumerate(piv):
        order[[k, p]] = order[[p, k]]
    return order


def _as_slice(idx: np.ndarray) -> slice | np.ndarray:
    if idx.size and idx[-1] - idx[0] + 1 == idx.size:
        return slice(int(idx[0]), int(idx[-1]) + 1)
    return idx


def _eliminate(a: np.ndarray, b: np.ndarray, plan: Plan) -> tuple[np.ndarray, np.ndarray]:
    """Solve with the planned pivots on the (rows, columns, samples) layout, a row of every
    sample at a time; also returns each sample's largest multiplier."""
    m = np.ascontiguousarray(a[:, plan.order].transpose(1, 2, 0))
    y = np.ascontiguousarray(b[:, plan.order].transpose(1, 2, 0))
    worst = np.zeros(a.shape[0])
    for k, (below, right) in enumerate(zip(plan.below, plan.right, strict=True)):
        if below:
            inverse = 1.0 / m[k, k]
        for i in below:
            factor = m[i, k] * inverse
            np.maximum(worst, np.abs(factor), out=worst)
            m[i, right] -= factor * m[k, right]
            y[i] -= factor * y[k]
    for k in range(m.shape[0] - 1, -1, -1):
        right = plan.right[k]
        if isinstance(right, slice) or right.size:
            y[k] -= np.einsum("js,jrs->rs", m[k, right], y[right])
        y[k] /= m[k, k]
    return np.ascontiguousarray(y.transpose(2, 0, 1)), worst


_PLANS: dict[tuple[bytes, bytes], Plan] = {}


def _plan(a: np.ndarray) -> Plan:
    """The plan of ``a``'s structure under sample 0's pivots, from the cache when the same
    row order and the same non-zero pattern (over every sample) were planned before."""
    order = _pivot_order(a[0])
    pattern = np.any(a != 0, axis=0)
    key = (order.tobytes(), pattern.tobytes())
    if key not in _PLANS:
        if len(_PLANS) >= PLANS_KEPT:
            _PLANS.clear()
        _PLANS[key] = Plan(order, pattern)
    return _PLANS[key]


def block(a: np.ndarray, rows: np.ndarray, cols: np.ndarray) -> np.ndarray:
    """a[:, rows][:, :, cols] of a batch in one gather (about 3x quicker than two)."""
    return a[:, np.asarray(rows)[:, None], cols]


def _residual_bad(a: np.ndarray, b: np.ndarray, x: np.ndarray, worst: np.ndarray) -> np.ndarray:
    residual = np.abs(a @ x - b).max(axis=(1, 2))
    scale = (np.abs(a) @ np.abs(x) + np.abs(b)).max(axis=(1, 2))
    return ~(residual <= RESIDUAL * scale)


def _growth_bad(a: np.ndarray, b: np.ndarray, x: np.ndarray, worst: np.ndarray) -> np.ndarray:
    return ~((worst <= GROWTH) & np.isfinite(x).all(axis=(1, 2)))


# How a sample unsuited to the shared pivots is found: by its residual (exact, but two
# batched products cost about what the elimination does), or by its multipliers (free; for
# many right-hand sides, where the products would cost several eliminations).
CHECKS = {"residual": _residual_bad, "growth": _growth_bad}


def solve_many(a: np.ndarray, b: np.ndarray, check: str = "residual") -> np.ndarray:
    """Solutions of a[s] x[s] = b[s] for a batch (samples, n, n) and b (samples, n, rhs)."""
    small = a.shape[-1] < MIN_SIZE and b.shape[-1] < MIN_RHS
    if b.shape[0] < MIN_BATCH or small or np.iscomplexobj(a):
        return np.linalg.solve(a, b)
    a_full = np.broadcast_to(a, (b.shape[0], *a.shape[1:])) if a.shape[0] == 1 else a
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        x, worst = _eliminate(a_full, b, _plan(a_full))
        bad = CHECKS[check](a_full, b, x, worst)
    if bad.any():
        x[bad] = np.linalg.solve(a_full[bad], b[bad])
    return x
