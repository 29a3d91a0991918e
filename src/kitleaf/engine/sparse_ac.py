"""Direct AC solves of a large circuit: each sample's sparse matrix, all in one LU, never n x n.

A batch of small circuits is solved densely (one LAPACK call for all samples). A large one
(many stages, a long ladder) would hold (samples, n, n) arrays, quadratic in the circuit, and
pay n^3 per sample and per solve; its MNA matrix has a few entries per row. Here the matrix is
kept as the values of its structural entries per sample, the samples are set side by side as
one block-diagonal matrix and factorised once per frequency by SuperLU
(:func:`~kitleaf.engine.sparse_stack.block_lu`), whose fill stays inside each block, so
memory and time grow with the circuit. The factorisation is kept: the 1 kHz solutions and
every stage's impedance share it. A branch taken out (``opened``: its row says its current is
zero) is a rank-one change of the matrix, answered from the same factorisation by the
Sherman-Morrison formula (see :meth:`SparseAc.solve`).
"""

from __future__ import annotations

import numpy as np

from kitleaf.engine.compile import System
from kitleaf.engine.newton import extend
from kitleaf.engine.nonlinear import Devices
from kitleaf.engine.sparse_stack import block_lu

SPARSE_SIZE = 64  # unknowns from which direct AC solves go sparse (the demo kits have <= 30)
FACTORS_KEPT = 4  # factorisations kept per batch (the 1 kHz one serves nearly every call)


class SparseAc:
    """The small-signal G and C of every sample as values on one structure (samples, nnz)."""

    def __init__(self, system: System, devices: Devices, x: np.ndarray,
                 factors: np.ndarray | None) -> None:
        n, samples = system.layout.size, x.shape[0]
        g_map, c_map = system.stamp_maps
        maps = [g_map, c_map]
        v = devices.junctions(extend(x)) if devices.banks else None
        if v is not None:
            maps += [devices.jacobian_map, devices.cap_map]
        branches = np.arange(len(system.layout.nodes), n)
        # every branch's diagonal too, so an opened branch's row has somewhere to go
        entries = np.union1d(np.concatenate([m.entries() for m in maps]), branches * (n + 1))
        stamper = system.stamper
        self.g = _on(g_map, entries, stamper.g_cols.values(factors), samples)
        self.c = _on(c_map, entries, stamper.c_cols.values(factors), samples)
        if v is not None:
            self.g = self.g + _on(devices.jacobian_map, entries, devices.slopes(v), samples)
            self.c = self.c + _on(devices.cap_map, entries, devices.cap_values(v), samples)
        self.rows, self.cols, self.size = entries // n, entries % n, n
        self._factors: dict[float, object] = {}

    def solve(self, freqs, rhs: np.ndarray, opened: int | None = None,
              samples: np.ndarray | None = None) -> np.ndarray:
        """Complex unknowns (samples, F, n); ``freqs`` (F,) or (samples, F).

        With row ``opened`` replaced by its unit row (the branch carries no current), the
        matrix is A + e_k (e_k - a_k)^T, and with y = A^-1 b, w = A^-1 e_k the solution is
        y - w (y_k - b_k) / w_k: the same factorisation serves every opened branch.
        """
        pick = np.arange(self.g.shape[0]) if samples is None else np.asarray(samples)
        f = np.broadcast_to(np.asarray(freqs, float), (pick.size, np.shape(freqs)[-1]))
        b = np.asarray(rhs, complex)
        columns = [np.tile(b, pick.size)]
        if opened is not None:
            unit = np.zeros(self.size, complex)
            unit[opened] = 1.0
            columns.append(np.tile(unit, pick.size))
        out = np.empty((pick.size, f.shape[1], self.size), complex)
        for j in range(f.shape[1]):
            lu = self._factor(f[:, j], pick, samples is None)
            y = lu.solve(np.stack(columns, axis=1)).reshape(pick.size, self.size, -1)
            out[:, j] = y[:, :, 0] if opened is None else _opened(y, b, opened)
        return out

    def _factor(self, f: np.ndarray, pick: np.ndarray, whole: bool):
        """The block-diagonal LU at frequencies ``f`` (one per picked sample); kept when
        the whole batch is at one frequency, as the 1 kHz solves are."""
        key = float(f[0]) if whole and np.all(f == f[0]) else None
        if key is not None and key in self._factors:
            return self._factors[key]
        s = 2j * np.pi * f[:, None]
        lu = block_lu(self.g[pick] + s * self.c[pick], self.rows, self.cols, self.size)
        if key is not None:
            if len(self._factors) >= FACTORS_KEPT:
                self._factors.clear()
            self._factors[key] = lu
        return lu


def _on(stamp_map, entries: np.ndarray, values: np.ndarray, samples: int) -> np.ndarray:
    """``values`` (1 or samples, columns) through ``stamp_map`` onto ``entries``."""
    out = np.asarray(stamp_map.onto(entries) @ values.T).T
    return np.broadcast_to(out, (samples, entries.size))


def _opened(y: np.ndarray, b: np.ndarray, k: int) -> np.ndarray:
    """The solution with branch ``k`` opened, from y = A^-1 b and w = A^-1 e_k (s, n, 2)."""
    w = y[:, :, 1]
    return y[:, :, 0] - w * ((y[:, k, 0] - b[k]) / w[:, k])[:, None]
