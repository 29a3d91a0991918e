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
# off-diagonal of W A V over the largest eigenvalue: about LAPACK's own (~5e-12); the
# rounding floor of the sweeps is 1e-12 .. 2e-11, so a tighter bound only adds sweeps that
# confirm a stall (the modal check of ports.py bounds what reaches a response)
BACKWARD = 1e-11
# A sample at the rounding floor: within STALLED x BACKWARD and not halving since the last
# sweep, so further sweeps only shuffle rounding (LAPACK's own error is about that size).
STALLED = 3.0
DRIFT = 1e-7  # largest entry of V W - I (LAPACK's inverse of the same V: ~1e-9)
MIN_BATCH = 64  # below this LAPACK alone is as quick
# Matrix entries swept together: a block's (s, m, m) buffers stay in the core's cache, where
# each elementwise pass costs about half what it does streamed from memory (1000 samples of
# 13 x 13 go as two blocks; small matrices as one, whose sweeps cost mostly calls).
BLOCK_ENTRIES = 100_000


def eig_batch(a: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Eigenvalues (s, m), right eigenvectors (s, m, m) and their inverses of a batch."""
    if a.shape[0] < MIN_BATCH or a.shape[-1] < 2:
        return _lapack(a)
    ref_values, ref_vecs = np.linalg.eig(a[_central(a)])
    if np.iscomplexobj(ref_values):  # the refinement works in real arithmetic
        return _lapack(a)
    ref_inv = np.linalg.inv(ref_vecs)
    # the sweeps reshape their buffers to write diagonals in place: C order required
    blocks = -(-a[0].size * a.shape[0] // BLOCK_ENTRIES)
    parts = [_refine(np.ascontiguousarray(block), ref_vecs, ref_inv)
             for block in np.array_split(a, blocks)]
    values, vecs, inv, ok = (np.concatenate(x) for x in zip(*parts, strict=True))
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
    """The sample nearest the batch's mean (relative to each entry's scale), judged on the
    diagonals: they pick nearly the same sample as every entry does (the chain of
    bench_engine.py then sweeps 0.7 % more) at a quarter of the cost."""
    d = np.diagonal(a, axis1=1, axis2=2)
    mean = np.mean(d, axis=0)
    scale = np.abs(mean) + np.abs(d).max(axis=0) * 1e-3 + 1e-300
    return int(np.argmin(np.max(np.abs(d - mean) / scale, axis=1)))


def _refine(a: np.ndarray, vecs0: np.ndarray, inv0: np.ndarray):
    """Newton sweeps from the reference eigenvectors; returns values, vectors, inverses and
    which samples settled. From MIN_SWEEPS on, only the unsettled samples are swept."""
    values = np.zeros(a.shape[:2])
    vecs = np.broadcast_to(vecs0, a.shape).copy()
    inv = np.broadcast_to(inv0, a.shape).copy()
    settled = np.zeros(a.shape[0], dtype=bool)
    last = np.full(a.shape[0], np.inf)  # each active sample's backward error, last sweep
    active, work = np.arange(a.shape[0]), _Work(a, vecs, inv)
    with np.errstate(all="ignore"):  # a diverging sample is caught below and re-solved
        for sweep in range(MAX_SWEEPS + 1):
            off, values[active] = work.off_diagonal()
            if sweep >= MIN_SWEEPS:
                now, last = work.settled(off, values[active], last)
                settled[active] = now
                if now.all() or (not now.any() and sweep > MIN_SWEEPS) or sweep == MAX_SWEEPS:
                    break
                if now.any():
                    work.store(vecs, inv, active)
                    active, last = active[~now], last[~now]
                    work = work.take(~now)
            work.sweep(values[active])
        work.store(vecs, inv, active)
    return values, vecs, inv, settled


class _Work:
    """The unsettled samples' A, V and W with preallocated products: a sweep is six matrix
    products into buffers and a few elementwise steps, no fresh (s, m, m) arrays."""

    def __init__(self, a: np.ndarray, vecs: np.ndarray, inv: np.ndarray) -> None:
        self.a, self.vecs, self.inv = a, vecs, inv
        self.t, self.p, self.q = (np.empty(a.shape) for _ in range(3))  # C order: see flat
        # the gaps lambda_k - lambda_j as the product [1, -lambda_j] [lambda_k, 1]^T: the
        # factors of one are exact, so it rounds as the difference does, at half the cost of
        # a broadcast difference
        self.left, self.right = np.ones((*a.shape[:2], 2)), np.ones((a.shape[0], 2, a.shape[2]))
        self.diag = np.s_[:, :: a.shape[-1] + 1]  # the diagonal of each flattened matrix

    def take(self, keep: np.ndarray) -> _Work:
        """The samples ``keep`` (a mask), their last W A V carried along for the sweep."""
        work = _Work(self.a[keep], self.vecs[keep], self.inv[keep])
        work.t[:] = self.t[keep]
        return work

    def store(self, vecs: np.ndarray, inv: np.ndarray, active: np.ndarray) -> None:
        """Write the samples back. W is updated in place but V swaps buffers each sweep, so
        after an odd number of sweeps V lives in the other buffer: each is checked alone."""
        if self.vecs is not vecs:
            vecs[active] = self.vecs
        if self.inv is not inv:
            inv[active] = self.inv

    def flat(self, x: np.ndarray) -> np.ndarray:
        """A view (samples, m * m) of a C-ordered batch, to reach every diagonal at once."""
        return x.reshape(x.shape[0], x.shape[1] * x.shape[2])

    def off_diagonal(self) -> tuple[np.ndarray, np.ndarray]:
        """W A V with its diagonal (the eigenvalue estimates) taken out."""
        np.matmul(self.inv, self.a, out=self.p)
        t = np.matmul(self.p, self.vecs, out=self.t)
        values = self.flat(t)[self.diag].copy()
        self.flat(t)[self.diag] = 0.0
        return t, values

    def sweep(self, values: np.ndarray) -> None:
        """One Newton step on the eigenvectors, V <- V (I + P), W <- (I - P) W, and one
        Newton-Schulz step W <- W (2 I - V W) that makes W the inverse again. V moves to
        the spare buffer (a product into it costs less than a product and a sum in place)."""
        p, q, vecs, inv = self.p, self.q, self.vecs, self.inv
        np.negative(values, out=self.left[:, :, 1])
        self.right[:, 0, :] = values
        np.matmul(self.left, self.right, out=p)
        self.flat(p)[self.diag] = 1.0  # the diagonal of ``t`` is zero: any non-zero divisor
        np.divide(self.t, p, out=p)
        self.flat(p)[self.diag] = 1.0  # I + P
        np.matmul(vecs, p, out=q)
        self.vecs, spare = q, vecs
        np.negative(p, out=p)
        self.flat(p)[self.diag] += 2.0  # I - P
        half = np.matmul(p, inv, out=spare)
        ns = np.matmul(self.vecs, half, out=p)
        np.negative(ns, out=ns)
        self.flat(ns)[self.diag] += 2.0
        np.matmul(half, ns, out=inv)
        self.q = spare

    def settled(self, off: np.ndarray, values: np.ndarray, last: np.ndarray
                ) -> tuple[np.ndarray, np.ndarray]:
        """Samples whose off-diagonal W A V (the backward error in the eigenvector basis)
        is within LAPACK's own, or stalled at the rounding floor just above it, and whose W
        is V's inverse (V W = I, checked only for the samples that pass the first test);
        with every sample's backward error, for the next call."""
        bound = BACKWARD * np.max(np.abs(values), axis=1)
        error = np.max(np.abs(off), axis=(1, 2))
        stalled = (error <= STALLED * bound) & (error > 0.5 * last)
        now = ((error <= bound) | stalled) & np.all(np.isfinite(values), axis=1)
        idx = np.flatnonzero(now)
        if 2 * idx.size > now.size:  # most pass: one product beats gathering them first
            product = np.matmul(self.vecs, self.inv, out=self.p)[idx]
        else:
            product = self.vecs[idx] @ self.inv[idx]
        self.flat(product)[self.diag] -= 1.0
        now[idx] = np.abs(product).max(axis=(1, 2), initial=0.0) <= DRIFT
        return now, error
