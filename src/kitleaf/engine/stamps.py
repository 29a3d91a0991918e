"""Sparse stamp patterns: how per-sample value columns land in the batched MNA matrices."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import scipy.sparse as sp


@dataclass
class Columns:
    """Value columns: each is ``nominal * factor[owner] ** power`` (owner -1 = a constant)."""

    nominal: list[float] = field(default_factory=list)
    owner: list[int] = field(default_factory=list)
    power: list[int] = field(default_factory=list)

    def add(self, nominal: float, owner: int = -1, power: int = 0) -> int:
        self.nominal.append(float(nominal))
        self.owner.append(owner)
        self.power.append(power)
        return len(self.nominal) - 1

    def values(self, factors: np.ndarray | None = None) -> np.ndarray:
        """Column values, shape (samples, columns); ``factors`` is (samples, elements)."""
        nominal = np.asarray(self.nominal, dtype=float)
        if factors is None:
            return nominal[None, :].copy()
        padded = np.concatenate([factors, np.ones((factors.shape[0], 1))], axis=1)
        owner = np.asarray(self.owner, dtype=int)
        return nominal[None, :] * padded[:, owner] ** np.asarray(self.power)[None, :]


class Pattern:
    """Entries (row, col, sign) per value column of a size x size matrix; ground rows drop out."""

    def __init__(self, size: int) -> None:
        self.size = size
        self._cols: list[int] = []
        self._flat: list[int] = []
        self._sign: list[float] = []

    def entry(self, col: int, row: int, column: int, sign: float = 1.0) -> None:
        if row < self.size and column < self.size:  # index ``size`` is ground
            self._cols.append(col)
            self._flat.append(row * self.size + column)
            self._sign.append(sign)

    def conductance(self, col: int, a: int, b: int) -> None:
        """A two-terminal admittance between nodes a and b."""
        self.transconductance(col, a, b, a, b)

    def transconductance(self, col: int, src: int, dst: int, cp: int, cn: int) -> None:
        """A current from ``src`` to ``dst`` (through the part) equal to value * (v_cp - v_cn)."""
        self.entry(col, src, cp, 1.0)
        self.entry(col, src, cn, -1.0)
        self.entry(col, dst, cp, -1.0)
        self.entry(col, dst, cn, 1.0)

    def matrix(self, columns: int) -> StampMap:
        """The (size*size, columns) map from value columns to flattened matrices."""
        return StampMap(self._flat, self._cols, self._sign, (self.size * self.size, columns))


class VectorPattern:
    """Entries (row, sign) per value column of a length-``size`` vector."""

    def __init__(self, size: int) -> None:
        self.size = size
        self._cols: list[int] = []
        self._rows: list[int] = []
        self._sign: list[float] = []

    def entry(self, col: int, row: int, sign: float = 1.0) -> None:
        if row < self.size:
            self._cols.append(col)
            self._rows.append(row)
            self._sign.append(sign)

    def matrix(self, columns: int) -> StampMap:
        return StampMap(self._rows, self._cols, self._sign, (self.size, columns))


DENSE_ENTRIES = 4096  # a map this small is quicker applied as a dense product
# ... and so is a single sample's, up to this size: the dense map holds columns x n^2 values,
# cubic in the circuit (a forty-stage kit's would take 650 MB)
DENSE_SINGLE = 1 << 20


class StampMap:
    """A stamp pattern (entries, columns), applied sparsely to batches and densely to a
    single sample, where scipy's per-call cost would dominate; each form is built on demand."""

    def __init__(self, rows: list[int], cols: list[int], signs: list[float],
                 shape: tuple[int, int]) -> None:
        self._coords = (np.asarray(rows, dtype=int), np.asarray(cols, dtype=int),
                        np.asarray(signs, dtype=float))
        self.shape = shape
        self._dense_t: np.ndarray | None = None
        self._sparse: sp.csr_matrix | None = None

    def apply(self, values: np.ndarray) -> np.ndarray:
        rows, cols, signs = self._coords
        entries = self.shape[0] * self.shape[1]
        if entries <= DENSE_ENTRIES or values.shape[0] == 1 and entries <= DENSE_SINGLE:
            if self._dense_t is None:
                self._dense_t = np.zeros(self.shape[::-1])
                np.add.at(self._dense_t, (cols, rows), signs)
            return values @ self._dense_t
        if self._sparse is None:
            self._sparse = sp.csr_matrix((signs, (rows, cols)), shape=self.shape)
        return np.asarray(self._sparse @ values.T).T

    def entries(self) -> np.ndarray:
        """The flattened matrix positions this map can write, sorted."""
        return np.unique(self._coords[0])

    def onto(self, entries: np.ndarray) -> sp.csr_matrix:
        """The map narrowed to ``entries`` (sorted, holding all of :meth:`entries`): values
        (samples, columns) go to (samples, len(entries)) by ``(map @ values.T).T``, so a
        large matrix is never formed whole."""
        rows, cols, signs = self._coords
        return sp.csr_matrix((signs, (np.searchsorted(entries, rows), cols)),
                             shape=(entries.size, self.shape[1]))


def stacked(top: StampMap, bottom: StampMap) -> StampMap:
    """One map taking ``top``'s value columns then ``bottom``'s, its rows below ``top``'s."""
    t_rows, t_cols, t_signs = top._coords
    b_rows, b_cols, b_signs = bottom._coords
    return StampMap(np.concatenate([t_rows, b_rows + top.shape[0]]),
                    np.concatenate([t_cols, b_cols + top.shape[1]]),
                    np.concatenate([t_signs, b_signs]),
                    (top.shape[0] + bottom.shape[0], top.shape[1] + bottom.shape[1]))


def apply(values: np.ndarray, pattern: StampMap, shape: tuple[int, ...]) -> np.ndarray:
    """Batched dense result of ``values`` (samples, columns) through a stamp pattern."""
    return pattern.apply(values).reshape((values.shape[0], *shape))
