"""Shockley junction diode with series resistance, depletion/diffusion capacitance, breakdown."""

from __future__ import annotations

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

KEYS = ("IS", "N", "RS", "CJO", "VJ", "M", "FC", "TT", "BV", "IBV")
START_AMPS = 1e-3  # diodes in pedals (clippers, LEDs) mostly run near a milliampere


class DiodeBank(Bank):
    """One junction (anode to cathode), one current."""

    def initial(self) -> np.ndarray:
        """Newton's first guess: the voltage that passes START_AMPS."""
        return (self.p("N") * VT * np.log(START_AMPS / self.p("IS")))[:, None, :]

    def limit(self, vnew: np.ndarray, vold: np.ndarray) -> np.ndarray:
        n_vt = (self.p("N") * VT)[:, None, :]
        crit = vcrit(n_vt, self.p("IS")[:, None, :])
        limited = pnjlim(vnew, vold, n_vt, crit)
        return breakdown_limit(limited, vold, self.p("BV")[:, None, :], n_vt, crit)

    def evaluate(self, v: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        vd = v[:, 0, :]
        i_sat, n_vt = self.p("IS"), self.p("N") * VT
        e, de = explin(vd / n_vt)
        current = i_sat * (e - 1.0) + GMIN * vd
        slope = i_sat * de / n_vt + GMIN
        bd_i, bd_g = breakdown(vd, self.p("BV"), self.p("IBV"), n_vt)
        return (current + bd_i)[:, None, :], (slope + bd_g)[:, None, None, :]

    def capacitances(self, v: np.ndarray) -> np.ndarray:
        vd = v[:, 0, :]
        _, slope = self.evaluate(v)
        cj = depletion(vd, self.p("CJO"), self.p("VJ"), self.p("M"), self.p("FC"))
        return (cj + self.p("TT") * slope[:, 0, 0, :])[:, None, :]

    def report(self, v: np.ndarray, xe: np.ndarray, index: int) -> dict[str, float | str]:
        current, slope = self.evaluate(v[:1])
        vd, i_d = float(v[0, 0, index]), float(current[0, 0, index])
        bv = float(self.p("BV")[0, index])
        region = "forward" if i_d > 1e-9 else "breakdown" if vd < -0.9 * bv else "reverse"
        return {"id": i_d, "vd": vd, "gd": float(slope[0, 0, 0, index]), "region": region}


_RESISTORS = (("a", "RS"),)


def _build(diodes: list[el.Diode], st) -> DiodeBank:
    row = st.layout.row
    anodes = [inner_row(d, "a", "RS", st) for d in diodes]
    jp, jn = np.array([anodes]), np.array([[row(d.k) for d in diodes]])
    return DiodeBank(names=tuple(d.name for d in diodes), polarity=np.ones(len(diodes)),
                     params=param_arrays([d.model for d in diodes], KEYS), jp=jp, jn=jn,
                     src=jp.copy(), dst=jn.copy(), cap_a=jp.copy(), cap_b=jn.copy(),
                     ext=np.array([[row(d.a) for d in diodes], jn[0]]))


register_family(Family("diode", el.Diode, lambda d: internal_nodes(d, _RESISTORS), _build))
