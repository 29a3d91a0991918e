"""Batched eigendecompositions of nearby matrices, refined from one reference decomposition.

Monte Carlo diagonalises one small matrix per sample, and the samples differ only by their
tolerances, so most of them share the reference sample's eigenvectors closely. Starting from
the reference's eigenvectors V and their inverse W, each sweep (all samples at once, a few
small matrix products) is a Newton step on the eigenpairs:

    T = W A V,  lambda = diag(T),  P_jk = T_jk / (lambda_k - lambda_j),  V <- V (I + P),

with W kept the inverse of V by a Newton-Schulz step. It converges quadratically while the
eigenvalues stay apart; a sample that has not settled after MAX_SWEEPS (complex or nearly
equal eigenvalues, a spread that moved it too far) is diagonalised by LAPACK instead.
"""

from __future__ import annotations

import numpy as np

MAX_SWEEPS = 8
MIN_SWEEPS = 4  # after these, sweeping stops once no further sample settles
BACKWARD = 3e-12  # off-diagonal of W A V over the largest eigenvalue (LAPACK's own: ~5e-12)
DRIFT = 1e-7  # largest entry of V W - I (LAPACK's inverse of the same V: ~1e-9)
MIN_BATCH = 64  # below this LAPACK alone is as quick


def eig_batch(a: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Eigenvalues (s, m), right eigenvectors (s, m, m) and their inverses of a batch."""
    if a.shape[0] < MIN_BATCH or a.shape[-1] < 2:
        return _lapack(a)
    ref_values, ref_vecs = np.linalg.eig(a[_central(a)])
    if np.iscomplexobj(ref_values):  # the refinement works in real arithmetic
        return _lapack(a)
    values, vecs, inv, ok = _refine(a, ref_vecs, np.linalg.inv(ref_vecs))
    if not ok.all():
        bad = np.flatnonzero(~ok)
        bad_values, bad_vecs, bad_inv = _lapack(a[bad])
        if np.iscomplexobj(bad_values):
            values, vecs, inv = (x.astype(complex) for x in (values, vecs, inv))
        values[bad], vecs[bad], inv[bad] = bad_values, bad_vecs, bad_inv
    return values, vecs, inv


def _lapack(a: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    values, vecs = np.linalg.eig(a)
    return values, vecs, np.linalg.inv(vecs)


def _central(a: np.ndarray) -> int:
    """The sample nearest the batch's mean (relative to each entry's scale)."""
    mean = np.mean(a, axis=0)
    scale = np.abs(mean) + np.abs(a).max(axis=0) * 1e-3 + 1e-300
    return int(np.argmin(np.max(np.abs(a - mean) / scale, axis=(1, 2))))


def _refine(a: np.ndarray, vecs0: np.ndarray, inv0: np.ndarray):
    """Newton sweeps from the reference eigenvectors; returns values, vectors, inverses and
    which samples settled. From MIN_SWEEPS on, only the unsettled samples are swept."""
    values = np.zeros(a.shape[:2])
    vecs = np.broadcast_to(vecs0, a.shape).copy()
    inv = np.broadcast_to(inv0, a.shape).copy()
    settled = np.zeros(a.shape[0], dtype=bool)
    active = np.arange(a.shape[0])
    with np.errstate(all="ignore"):  # a diverging sample is caught below and re-solved
        for sweep in range(MAX_SWEEPS + 1):
            whole = active.size == a.shape[0]
            sub = (a, vecs, inv) if whole else (a[active], vecs[active], inv[active])
            off, values[active] = _off_diagonal(*sub)
            if sweep >= MIN_SWEEPS:
                now = _settled(off, values[active], sub[1] @ sub[2])
                settled[active] = now
                if now.all() or (not now.any() and sweep > MIN_SWEEPS) or sweep == MAX_SWEEPS:
                    break
                active, off, sub = active[~now], off[~now], tuple(x[~now] for x in sub)
            vecs[active], inv[active] = _sweep(off, values[active], sub[1], sub[2])
    return values, vecs, inv, settled


def _off_diagonal(a: np.ndarray, vecs: np.ndarray, inv: np.ndarray):
    """W A V with its diagonal (the eigenvalue estimates) taken out."""
    t = inv @ a @ vecs
    values = np.diagonal(t, axis1=1, axis2=2).copy()
    t[:, np.eye(a.shape[-1], dtype=bool)] = 0.0
    return t, values


def _sweep(off: np.ndarray, values: np.ndarray, vecs: np.ndarray, inv: np.ndarray):
    """One Newton step on the eigenvectors, and one Newton-Schulz step on their inverse."""
    eye = np.eye(values.shape[1])
    p = values[:, None, :] - values[:, :, None]
    p += eye  # the diagonal of ``off`` is zero: any non-zero divisor there
    np.divide(off, p, out=p)
    vecs = vecs @ (p + eye)
    p -= eye
    inv = -(p @ inv)  # (I - P) W, the first-order inverse ...
    ns = vecs @ inv
    np.subtract(2 * eye, ns, out=ns)
    return vecs, inv @ ns  # ... made exact again by a Newton-Schulz step


def _settled(off: np.ndarray, values: np.ndarray, product: np.ndarray) -> np.ndarray:
    """Samples whose off-diagonal W A V (the backward error in the eigenvector basis) is
    within LAPACK's own and whose W is V's inverse (``product`` = V W)."""
    scale = np.max(np.abs(values), axis=1)
    drift = np.abs(product - np.eye(values.shape[1])).max(axis=(1, 2))
    return ((np.max(np.abs(off), axis=(1, 2)) <= BACKWARD * scale) & (drift <= DRIFT)
            & np.all(np.isfinite(values), axis=1))
