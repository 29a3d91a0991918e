"""Op-amp macro-model: input resistance, slew-limited one-pole gain stage, clamped internal
node, soft-limited output near its rails with an output current limit.

Per amplifier: RIN between the inputs; an input stage driving ISR tanh(gm (v+ - v-) / ISR)
into an internal node x (gm = AOL/R1; ISR = SR C1, so x, and the output with it, can move at
most SR volts per second: the slew rate), loaded by R1 || C1 to the negative rail (DC gain
AOL, pole at GBW/AOL) and offset so x rests at mid-supply for zero input. x is clamped a few
half-swings beyond the output's range (a real gain stage cannot wind up past its rails), so
the output leaves clipping within microseconds. The output is f(x) behind ROUT, where
f = vmid + h * tanh((x - vmid) / h) swings softly between vneg + SWING_LO and
vpos - SWING_HI (vmid their middle, h half their distance), so clipping follows the op-amp's
own rails; the current through ROUT is limited softly to ILIM (plus a thousandth of
what ROUT alone would pass). IQ flows from vpos to vneg,
and IB into each input and on to vneg (negative: out of the input, as from a PNP input pair).
"""

from __future__ import annotations

import math

import numpy as np

from kitleaf.engine import elements as el
from kitleaf.engine.devices import Family, register_family
from kitleaf.engine.devices.base import Bank, internal, param_arrays
from kitleaf.engine.models import DEFAULTS

KEYS = tuple(DEFAULTS["opamp"])
R1 = 1e3  # ohms; sets the scale of the internal node, which carries AOL * (v+ - v-)
H_MIN = 0.1  # volts; floor of the half-swing while the rails are still coming up
LINEAR_U = 2.0  # |(x - vmid) / h| beyond this the output reports saturated
DEEP_U = 20.0  # beyond this tanh is flat to double precision
CLAMP_U = 4.0  # x is held within vmid +- CLAMP_U h (tanh(4) is within 0.07 % of the rail)
CLAMP_WIDTH = 0.05  # volts; the clamp's knee
CLAMP_OVERDRIVE = 0.1  # volts past the clamp at which it sinks the whole slew current
# Beyond its current limit the output keeps this share of 1/ROUT, so an output driven far
# past the limit (a short, or a Newton iterate far from the solution) never floats.
LIMIT_FLOOR = 1e-3
_JUNCTIONS = 5  # x, vpos, vneg (to ground), out (to ground), v+ - v-


def _window(vpos, vneg, p) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The middle of the output's range, its half-width and that half-width floored."""
    vhi, vlo = vpos - p("SWING_HI"), vneg + p("SWING_LO")
    h_raw = (vhi - vlo) / 2.0
    return (vhi + vlo) / 2.0, h_raw, np.maximum(h_raw, H_MIN)


def swing(x, vpos, vneg, p) -> tuple[np.ndarray, ...]:
    """(f, df/dx, df/dvpos, df/dvneg, u): the soft-limited output and its partials."""
    vmid, h_raw, h = _window(vpos, vneg, p)
    u = (x - vmid) / h
    t = np.tanh(u)
    s = 1.0 - t * t
    d_h = np.where(h_raw > H_MIN, t - u * s, 0.0) / 2.0
    return vmid + h * t, s, (1.0 - s) / 2.0 + d_h, (1.0 - s) / 2.0 - d_h, u


def compensation(p) -> np.ndarray:
    """C1, the internal node's capacitance: its pole with R1 sits at GBW / AOL."""
    return p("AOL") / (2.0 * math.pi * p("GBW") * R1)


def slew_current(p) -> np.ndarray:
    """The input stage's largest current: SR C1."""
    return p("SR") * compensation(p)


def _softplus(z: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """log(1 + e^z) and its slope, without overflow."""
    e = np.exp(-np.abs(z))
    return np.maximum(z, 0.0) + np.log1p(e), np.where(z >= 0, 1.0, e) / (1.0 + e)


def clamp(x, vpos, vneg, p) -> tuple[np.ndarray, ...]:
    """The clamp's current from x to vneg and its partials by x, vpos, vneg."""
    vmid, h_raw, h = _window(vpos, vneg, p)
    g = slew_current(p) / CLAMP_OVERDRIVE
    over, d_over = _softplus((x - vmid - CLAMP_U * h) / CLAMP_WIDTH)
    under, d_under = _softplus((vmid - CLAMP_U * h - x) / CLAMP_WIDTH)
    current = g * CLAMP_WIDTH * (over - under)
    d_x = g * (d_over + d_under)
    dh = np.where(h_raw > H_MIN, 0.5, 0.0)  # dh/dvpos; dh/dvneg is its negative
    # d(vmid +- CLAMP_U h)/dvpos = 0.5 +- CLAMP_U dh, and 0.5 -+ CLAMP_U dh by vneg
    d_pos = -g * (d_over * (0.5 + CLAMP_U * dh) - d_under * (0.5 - CLAMP_U * dh))
    d_neg = -g * (d_over * (0.5 - CLAMP_U * dh) - d_under * (0.5 + CLAMP_U * dh))
    return current, d_x, d_pos, d_neg


class OpAmpBank(Bank):
    """Junctions (x, vpos, vneg, out against ground; v+ - v-). Currents: ground -> out through
    ROUT (current-limited), vneg -> x from the input stage, x -> vneg through the clamp."""

    def initial(self) -> np.ndarray:
        zero = np.zeros_like(self.p("AOL"))
        return np.stack([zero] * _JUNCTIONS, axis=1)

    def limit(self, vnew: np.ndarray, vold: np.ndarray) -> np.ndarray:
        """Keep Newton off the flat of the tanh: outside |u| < 1 the evaluation point moves
        at most one unit of u per step, except that once saturated (|u| >= 2) it may double
        its distance per step on the same side, and is free when deep (|u| > 20)."""
        vmid, _, h = _window(vnew[:, 1], vnew[:, 2], self.p)
        u_new, u_old = (vnew[:, 0] - vmid) / h, (vold[:, 0] - vmid) / h
        if np.all(np.abs(u_new) <= 1.0):  # the usual case: nothing to limit
            return vnew
        stepped = u_old + np.clip(u_new - u_old, -1.0, 1.0)
        saturated = (np.sign(u_new) == np.sign(u_old)) & (np.abs(u_old) >= LINEAR_U)
        reach = np.where(np.abs(u_old) > DEEP_U, np.inf, 2.0 * np.abs(u_old))
        doubled = np.sign(u_new) * np.minimum(np.abs(u_new), reach)
        u = np.where(np.abs(u_new) <= 1.0, u_new, np.where(saturated, doubled, stepped))
        out = vnew.copy()
        out[:, 0] = np.where(u == u_new, vnew[:, 0], vmid + u * h)
        return out

    def evaluate(self, v: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        x, vpos, vneg, out, vd = (v[:, i] for i in range(_JUNCTIONS))
        f, d_x, d_pos, d_neg, _ = swing(x, vpos, vneg, self.p)
        rout, ilim = self.p("ROUT"), self.p("ILIM")
        drive = np.tanh((f - out) / (rout * ilim))
        g_out = (1.0 - drive * drive + LIMIT_FLOOR) / rout
        isr = slew_current(self.p)
        stage = np.tanh(self.p("AOL") / R1 * vd / isr)
        g_in = self.p("AOL") / R1 * (1.0 - stage * stage)
        i_clamp, c_x, c_pos, c_neg = clamp(x, vpos, vneg, self.p)
        zero = np.zeros_like(g_out)
        slope = np.stack([
            np.stack([g_out * d_x, g_out * d_pos, g_out * d_neg, -g_out, zero], axis=1),
            np.stack([zero, zero, zero, zero, g_in], axis=1),
            np.stack([c_x, c_pos, c_neg, zero, zero], axis=1)], axis=1)
        currents = np.stack([ilim * drive + LIMIT_FLOOR * (f - out) / rout, isr * stage,
                             i_clamp], axis=1)
        return currents, slope

    def capacitances(self, v: np.ndarray) -> np.ndarray:
        return np.zeros((v.shape[0], 0, v.shape[2]))

    def report(self, v: np.ndarray, xe: np.ndarray, index: int) -> dict[str, float | str]:
        inp, inn, out, vpos, vneg = (float(a) for a in self.terminal_voltages(xe)[:, index])
        p = {k: float(a[0, index]) for k, a in self.params.items()}
        *_, u = swing(v[0, 0, index], v[0, 1, index], v[0, 2, index], lambda k: p[k])
        out_max, out_min = vpos - p["SWING_HI"], vneg + p["SWING_LO"]
        vcm = (inp + inn) / 2.0
        cm_min, cm_max = vneg + p["CM_LO"], vpos - p["CM_HI"]
        region = "linear" if abs(u) < LINEAR_U else "saturated_high" if u > 0 else "saturated_low"
        return {"vout": out, "vpos": vpos, "vneg": vneg, "out_max": out_max,
                "out_min": out_min, "headroom_hi": out_max - out, "headroom_lo": out - out_min,
                "headroom": min(out_max - out, out - out_min), "vcm": vcm, "cm_min": cm_min,
                "cm_max": cm_max, "cm_ok": cm_min <= vcm <= cm_max, "vdiff": inp - inn,
                "region": region}


def _internal_nodes(u: el.OpAmp) -> tuple[str, ...]:
    return (internal(u.name, "x"),)


def _stamp_linear(u: el.OpAmp, st) -> int:
    """Input resistance, the gain stage's load, quiescent and input bias currents; returns
    the row of x."""
    row, m = st.layout.row, u.model
    x, vneg = row(internal(u.name, "x")), row(u.vneg)
    st.conductance(None, row(u.inp), row(u.inn), 1.0 / m.get("RIN"))
    # x rests at mid-supply for zero input: x - vneg = AOL (v+ - v-) + (vpos - vneg) / 2
    st.transconductance(vneg, x, row(u.vpos), vneg, 0.5 / R1)
    st.conductance(None, x, vneg, 1.0 / R1)
    st.capacitance(None, x, vneg, float(compensation(m.get)))
    st.source(internal(u.name, "iq"), ((row(u.vpos), -1.0), (vneg, 1.0)), m.get("IQ"))
    for pin in ("inp", "inn"):  # each input's bias current, drawn through what biases it
        st.source(internal(u.name, f"ib-{pin}"), ((row(getattr(u, pin)), -1.0), (vneg, 1.0)),
                  m.get("IB"))
    return x


def _build(parts: list[el.OpAmp], st) -> OpAmpBank:
    row = st.layout.row
    x = np.array([_stamp_linear(u, st) for u in parts])
    vpos, vneg = np.array([row(u.vpos) for u in parts]), np.array([row(u.vneg) for u in parts])
    out, inp = np.array([row(u.out) for u in parts]), np.array([row(u.inp) for u in parts])
    inn = np.array([row(u.inn) for u in parts])
    ground = np.full(len(parts), st.layout.size)
    ext = np.array([[row(getattr(u, t)) for u in parts]
                    for t in ("inp", "inn", "out", "vpos", "vneg")])
    return OpAmpBank(names=tuple(u.name for u in parts), polarity=np.ones(len(parts)),
                     params=param_arrays([u.model for u in parts], KEYS),
                     jp=np.stack([x, vpos, vneg, out, inp]),
                     jn=np.stack([ground, ground, ground, ground, inn]),
                     src=np.stack([ground, vneg, x]), dst=np.stack([out, x, vneg]),
                     cap_a=np.zeros((0, len(parts)), int), cap_b=np.zeros((0, len(parts)), int),
                     ext=ext)


register_family(Family("opamp", el.OpAmp, _internal_nodes, _build))
