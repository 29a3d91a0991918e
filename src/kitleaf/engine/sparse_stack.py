"""Matrices of one structure batched over samples, as the values of their structural entries.

A large circuit's DC Jacobian has a few entries per row; held (samples, n, n) its tolerance
samples took hundreds of megabytes and n^3 per sample and Newton step. Here each sample is
the values (samples, nnz) on one structure, the samples are set side by side as one
block-diagonal matrix, and SuperLU factorises it (its fill stays inside each block), so memory
and time grow with the circuit. The small-signal solves of :mod:`~kitleaf.engine.sparse_ac`
use the same block-diagonal form.
"""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spl

from kitleaf.errors import SolveError

SINGULAR = ("the circuit matrix is singular (a floating node or a loop of sources); check the "
            "connections")


def block_lu(values: np.ndarray, rows: np.ndarray, cols: np.ndarray, size: int):
    """SuperLU of the block-diagonal matrix whose block k holds ``values[k]`` (samples, nnz)
    at (``rows``, ``cols``) of a ``size`` x ``size`` matrix; SolveError when singular."""
    offset = (np.arange(values.shape[0]) * size)[:, None]
    total = values.shape[0] * size
    matrix = sp.csc_matrix((values.ravel(), ((offset + rows).ravel(), (offset + cols).ravel())),
                           shape=(total, total))
    try:
        return spl.splu(matrix)
    except RuntimeError:  # SuperLU: "Factor is exactly singular"
        raise SolveError(SINGULAR) from None


class SparseStack:
    """Matrices (samples, n, n) of one structure: ``values`` (samples or 1, nnz) at
    (``rows``, ``cols``), every diagonal entry among them. ``slopes`` maps a device Jacobian's
    value columns onto the entries (a sparse (nnz, columns) matrix), for :meth:`solve`."""

    def __init__(self, rows: np.ndarray, cols: np.ndarray, values: np.ndarray, size: int,
                 slopes: sp.csr_matrix | None = None) -> None:
        self.rows, self.cols, self.values, self.size = rows, cols, values, size
        self.slopes = slopes
        self.diagonal = np.flatnonzero(rows == cols)
        self._gather = sp.csr_matrix((np.ones(rows.size), (rows, np.arange(rows.size))),
                                     shape=(size, rows.size))

    @property
    def shape(self) -> tuple[int, int, int]:
        return self.values.shape[0], self.size, self.size

    def __getitem__(self, idx) -> SparseStack:
        """The samples at ``idx`` (as a (samples, n, n) array is indexed)."""
        return self.with_values(self.values[idx])

    def with_values(self, values: np.ndarray) -> SparseStack:
        twin = SparseStack.__new__(SparseStack)
        twin.__dict__.update(self.__dict__, values=values)
        return twin

    def plus_slopes(self, slopes: np.ndarray) -> SparseStack:
        """These matrices plus a device Jacobian given by its value columns (samples, cols)."""
        return self.with_values(self.values + np.asarray(self.slopes @ slopes.T).T)

    def times(self, x: np.ndarray) -> np.ndarray:
        """Each sample's matrix times its vector: (samples, n)."""
        return np.asarray(self._gather @ (self.values * x[:, self.cols]).T).T

    def dense(self) -> np.ndarray:
        """The matrices (samples, n, n), for a few samples or a small circuit."""
        out = np.zeros(self.shape)
        out[:, self.rows, self.cols] = self.values
        return out

    def solve(self, rhs: np.ndarray, slopes: np.ndarray | None = None,
              shunt: np.ndarray | None = None) -> np.ndarray:
        """x (samples, n) with (A + the device Jacobian ``slopes`` + diag(``shunt``)) x = rhs,
        each sample its own matrix."""
        a = self if slopes is None else self.plus_slopes(slopes)
        values = np.broadcast_to(a.values, (rhs.shape[0], self.rows.size))
        if shunt is not None and shunt.any():
            values = values.copy()
            values[:, self.diagonal] += shunt[self.rows[self.diagonal]]
        lu = block_lu(values, self.rows, self.cols, self.size)
        return lu.solve(rhs.ravel()).reshape(rhs.shape)

    def solve_shared(self, rhs: np.ndarray) -> np.ndarray | None:
        """x (samples, n) with the first sample's matrix for every right-hand side (one
        factorisation); None when that matrix is singular."""
        try:
            lu = block_lu(self.values[:1], self.rows, self.cols, self.size)
        except SolveError:
            return None
        return lu.solve(np.ascontiguousarray(rhs.T)).T
