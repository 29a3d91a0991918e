"""N- and P-channel JFETs: the Shichman-Hodges square law with gate junctions (SPICE level 1)."""

from __future__ import annotations

import numpy as np

from kitleaf.engine import elements as el
from kitleaf.engine.devices import Family, register_family
from kitleaf.engine.devices.base import (
    GMIN,
    VT,
    Bank,
    depletion,
    explin,
    inner_row,
    internal_nodes,
    param_arrays,
    pnjlim,
    vcrit,
)
from kitleaf.engine.models import DEFAULTS

KEYS = tuple(DEFAULTS["njf"])
GATE_GRADING = 0.5  # the level-1 gate junction is abrupt


def _square_law(vg_s, vg_d, vto, beta, lam):
    """Drain current for vds = vg_s - vg_d >= 0 and its partials on (vg_s, vg_d)."""
    vds, vgst = vg_s - vg_d, vg_s - vto
    on = vgst > 0
    betap = beta * (1.0 + lam * vds)
    sat = vgst <= vds
    i_sat, i_lin = betap * vgst * vgst, betap * vds * (2.0 * vgst - vds)
    gm = np.where(sat, 2.0 * betap * vgst, 2.0 * betap * vds)
    gds = np.where(sat, lam * beta * vgst * vgst,
                   beta * lam * vds * (2.0 * vgst - vds) + betap * 2.0 * (vgst - vds))
    current = np.where(on, np.where(sat, i_sat, i_lin), 0.0)
    gm, gds = np.where(on, gm, 0.0), np.where(on, gds, 0.0)
    return current, gm + gds, -gds


def _channel(vgs, vgd, vto, beta, lam):
    """Drain-to-source current and its partials on (vgs, vgd); when vds < 0 source and drain
    swap roles, so the square law runs once on the pair ordered for it."""
    normal = vgs >= vgd
    first, second = np.where(normal, vgs, vgd), np.where(normal, vgd, vgs)
    current, d_first, d_second = _square_law(first, second, vto, beta, lam)
    return (np.where(normal, current, -current), np.where(normal, d_first, -d_second),
            np.where(normal, d_second, -d_first))


class JfetBank(Bank):
    """Junctions (vgs, vgd); currents g->s, g->d, d->s (channel); caps g-s, g-d."""

    def initial(self) -> np.ndarray:
        """Newton's first guess: the channel half-way on (vgs = VTO / 2) and saturated
        (vds = -VTO), where its current and both slopes are those of a working stage; from
        vgs = vgd the channel would start as a bare resistor with no transconductance. A
        model with VTO >= 0 starts at vgs = 0, vgd = -1 V, its gate junction never forward."""
        vto = self.p("VTO")
        depletion = vto < 0
        return np.stack([np.where(depletion, 0.5 * vto, 0.0),
                         np.where(depletion, 1.5 * vto, -1.0)], axis=1)

    def limit(self, vnew: np.ndarray, vold: np.ndarray) -> np.ndarray:
        n_vt = (self.p("N") * VT)[:, None, :]
        return pnjlim(vnew, vold, n_vt, vcrit(n_vt, self.p("IS")[:, None, :]))

    def evaluate(self, v: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        p = self.p
        n_vt = (p("N") * VT)[:, None, :]
        e, de = explin(v / n_vt)  # both gate junctions at once
        i_gate = p("IS")[:, None, :] * (e - 1.0) + GMIN * v
        g_gate = p("IS")[:, None, :] * de / n_vt + GMIN
        ids, d_s, d_d = _channel(v[:, 0], v[:, 1], p("VTO"), p("BETA"), p("LAMBDA"))
        slope = np.zeros((v.shape[0], 3, 2, v.shape[2]))
        slope[:, 0, 0], slope[:, 1, 1], slope[:, 2, 0], slope[:, 2, 1] = (
            g_gate[:, 0], g_gate[:, 1], d_s, d_d)
        current = np.empty((v.shape[0], 3, v.shape[2]))
        current[:, :2], current[:, 2] = i_gate, ids
        return current, slope

    def capacitances(self, v: np.ndarray) -> np.ndarray:
        p = self.p
        cgs = depletion(v[:, 0], p("CGS"), p("PB"), GATE_GRADING, p("FC"))
        cgd = depletion(v[:, 1], p("CGD"), p("PB"), GATE_GRADING, p("FC"))
        return np.stack([cgs, cgd], axis=1)

    def report(self, v: np.ndarray, xe: np.ndarray, index: int) -> dict[str, float | str]:
        current, slope = self.evaluate(v[:1])
        pol = float(self.polarity[index])
        vd, vg, vs = (float(x) for x in self.terminal_voltages(xe)[:, index])
        d = slope[0, 2, :, index]
        vgs, vgd = float(v[0, 0, index]), float(v[0, 1, index])
        vgst = vgs - float(self.p("VTO")[0, index])
        region = "cutoff" if vgst <= 0 else "saturation" if vgst <= vgs - vgd else "ohmic"
        return {"id": pol * float(current[0, 2, index]), "ig": pol * float(
            current[0, 0, index] + current[0, 1, index]), "vgs": vg - vs, "vds": vd - vs,
            "gm": float(d[0] + d[1]), "gds": float(-d[1]), "region": region}


_RESISTORS = (("d", "RD"), ("s", "RS"))


def _build(parts: list[el.Jfet], st) -> JfetBank:
    d = np.array([inner_row(q, "d", "RD", st) for q in parts])
    s = np.array([inner_row(q, "s", "RS", st) for q in parts])
    g = np.array([st.layout.row(q.g) for q in parts])
    row = st.layout.row
    ext = np.array([[row(q.d) for q in parts], g, [row(q.s) for q in parts]])
    polarity = np.array([1.0 if q.model.kind == "njf" else -1.0 for q in parts])
    return JfetBank(names=tuple(q.name for q in parts), polarity=polarity,
                    params=param_arrays([q.model for q in parts], KEYS),
                    jp=np.stack([g, g]), jn=np.stack([s, d]), src=np.stack([g, g, d]),
                    dst=np.stack([s, d, s]), cap_a=np.stack([g, g]), cap_b=np.stack([s, d]),
                    ext=ext)


register_family(Family("jfet", el.Jfet, lambda q: internal_nodes(q, _RESISTORS), _build))
