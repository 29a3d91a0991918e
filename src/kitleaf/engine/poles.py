"""Pole-residue form of batched small-signal responses, for cheap evaluation at any frequency.

With the capacitances written C = A diag(d) A^T, the response needs only an eigendecomposition
of an m x m matrix (m capacitances), after which any frequency costs a few multiplications,
for every sample at once.
"""

from __future__ import annotations

import numpy as np

from kitleaf.engine.batch_lu import solve_many


def evaluate(alpha: np.ndarray, residues: np.ndarray, lambdas: np.ndarray,
             freqs: np.ndarray, magnitude: bool = False,
             prepared: tuple[np.ndarray, np.ndarray] | None = None) -> np.ndarray:
    """alpha + s * sum_k residues[..., k] / (1 + s lambdas[k]) with s = j 2 pi f, or its
    magnitude (real, without the complex array in between).

    alpha (samples, rows), residues (samples, rows, m), lambdas (samples, m); frequencies
    (f,) or per sample (samples, f); returns (samples, f, rows). Worked through in blocks of
    samples small enough to stay in cache. ``prepared``: real_terms of the same residues and
    poles, when the caller evaluates them repeatedly.
    """
    f = np.asarray(freqs, dtype=float)
    f = f[None, :] if f.ndim == 1 else f
    samples, width = alpha.shape[0], f.shape[1] * max(lambdas.shape[1], 1)
    out = np.empty((samples, f.shape[1], alpha.shape[1]), float if magnitude else complex)
    real = not (np.iscomplexobj(lambdas) or np.iscomplexobj(residues))
    kernel, terms = (_evaluate_real, CHUNK_REAL) if real else (_evaluate, CHUNK)
    if real:
        weights, poles = real_terms(residues, lambdas) if prepared is None else prepared
    else:
        weights, poles = residues.transpose(0, 2, 1), lambdas
    step = max(1, terms // width)
    # one scratch block for every pass: a fresh half-megabyte array per block costs page faults
    scratch = np.empty(min(step, samples) * width, complex if not real else float)
    for start in range(0, samples, step):
        block = slice(start, start + step)
        kernel(out[block], alpha[block], weights[block], poles[block],
               f if f.shape[0] == 1 else f[block], scratch, magnitude)
    return out


# A pole s = -1 / lambda grows (the circuit oscillates, or runs to a rail) when its real part
# exceeds this share of its magnitude: a mode that needs a million radians to grow by e is
# rounding on the imaginary axis, not a circuit.
GROWTH = 1e-6
# Poles above this frequency are left out: the models have no lead inductance or package
# parasitics, so they say nothing there, and a time constant that is zero but for rounding (a
# capacitor whose both ends a source holds) gives a pole near 1e15 Hz on either side of the axis.
CEILING_HZ = 1e9


def growing(lambdas: np.ndarray) -> np.ndarray:
    """Which modes 1 / (1 + s lambda) grow instead of decaying, (samples, m): poles
    s = -1 / lambda in the right half plane (Re s > GROWTH |s|) below CEILING_HZ."""
    with np.errstate(divide="ignore", invalid="ignore"):
        poles = -1.0 / np.asarray(lambdas)
        size = np.abs(poles)
        return (np.isfinite(size) & (poles.real > GROWTH * size)
                & (size < 2.0 * np.pi * CEILING_HZ))


CHUNK = 1 << 16  # complex terms per block
CHUNK_REAL = 1 << 16  # real terms per block


def _evaluate(out, alpha, residues_t, lambdas, f, scratch, magnitude: bool) -> None:
    s = 2j * np.pi * f  # (samples or 1, f)
    inverse = scratch[:lambdas.shape[0] * s.shape[-1] * lambdas.shape[1]].reshape(
        lambdas.shape[0], s.shape[-1], lambdas.shape[1])  # becomes 1 / (1 + s lambda)
    np.multiply(s[..., None], lambdas[:, None, :], out=inverse)
    inverse += 1.0
    np.reciprocal(inverse, out=inverse)
    value = alpha[:, None, :] + s[..., None] * np.matmul(inverse, residues_t)
    out[:] = np.abs(value) if magnitude else value


# A pole whose time constant is below this is taken at it: its term differs from the exact one
# by about 2 pi f x 1e-100 relative, far below rounding, and 1 / l^2 stays finite.
SHORTEST = 1e-100


def real_terms(residues: np.ndarray, lambdas: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """For _evaluate_real: weights (samples, 2 rows, m), r / l then r / l^2, and each pole's
    1 / l^2 (samples, m). Real residues and poles only."""
    clamped = np.where(np.abs(lambdas) < SHORTEST, np.where(lambdas < 0, -SHORTEST, SHORTEST),
                       lambdas)
    inverse = 1.0 / clamped
    inverse_squares = np.square(inverse)
    return (np.concatenate([residues * inverse[:, None, :],
                            residues * inverse_squares[:, None, :]], axis=1), inverse_squares)


def _evaluate_real(out, alpha, weights, inverse_squares, f, scratch, magnitude: bool) -> None:
    """Real poles and residues: s r / (1 + s l) = (w^2 r / l + j w r / l^2) / (1 / l^2 + w^2),
    so one real sum and one reciprocal per term (two passes over the terms) and one real
    product for both parts. ``inverse_squares`` are the poles' 1 / l^2. Laid out
    (samples, m, f) so the long frequency axis is the inner one."""
    w = 2 * np.pi * f  # (samples or 1, f)
    q = scratch[:inverse_squares.size * w.shape[-1]].reshape(*inverse_squares.shape,
                                                             w.shape[-1])
    if w.shape[0] == 1:
        # the sums as one product [1 / l^2, 1] [1, w^2]^T: the factors of one are exact, so
        # it rounds as the sum does, at about a third of a broadcast sum's cost
        pairs = np.ones((*inverse_squares.shape, 2))
        pairs[..., 0] = inverse_squares
        np.matmul(pairs.reshape(-1, 2), np.concatenate([np.ones_like(w), w * w]),
                  out=q.reshape(-1, w.shape[-1]))
    else:
        np.copyto(q, (w * w)[:, None, :])  # copy, then add in place: quicker than broadcast
        q += inverse_squares[:, :, None]
    np.reciprocal(q, out=q)
    parts = np.matmul(weights, q)  # (samples, 2 rows, f)
    rows = alpha.shape[1]
    real = alpha.real[:, None, :] + ((w * w)[:, None, :] * parts[:, :rows]).transpose(0, 2, 1)
    imag = alpha.imag[:, None, :] + (w[:, None, :] * parts[:, rows:]).transpose(0, 2, 1)
    if magnitude:  # not np.hypot: its care for overflow costs more than the rest together
        np.multiply(real, real, out=out)
        out += np.square(imag, out=imag)
        np.sqrt(out, out=out)
    else:
        out.real, out.imag = real, imag


def decompose(g: np.ndarray, cap_a: np.ndarray, cap_d: np.ndarray, rhs: np.ndarray,
              rows: list[int] | None = None) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(alpha, residues, lambdas) of (G + s A diag(d) A^T) x = b for ``rows`` (default all),
    batched over samples.

    By the Woodbury identity x = x0 - s W (I + s D M)^-1 D A^T x0, with x0 = G^-1 b,
    W = G^-1 A and M = A^T W: only the m x m matrix D M (m capacitances) is diagonalised.
    """
    used = np.any(cap_d != 0, axis=0)
    a, d = cap_a[:, used], cap_d[:, used]
    samples = g.shape[0]
    b = np.broadcast_to(rhs[None, :, None], (samples, rhs.size, 1))
    solved = solve_many(g, np.concatenate([b, np.broadcast_to(a, (samples, *a.shape))], 2))
    x0, w = solved[:, :, 0], solved[:, :, 1:]
    dm = d[:, :, None] * np.einsum("nm,snk->smk", a, w)
    lambdas, vecs = np.linalg.eig(dm)
    weights = np.linalg.solve(vecs, (d * (x0 @ a))[..., None].astype(complex))[..., 0]
    rows = slice(None) if rows is None else rows
    residues = -np.einsum("srm,smk->srk", w[:, rows, :], vecs) * weights[:, None, :]
    return x0[:, rows].astype(complex), residues, lambdas


def half_power_crossings(response, ref: np.ndarray, grid: np.ndarray, mags: np.ndarray,
                         start: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Per sample, the first frequencies below and above ``start`` along ``grid`` where
    |response| falls below ref / sqrt(2) (``mags`` is |response| on the grid), refined by
    the Illinois variant of regula falsi in log f, both sides at once; NaN where there is
    none. ``response.magnitude`` takes per-sample frequencies (samples, 2)."""
    target = ref / np.sqrt(2.0)
    sides = [_bracket(ref, target, grid, mags, start, upward) for upward in (False, True)]
    found, a, b, fa, fb = (np.stack(parts, axis=1) for parts in zip(*sides, strict=True))
    roots = np.where(found, np.exp(_illinois(response, target[:, None], a, b, fa, fb, found)),
                     np.nan)
    return roots[:, 0], roots[:, 1]


def _bracket(ref, target, grid, mags, start, upward: bool):
    """(found, a, b, f(a), f(b)): the grid interval in log f holding the first crossing."""
    side = grid[None, :] > start[:, None] if upward else grid[None, :] < start[:, None]
    below = (mags < target[:, None]) & side
    walk = below if upward else below[:, ::-1]
    first = np.argmax(walk, axis=1)
    rows = np.arange(first.size)
    found = walk[rows, first]
    idx = first if upward else grid.size - 1 - first
    nb = np.clip(idx - 1 if upward else idx + 1, 0, grid.size - 1)
    inside = grid[nb] > start if upward else grid[nb] < start
    a = np.log(np.where(inside, grid[nb], start))
    b = np.log(grid[idx])
    fa = np.where(inside, mags[rows, nb], ref) / target - 1.0
    fb = mags[rows, idx] / target - 1.0
    return found, a, b, fa, fb


def _illinois(response, target, a, b, fa, fb, found, iterations: int = 40) -> np.ndarray:
    """Vectorised Illinois root-finding of |response(e^x)| / target - 1 on brackets [a, b],
    each (samples, k); the entries without a bracket (not ``found``) are not waited for."""
    for _ in range(iterations):
        with np.errstate(invalid="ignore", divide="ignore"):
            c = np.where(fb != fa, (a * fb - b * fa) / (fb - fa), (a + b) / 2.0)
        c = np.where(np.isfinite(c), c, (a + b) / 2.0)
        fc = response.magnitude(np.exp(c)) / target - 1.0
        flip = fc * fb < 0
        a, fa = np.where(flip, b, a), np.where(flip, fb, fa / 2.0)
        b, fb = c, fc
        if np.all((np.abs(fb) < 1e-12) | (np.abs(b - a) < 1e-12) | ~found):
            break
    return b
