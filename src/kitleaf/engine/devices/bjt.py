"""NPN and PNP bipolar transistors: the Gummel-Poon model with SPICE parameter names."""

from __future__ import annotations

from functools import cached_property

import numpy as np

from kitleaf.engine import elements as el
from kitleaf.engine.devices import Family, register_family
from kitleaf.engine.devices.base import (
    GMIN,
    VT,
    Bank,
    breakdown,
    breakdown_limit,
    depletion,
    explin,
    inner_row,
    internal_nodes,
    param_arrays,
    pnjlim,
    vcrit,
)
from kitleaf.engine.models import DEFAULTS

KEYS = tuple(DEFAULTS["npn"])
SATURATION_VCE = 0.25  # volts; below this (device frame) a BJT reports "saturated"
CUTOFF_IC = 1e-8  # amperes; below this collector current it reports "cutoff"
START_AMPS = 1e-4  # small-signal stages in pedals mostly run near 100 uA .. 1 mA
EBO_AMPS = 1e-5  # emitter current at which V(BR)EBO is specified (from memory: 10 uA)


# The four exponential currents, evaluated in one call: forward and reverse transport, then
# the BE and BC leakages; which junction (vbe 0, vbc 1) each reads, and its parameters.
_READS = np.array([0, 1, 0, 1])
_SATURATION = ("IS", "IS", "ISE", "ISC")
_EMISSION = ("NF", "NR", "NE", "NC")


class BjtBank(Bank):
    """Junctions (vbe, vbc); currents b->e, b->c, c->e (transport); caps b-e, b-c."""

    def initial(self) -> np.ndarray:
        """Newton's first guess: VBE passing START_AMPS, the collector junction at zero."""
        vbe = self.p("NF") * VT * np.log(START_AMPS / self.p("IS"))
        return np.stack([vbe, np.zeros_like(vbe)], axis=1)

    @cached_property
    def _limits(self) -> tuple[np.ndarray, np.ndarray]:
        """N VT and the critical voltage of both junctions, (samples or 1, 2, devices)."""
        n_vt = np.stack([self.p("NF"), self.p("NR")], axis=1) * VT
        return n_vt, vcrit(n_vt, self.p("IS")[:, None, :])

    def limit(self, vnew: np.ndarray, vold: np.ndarray) -> np.ndarray:
        limited = pnjlim(vnew, vold, *self._limits)
        if not self._breaks_down:
            return limited
        n_vt, crit = self._limits
        vbe = breakdown_limit(limited[:, 0], vold[:, 0], self.p("BVEBO"), n_vt[:, 0], crit[:, 0])
        return np.stack([vbe, limited[:, 1]], axis=1)

    @cached_property
    def _diodes(self) -> tuple[np.ndarray, np.ndarray]:
        """Saturation currents and N VT of the four exponentials, (samples or 1, 4, devices)."""
        return (np.stack([self.p(k) for k in _SATURATION], axis=1),
                np.stack([self.p(k) for k in _EMISSION], axis=1) * VT)

    def _exponentials(self, v: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """The four currents and their conductances (samples, 4, devices)."""
        i_sat, n_vt = self._diodes
        e, de = explin(v[:, _READS] / n_vt)
        return i_sat * (e - 1.0), i_sat * de / n_vt

    def _charge(self, vbe: np.ndarray, vbc: np.ndarray, i: np.ndarray, g: np.ndarray
                ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """The base charge qb and its derivatives on vbe and vbc."""
        p = self.p
        q1 = 1.0 / np.maximum(1.0 - vbc / p("VAF") - vbe / p("VAR"), 1e-6)
        q2 = i[:, 0] / p("IKF") + i[:, 1] / p("IKR")
        sq = np.sqrt(np.maximum(1.0 + 4.0 * q2, 1e-12))
        half = q1 * (1.0 + sq) / 2.0
        return (half, half * q1 / p("VAR") + q1 * g[:, 0] / p("IKF") / sq,
                half * q1 / p("VAF") + q1 * g[:, 1] / p("IKR") / sq)

    def evaluate(self, v: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        p, vbe, vbc = self.p, v[:, 0], v[:, 1]
        i, g = self._exponentials(v)
        qb, dqb_be, dqb_bc = self._charge(vbe, vbc, i, g)
        ice = (i[:, 0] - i[:, 1]) / qb
        slope = np.zeros((vbe.shape[0], 3, 2, vbe.shape[1]))
        slope[:, 0, 0] = g[:, 0] / p("BF") + g[:, 2] + GMIN
        slope[:, 1, 1] = g[:, 1] / p("BR") + g[:, 3] + GMIN
        slope[:, 2, 0] = (g[:, 0] - ice * dqb_be) / qb
        slope[:, 2, 1] = (-g[:, 1] - ice * dqb_bc) / qb
        current = np.empty((vbe.shape[0], 3, vbe.shape[1]))
        current[:, 0] = i[:, 0] / p("BF") + i[:, 2] + GMIN * vbe
        current[:, 1] = i[:, 1] / p("BR") + i[:, 3] + GMIN * vbc
        current[:, 2] = ice
        if self._breaks_down:  # the base-emitter junction's reverse breakdown (BVEBO)
            bd_i, bd_g = breakdown(vbe, p("BVEBO"), EBO_AMPS, VT)
            current[:, 0] += bd_i
            slope[:, 0, 0] += bd_g
        return current, slope

    @cached_property
    def _breaks_down(self) -> bool:
        return bool(np.isfinite(self.p("BVEBO")).any())

    def capacitances(self, v: np.ndarray) -> np.ndarray:
        p, vbe, vbc = self.p, v[:, 0], v[:, 1]
        i, g = self._exponentials(v)
        qb, dqb_be, _ = self._charge(vbe, vbc, i, g)
        diffusion = p("TF") * (g[:, 0] - i[:, 0] / qb * dqb_be) / qb
        cbe = depletion(vbe, p("CJE"), p("VJE"), p("MJE"), p("FC")) + diffusion
        cbc = depletion(vbc, p("CJC"), p("VJC"), p("MJC"), p("FC"))
        return np.stack([cbe, cbc], axis=1)

    def report(self, v: np.ndarray, xe: np.ndarray, index: int) -> dict[str, float | str]:
        current, slope = self.evaluate(v[:1])
        ibe, ibc, ice = (float(x) for x in current[0, :, index])
        d = slope[0, :, :, index]
        pol = float(self.polarity[index])
        vc, vb, ve = (float(x) for x in self.terminal_voltages(xe)[:, index])
        ic, ib = pol * (ice - ibc), pol * (ibe + ibc)
        go = -(d[2, 1] - d[1, 1])
        return {
            "ic": ic, "ib": ib, "ie": -(ic + ib), "vbe": vb - ve, "vce": vc - ve,
            "vbc": vb - vc, "beta": ic / ib if ib else float("inf"), "gm": float(d[2, 0]),
            "rpi": 1.0 / float(d[0, 0]), "ro": float(1.0 / go) if go > 0 else float("inf"),
            "region": _region(pol * ic, pol * (vc - ve)),
        }


def _region(ic: float, vce: float) -> str:
    """Device-frame region: cutoff, saturated or active (thresholds in docs/engine.md)."""
    if ic < CUTOFF_IC:
        return "cutoff"
    return "saturated" if vce < SATURATION_VCE else "active"


_RESISTORS = (("b", "RB"), ("c", "RC"), ("e", "RE"))


def _build(parts: list[el.Bjt], st) -> BjtBank:
    rows = {t: np.array([inner_row(q, t, key, st) for q in parts]) for t, key in _RESISTORS}
    b, c, e = rows["b"], rows["c"], rows["e"]
    row = st.layout.row
    ext = np.array([[row(q.c) for q in parts], [row(q.b) for q in parts],
                    [row(q.e) for q in parts]])
    polarity = np.array([1.0 if q.model.kind == "npn" else -1.0 for q in parts])
    return BjtBank(names=tuple(q.name for q in parts), polarity=polarity,
                   params=param_arrays([q.model for q in parts], KEYS),
                   jp=np.stack([b, b]), jn=np.stack([e, c]), src=np.stack([b, b, c]),
                   dst=np.stack([e, c, e]), cap_a=np.stack([b, b]), cap_b=np.stack([e, c]),
                   ext=ext)


register_family(Family("bjt", el.Bjt, lambda q: internal_nodes(q, _RESISTORS), _build))
