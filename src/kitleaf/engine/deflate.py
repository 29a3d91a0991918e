"""Eigendecompositions of port matrices with very slow poles split off first.

A capacitor port that sees a huge resistance (an op-amp input's 1e12 ohms, say) gives D M a
time constant of 1e10 s beside the audio ones of 1e-3 s. LAPACK's eigensolvers are accurate
to eps times the matrix norm, which that one pole sets, so the audio poles lose most of their
digits (modal against direct: 1e-5 where 1e-13 is usual). Those ports S are split from the
rest R by an exact block diagonalisation,

    A = T diag(P, Q) T^-1,   T = [[I, Y], [X, X Y + I]],   T^-1 = [[I + Y X, -Y], [-X, I]],

with X from the Riccati equation X (A_SS + A_SR X) = A_RS + A_RR X and Y from the Sylvester
equation P Y - Y Q = -A_SR, both solved by fixed-point steps that contract by about
|A_RR| / |A_SS| each. P = A_SS + A_SR X and Q = A_RR - X A_SR are then diagonalised alone,
Q with norm set by the audio poles.
"""

from __future__ import annotations

import numpy as np

from kitleaf.engine.batch_lu import block
from kitleaf.engine.eigen import eig_batch

SLOW = 1e4  # seconds: a port whose own time constant exceeds this is split off (< 16 uHz)
STEPS = 4  # fixed-point steps for X and Y; each gains about 9 digits on the kits seen
RICCATI = 1e-13  # largest residual of the Riccati equation, relative to A_RS, to accept X


def eig_split(a: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Eigenvalues (s, m), right eigenvectors (s, m, m) and their inverses, as eig_batch,
    with the ports whose diagonal exceeds SLOW in any sample diagonalised apart."""
    slow = np.any(np.abs(np.diagonal(a, axis1=1, axis2=2)) > SLOW, axis=0)
    if not slow.any() or slow.all():
        return eig_batch(a)
    order = np.concatenate([np.flatnonzero(slow), np.flatnonzero(~slow)])
    k = int(slow.sum())
    ap = block(a, order, order)
    blocks = _block_diagonal(ap[:, :k, :k], ap[:, :k, k:], ap[:, k:, :k], ap[:, k:, k:])
    if blocks is None:
        return eig_batch(a)
    x, y, p, q = blocks
    p_values, p_vecs, p_inv = eig_batch(p)
    q_values, q_vecs, q_inv = eig_batch(q)
    values = np.concatenate(_common(p_values, q_values), axis=1)
    p_vecs, q_vecs, p_inv, q_inv = _common(p_vecs, q_vecs, p_inv, q_inv)
    vecs = np.empty(a.shape, values.dtype)
    inv = np.empty(a.shape, values.dtype)
    vecs[:, order] = np.concatenate([np.concatenate([p_vecs, y @ q_vecs], axis=2),
                                     np.concatenate([x @ p_vecs, q_vecs + x @ (y @ q_vecs)],
                                                    axis=2)], axis=1)
    inv[:, :, order] = np.concatenate([np.concatenate([p_inv + (p_inv @ y) @ x, -(p_inv @ y)],
                                                      axis=2),
                                       np.concatenate([-(q_inv @ x), q_inv], axis=2)], axis=1)
    return values, vecs, inv


def _block_diagonal(a_ss, a_sr, a_rs, a_rr):
    """X, Y and the diagonal blocks P, Q (see the module docstring), by fixed-point steps;
    None when the steps do not settle (several slow ports sharing one slow pole, say)."""
    with np.errstate(all="ignore"):
        x = a_rs @ np.linalg.pinv(a_ss)
        for _ in range(STEPS):
            x = (a_rs + a_rr @ x) @ np.linalg.pinv(a_ss + a_sr @ x)
        p, q = a_ss + a_sr @ x, a_rr - x @ a_sr
        residual = np.abs(a_rs + a_rr @ x - x @ p).max(axis=(1, 2))
    if not np.all(residual <= RICCATI * np.abs(a_rs).max(axis=(1, 2))):
        return None
    p_inv = np.linalg.inv(p)
    y = -(p_inv @ a_sr)
    for _ in range(STEPS):
        y = p_inv @ (y @ q - a_sr)
    return x, y, p, q


def _common(*arrays: np.ndarray) -> list[np.ndarray]:
    """The arrays in one dtype: complex if any of them is."""
    kind = complex if any(np.iscomplexobj(x) for x in arrays) else float
    return [x.astype(kind, copy=False) for x in arrays]
