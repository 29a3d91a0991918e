"""Assembles every device bank's linearised currents and Jacobian into the batched MNA system."""

from __future__ import annotations

import numpy as np

from kitleaf.engine.devices.base import Bank
from kitleaf.engine.stamps import Pattern, VectorPattern, apply, stacked


class Devices:
    """All banks of a circuit, with sparse maps from their arrays into the n x n system."""

    def __init__(self, banks: list[Bank], size: int) -> None:
        self.banks, self.size = banks, size
        currents, jacobian, caps = VectorPattern(size), Pattern(size), Pattern(size)
        n_i = n_d = n_c = 0
        for bank in banks:
            n_i = _stamp_currents(currents, bank, n_i)
            n_d = _stamp_jacobian(jacobian, bank, n_d)
            n_c = _stamp_caps(caps, bank, n_c)
        # currents and Jacobian in one product: one call per step instead of two
        self.jacobian_map, self.current_map = jacobian.matrix(n_d), currents.matrix(n_i)
        self._both = stacked(self.current_map, self.jacobian_map)
        self.cap_map = caps.matrix(n_c)

    def with_banks(self, banks: list[Bank]) -> Devices:
        """The same maps over banks holding other parameter values."""
        twin = Devices.__new__(Devices)
        twin.__dict__.update(self.__dict__, banks=banks)
        return twin

    def junctions(self, xe: np.ndarray) -> list[np.ndarray]:
        return [bank.junctions(xe) for bank in self.banks]

    def linearise(self, vstar: list[np.ndarray], vraw: list[np.ndarray]
                  ) -> tuple[np.ndarray, np.ndarray]:
        """Node currents (s, n) of each device's tangent at ``vstar`` evaluated at ``vraw``,
        and the device part of the Jacobian (s, n, n)."""
        i_cols, d_cols = self._tangents(vstar, vraw)
        n, samples = self.size, vraw[0].shape[0]
        both = apply(np.concatenate(i_cols + d_cols, axis=1), self._both, (n + n * n,))
        return both[:, :n], both[:, n:].reshape(samples, n, n)

    def linearise_slopes(self, vstar: list[np.ndarray], vraw: list[np.ndarray]
                         ) -> tuple[np.ndarray, np.ndarray]:
        """As :meth:`linearise`, with the Jacobian as its value columns (s, columns of
        :attr:`jacobian_map`), never formed n x n (a large circuit's sparse Newton)."""
        i_cols, d_cols = self._tangents(vstar, vraw)
        return (apply(np.concatenate(i_cols, axis=1), self.current_map, (self.size,)),
                np.concatenate(d_cols, axis=1))

    def _tangents(self, vstar: list[np.ndarray], vraw: list[np.ndarray]):
        """Each bank's tangent currents and slopes, as value columns (s, ...)."""
        samples = vraw[0].shape[0]
        i_cols, d_cols = [], []
        for bank, vs, vr in zip(self.banks, vstar, vraw, strict=True):
            current, slope = bank.evaluate(vs)  # both (samples, ...) since vs is
            tangent = current + np.einsum("stkd,skd->std", slope, vr - vs)
            i_cols.append((tangent * bank.polarity).reshape(samples, -1))
            d_cols.append(slope.reshape(samples, -1))
        return i_cols, d_cols

    def currents(self, v: list[np.ndarray]) -> np.ndarray:
        """Node currents (s, n) of every device at junction voltages ``v``, without the
        Jacobian (s, n, n) that :meth:`linearise` forms beside them."""
        cols = [(bank.evaluate(vb)[0] * bank.polarity).reshape(vb.shape[0], -1)
                for bank, vb in zip(self.banks, v, strict=True)]
        return apply(np.concatenate(cols, axis=1), self.current_map, (self.size,))

    def slopes(self, v: list[np.ndarray]) -> np.ndarray:
        """Every device's Jacobian entries (s, columns of :attr:`jacobian_map`) at junction
        voltages ``v``: the device part of the Jacobian without forming it n x n."""
        return np.concatenate([bank.evaluate(vb)[1].reshape(vb.shape[0], -1)
                               for bank, vb in zip(self.banks, v, strict=True)], axis=1)

    def cap_values(self, v: list[np.ndarray]) -> np.ndarray:
        """Every device capacitance (s, m) at junction voltages ``v``."""
        samples = v[0].shape[0]
        cols = [np.broadcast_to(b.capacitances(vb), (samples, *b.cap_a.shape)).reshape(samples, -1)
                for b, vb in zip(self.banks, v, strict=True)]
        return np.concatenate(cols, axis=1)

    def cap_pairs(self) -> list[tuple[int, int]]:
        """(a, b) rows of each capacitance, in cap_values order."""
        return [(int(a), int(b)) for bank in self.banks
                for a, b in zip(bank.cap_a.ravel(), bank.cap_b.ravel(), strict=True)]


def _stamp_currents(pattern: VectorPattern, bank: Bank, offset: int) -> int:
    for col, (s, d) in enumerate(zip(bank.src.ravel(), bank.dst.ravel(), strict=True)):
        pattern.entry(offset + col, int(s), 1.0)
        pattern.entry(offset + col, int(d), -1.0)
    return offset + bank.src.size


def _stamp_jacobian(pattern: Pattern, bank: Bank, offset: int) -> int:
    terms, junctions, devices = bank.src.shape[0], bank.jp.shape[0], bank.src.shape[1]
    for t in range(terms):
        for j in range(junctions):
            for d in range(devices):
                col = offset + (t * junctions + j) * devices + d
                pattern.transconductance(col, int(bank.src[t, d]), int(bank.dst[t, d]),
                                         int(bank.jp[j, d]), int(bank.jn[j, d]))
    return offset + terms * junctions * devices


def _stamp_caps(pattern: Pattern, bank: Bank, offset: int) -> int:
    for col, (a, b) in enumerate(zip(bank.cap_a.ravel(), bank.cap_b.ravel(), strict=True)):
        pattern.conductance(offset + col, int(a), int(b))
    return offset + bank.cap_a.size
