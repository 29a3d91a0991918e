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
own rails; the current through ROUT is limited softly to ILIM (plus a thousandth of what
ROUT alone would pass). Below a working supply that window shrinks toward the
middle of the rails, so the output never leaves them when the supply collapses or reverses.
The supply pins draw IQ tanh(vs / IQ_FADE) (vs = vpos - vneg: the quiescent current fades
below a volt or two) and, reversed, the chip's substrate diode conducts from vneg to vpos; IB
flows into each input and on to vneg (negative: out of the input, as from a PNP input pair).
"""

from __future__ import annotations

import math

import numpy as np

from kitleaf.engine import elements as el
from kitleaf.engine.devices import Family, register_family
from kitleaf.engine.devices.base import VT, Bank, internal, param_arrays
from kitleaf.engine.models import DEFAULTS

KEYS = tuple(DEFAULTS["opamp"])
R1 = 1e3  # ohms; sets the scale of the internal node, which carries AOL * (v+ - v-)
H_MIN = 0.1  # volts; half-swing at the smallest supply that still reaches it
H_FLOOR = 1e-3  # volts; half-swing of a chip with no supply or a reversed one
IQ_FADE = 1.0  # volts of supply over which the quiescent current fades in (tanh scale)
SUB_KNEE = 0.6  # volts; a reversed supply's substrate diode turns on here
SUB_R = 10.0  # ohms; the chip's resistance to a reversed supply once that diode conducts
LINEAR_U = 2.0  # |(x - vmid) / h| beyond this the output reports saturated
DEEP_U = 20.0  # beyond this tanh is flat to double precision
CLAMP_U = 4.0  # x is held within vmid +- CLAMP_U h (tanh(4) is within 0.07 % of the rail)
CLAMP_WIDTH = 0.2  # volts; the clamp's knee
CLAMP_OVERDRIVE = 1.0  # volts past the clamp at which it sinks the whole slew current
# Beyond its current limit the output keeps this share of 1/ROUT, so an output driven far
# past the limit (a short, or a Newton iterate far from the solution) never floats.
LIMIT_FLOOR = 1e-3
_JUNCTIONS = 5  # x, vpos, vneg, out (to ground), v+ - v-


def _window(vpos, vneg, p) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """The middle of the output's range and its half-width, with their slopes on the supply
    vs = vpos - vneg (each also moves half with either rail through the rails' middle).

    Normally the range is the rails less SWING_LO and SWING_HI; below the working supply
    (both margins plus 2 H_MIN) it shrinks in proportion toward the middle of the rails, and a
    dead or reversed chip's output sits there, H_FLOOR wide."""
    vs = vpos - vneg
    skew = (p("SWING_LO") - p("SWING_HI")) / 2.0
    working = p("SWING_HI") + p("SWING_LO") + 2.0 * H_MIN
    rho = np.clip(vs / working, 0.0, 1.0)
    d_rho = np.where((vs > 0.0) & (vs < working), 1.0 / working, 0.0)
    h_raw = (vs - p("SWING_HI") - p("SWING_LO")) / 2.0
    h = np.maximum(np.maximum(h_raw, H_MIN * rho), H_FLOOR)
    d_h = np.where(h_raw >= np.maximum(H_MIN * rho, H_FLOOR), 0.5,
                   np.where(H_MIN * rho > H_FLOOR, H_MIN * d_rho, 0.0))
    return (vpos + vneg) / 2.0 + skew * rho, h, skew * d_rho, d_h


def swing(x, vpos, vneg, p, window=None) -> tuple[np.ndarray, ...]:
    """(f, df/dx, df/dvpos, df/dvneg, u): the soft-limited output and its partials
    (``window``: ``_window``'s answer for these rails, when the caller has it)."""
    vmid, h, d_mid, d_h = _window(vpos, vneg, p) if window is None else window
    u = (x - vmid) / h
    t = np.tanh(u)
    s = 1.0 - t * t
    on_mid, on_h = 1.0 - s, t - u * s  # df/dvmid and df/dh
    return (vmid + h * t, s, (0.5 + d_mid) * on_mid + d_h * on_h,
            (0.5 - d_mid) * on_mid - d_h * on_h, u)


def supply_current(vpos, vneg, p) -> tuple[np.ndarray, np.ndarray]:
    """The current from vpos into vneg and its slope on vs: the quiescent current, fading
    below a volt or two of supply, less a reversed supply's substrate diode (a softplus: an
    exponential below SUB_KNEE, SUB_R beyond it)."""
    vs = vpos - vneg
    fade = np.tanh(vs / IQ_FADE)
    z = (-vs - SUB_KNEE) / VT
    soft = np.maximum(z, 0.0) + np.log1p(np.exp(-np.abs(z)))
    sigmoid = np.exp(np.minimum(z, 0.0)) / (1.0 + np.exp(-np.abs(z)))
    current = p("IQ") * fade - VT / SUB_R * soft
    return current, p("IQ") * (1.0 - fade * fade) / IQ_FADE + sigmoid / SUB_R


def compensation(p) -> np.ndarray:
    """C1, the internal node's capacitance: its pole with R1 sits at GBW / AOL."""
    return p("AOL") / (2.0 * math.pi * p("GBW") * R1)


def slew_current(p) -> np.ndarray:
    """The input stage's largest current: SR C1."""
    return p("SR") * compensation(p)


def softplus(z: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """log(1 + e^z) and its slope, without overflow."""
    e = np.exp(-np.abs(z))
    return np.maximum(z, 0.0) + np.log1p(e), np.where(z >= 0, 1.0, e) / (1.0 + e)


def clamp(x, vpos, vneg, p, window=None) -> tuple[np.ndarray, ...]:
    """The clamp's current from x to vneg, holding x within vmid +- CLAMP_U h, and its
    partials by x, vpos and vneg (``window`` as for ``swing``)."""
    vmid, h, d_mid, d_h = _window(vpos, vneg, p) if window is None else window
    g = slew_current(p) / CLAMP_OVERDRIVE
    over, s_over = softplus((x - vmid - CLAMP_U * h) / CLAMP_WIDTH)
    under, s_under = softplus((vmid - CLAMP_U * h - x) / CLAMP_WIDTH)
    # the bounds vmid +- CLAMP_U h move with each rail: vmid by 0.5 +- d_mid, h by +-d_h
    hi_pos, hi_neg = 0.5 + d_mid + CLAMP_U * d_h, 0.5 - d_mid - CLAMP_U * d_h
    lo_pos, lo_neg = 0.5 + d_mid - CLAMP_U * d_h, 0.5 - d_mid + CLAMP_U * d_h
    d_pos = -g * (s_over * hi_pos + s_under * lo_pos)
    d_neg = -g * (s_over * hi_neg + s_under * lo_neg)
    return g * CLAMP_WIDTH * (over - under), g * (s_over + s_under), d_pos, d_neg


class OpAmpBank(Bank):
    """Junctions (x, vpos, vneg, out against ground; v+ - v-). Currents: ground -> out through
    ROUT (current-limited), vpos -> vneg (the supply pins'), vneg -> x from the input stage,
    x -> vneg through the clamp."""

    def initial(self) -> np.ndarray:
        zero = np.zeros_like(self.p("AOL"))
        return np.stack([zero] * _JUNCTIONS, axis=1)

    def limit(self, vnew: np.ndarray, vold: np.ndarray) -> np.ndarray:
        """Keep Newton off the flat of the tanh: outside |u| < 1 the evaluation point moves
        at most one unit of u per step, except that once saturated (|u| >= 2) it may double
        its distance per step on the same side, is free when deep (|u| > 20), and a step deep
        onto the other side lands at its saturation (|u| = 2)."""
        vnew = self._limit_input(vnew, vold)
        vmid, h, _, _ = _window(vnew[:, 1], vnew[:, 2], self.p)
        u_new, u_old = (vnew[:, 0] - vmid) / h, (vold[:, 0] - vmid) / h
        if np.all(np.abs(u_new) <= 1.0):  # the usual case: nothing to limit
            return vnew
        stepped = u_old + np.clip(u_new - u_old, -1.0, 1.0)
        saturated = (np.sign(u_new) == np.sign(u_old)) & (np.abs(u_old) >= LINEAR_U)
        reach = np.where(np.abs(u_old) > DEEP_U, np.inf, 2.0 * np.abs(u_old))
        doubled = np.sign(u_new) * np.minimum(np.abs(u_new), reach)
        # from one flat deep onto the other (a supply that collapsed or reversed shrinks the
        # window a hundredfold): land where the other side saturates and double from there
        across = (np.sign(u_new) != np.sign(u_old)) & (np.abs(u_new) > DEEP_U)
        stepped = np.where(across, np.sign(u_new) * LINEAR_U, stepped)
        u = np.where(np.abs(u_new) <= 1.0, u_new, np.where(saturated, doubled, stepped))
        out = vnew.copy()
        out[:, 0] = np.where(u == u_new, vnew[:, 0], vmid + u * h)
        return out

    def _limit_input(self, vnew: np.ndarray, vold: np.ndarray) -> np.ndarray:
        """Off the input stage's linear range (|v+ - v-| beyond SR / (2 pi GBW)) the
        differential input moves at most that range per step, so Newton does not leap onto
        the flat of its tanh, where the loop would lose its gain."""
        if vnew.shape[1] < _JUNCTIONS:  # the output junctions alone (a caller's own check)
            return vnew
        reach = slew_current(self.p) * R1 / self.p("AOL")
        step = vnew[:, 4] - vold[:, 4]
        if np.all((np.abs(vnew[:, 4]) <= reach) | (np.abs(step) <= reach)):
            return vnew
        out = vnew.copy()
        out[:, 4] = np.where(np.abs(vnew[:, 4]) <= reach, vnew[:, 4],
                             vold[:, 4] + np.clip(step, -reach, reach))
        return out

    def evaluate(self, v: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        x, vpos, vneg, out, vd = (v[:, i] for i in range(_JUNCTIONS))
        window = _window(vpos, vneg, self.p)
        f, d_x, d_pos, d_neg, _ = swing(x, vpos, vneg, self.p, window)
        rout, ilim = self.p("ROUT"), self.p("ILIM")
        drive = np.tanh((f - out) / (rout * ilim))
        g_out = (1.0 - drive * drive + LIMIT_FLOOR) / rout
        i_s, g_s = supply_current(vpos, vneg, self.p)
        isr = slew_current(self.p)
        stage = np.tanh(self.p("AOL") / R1 * vd / isr)
        g_in = self.p("AOL") / R1 * (1.0 - stage * stage)
        i_clamp, c_x, c_pos, c_neg = clamp(x, vpos, vneg, self.p, window)
        zero = np.zeros_like(g_s)
        slope = np.stack([
            np.stack([g_out * d_x, g_out * d_pos, g_out * d_neg, -g_out, zero], axis=1),
            np.stack([zero, g_s, -g_s, zero, zero], axis=1),
            np.stack([zero, zero, zero, zero, g_in], axis=1),
            np.stack([c_x, c_pos, c_neg, zero, zero], axis=1)], axis=1)
        currents = np.stack([ilim * drive + LIMIT_FLOOR * (f - out) / rout, i_s, isr * stage,
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
    """Input resistance, the gain stage's load and input bias currents; returns the row of x."""
    row, m = st.layout.row, u.model
    x, vneg = row(internal(u.name, "x")), row(u.vneg)
    st.conductance(None, row(u.inp), row(u.inn), 1.0 / m.get("RIN"))
    # x rests at mid-supply for zero input: x - vneg = AOL (v+ - v-) + (vpos - vneg) / 2
    st.transconductance(vneg, x, row(u.vpos), vneg, 0.5 / R1)
    st.conductance(None, x, vneg, 1.0 / R1)
    st.capacitance(None, x, vneg, float(compensation(m.get)))
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
                     src=np.stack([ground, vpos, vneg, x]), dst=np.stack([out, vneg, x, vneg]),
                     cap_a=np.zeros((0, len(parts)), int), cap_b=np.zeros((0, len(parts)), int),
                     ext=ext)


register_family(Family("opamp", el.OpAmp, _internal_nodes, _build))
