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

    def matrix(self, columns: int) -> sp.csr_matrix:
        """The sparse (size*size, columns) map; it @ values.T gives flattened matrices."""
        shape = (self.size * self.size, columns)
        return sp.csr_matrix((self._sign, (self._flat, self._cols)), shape=shape)


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

    def matrix(self, columns: int) -> sp.csr_matrix:
        shape = (self.size, columns)
        return sp.csr_matrix((self._sign, (self._rows, self._cols)), shape=shape)


def apply(values: np.ndarray, pattern: sp.csr_matrix, shape: tuple[int, ...]) -> np.ndarray:
    """Batched dense result of ``values`` (samples, columns) through a sparse pattern."""
    flat = np.asarray(pattern @ values.T).T
    return flat.reshape((values.shape[0], *shape))
