"""The op-amp macro-model (devices/opamp.py) for one member: junctions (x, vpos, vneg, out,
v+ - v-) x D; currents ROUT's, the supply pins', the input stage's, the clamp's."""

from __future__ import annotations

import math

from kitleaf.engine.devices import opamp as ref
from kitleaf.engine.kernels import kernel
from kitleaf.engine.kernels.junction import THERMAL
from kitleaf.engine.kernels.linalg import copy_matrix

KEYS = ("SWING_LO", "SWING_HI", "ROUT", "ILIM", "IQ", "AOL", "GBW", "SR")  # the rows of ``p``
SWING_LO, SWING_HI, ROUT, ILIM, IQ, AOL, GBW, SR = range(len(KEYS))
R1, H_MIN, H_FLOOR, IQ_FADE = ref.R1, ref.H_MIN, ref.H_FLOOR, ref.IQ_FADE
SUB_KNEE, SUB_R, LINEAR_U, DEEP_U = ref.SUB_KNEE, ref.SUB_R, ref.LINEAR_U, ref.DEEP_U
CLAMP_U, CLAMP_WIDTH, CLAMP_OVERDRIVE = ref.CLAMP_U, ref.CLAMP_WIDTH, ref.CLAMP_OVERDRIVE
LIMIT_FLOOR, TWO_PI = ref.LIMIT_FLOOR, 2.0 * math.pi


@kernel
def _window(vpos, vneg, p, d):
    """The output range's middle and half-width, and their slopes on the supply."""
    vs = vpos - vneg
    skew = (p[SWING_LO, d] - p[SWING_HI, d]) / 2.0
    working = p[SWING_HI, d] + p[SWING_LO, d] + 2.0 * H_MIN
    rho = min(max(vs / working, 0.0), 1.0)
    d_rho = 1.0 / working if 0.0 < vs < working else 0.0
    h_raw = (vs - p[SWING_HI, d] - p[SWING_LO, d]) / 2.0
    h = max(max(h_raw, H_MIN * rho), H_FLOOR)
    if h_raw >= max(H_MIN * rho, H_FLOOR):
        d_h = 0.5
    else:
        d_h = H_MIN * d_rho if H_MIN * rho > H_FLOOR else 0.0
    return (vpos + vneg) / 2.0 + skew * rho, h, skew * d_rho, d_h


@kernel
def _slew_current(p, d):
    return p[SR, d] * (p[AOL, d] / (TWO_PI * p[GBW, d] * R1))


@kernel
def _softplus(z):
    e = math.exp(-abs(z))
    return max(z, 0.0) + math.log1p(e), (1.0 if z >= 0 else e) / (1.0 + e)


@kernel
def _clamp(x, vmid, h, d_mid, d_h, g):
    """The clamp's current from x to vneg and its partials by x, vpos and vneg."""
    over, s_over = _softplus((x - vmid - CLAMP_U * h) / CLAMP_WIDTH)
    under, s_under = _softplus((vmid - CLAMP_U * h - x) / CLAMP_WIDTH)
    hi_pos, hi_neg = 0.5 + d_mid + CLAMP_U * d_h, 0.5 - d_mid - CLAMP_U * d_h
    lo_pos, lo_neg = 0.5 + d_mid - CLAMP_U * d_h, 0.5 - d_mid + CLAMP_U * d_h
    return (g * CLAMP_WIDTH * (over - under), g * (s_over + s_under),
            -g * (s_over * hi_pos + s_under * lo_pos), -g * (s_over * hi_neg + s_under * lo_neg))


@kernel
def _supply(vs, p, d):
    """The supply pins' current and its slope on vs (devices/opamp.supply_current)."""
    fade = math.tanh(vs / IQ_FADE)
    z = (-vs - SUB_KNEE) / THERMAL
    soft = max(z, 0.0) + math.log1p(math.exp(-abs(z)))
    sigmoid = math.exp(min(z, 0.0)) / (1.0 + math.exp(-abs(z)))
    return (p[IQ, d] * fade - THERMAL / SUB_R * soft,
            p[IQ, d] * (1.0 - fade * fade) / IQ_FADE + sigmoid / SUB_R)


@kernel
def evaluate(v, p, current, slope):
    """Currents (4, D) and slopes (4, 5, D)."""
    slope[:] = 0.0
    for d in range(v.shape[1]):
        x, vpos, vneg, out, vd = v[0, d], v[1, d], v[2, d], v[3, d], v[4, d]
        vmid, h, d_mid, d_h = _window(vpos, vneg, p, d)
        t = math.tanh((x - vmid) / h)
        s = 1.0 - t * t
        on_mid, on_h = 1.0 - s, t - (x - vmid) / h * s
        f = vmid + h * t
        rout, ilim = p[ROUT, d], p[ILIM, d]
        drive = math.tanh((f - out) / (rout * ilim))
        g_out = (1.0 - drive * drive + LIMIT_FLOOR) / rout
        slope[0, 0, d] = g_out * s
        slope[0, 1, d] = g_out * ((0.5 + d_mid) * on_mid + d_h * on_h)
        slope[0, 2, d] = g_out * ((0.5 - d_mid) * on_mid - d_h * on_h)
        slope[0, 3, d] = -g_out
        current[0, d] = ilim * drive + LIMIT_FLOOR * (f - out) / rout
        current[1, d], g_s = _supply(vpos - vneg, p, d)
        slope[1, 1, d], slope[1, 2, d] = g_s, -g_s
        isr = _slew_current(p, d)
        stage = math.tanh(p[AOL, d] / R1 * vd / isr)
        current[2, d], slope[2, 4, d] = isr * stage, p[AOL, d] / R1 * (1.0 - stage * stage)
        current[3, d], slope[3, 0, d], slope[3, 1, d], slope[3, 2, d] = _clamp(
            x, vmid, h, d_mid, d_h, isr / CLAMP_OVERDRIVE)


@kernel
def _sign(x):
    if x > 0:
        return 1.0
    return -1.0 if x < 0 else x * 0.0


@kernel
def _limit_gain(u_new, u_old):
    """Where the gain node's evaluation point may go (in units of the half-swing)."""
    stepped = u_old + min(max(u_new - u_old, -1.0), 1.0)
    if _sign(u_new) != _sign(u_old) and abs(u_new) > DEEP_U:
        stepped = _sign(u_new) * LINEAR_U
    if _sign(u_new) == _sign(u_old) and abs(u_old) >= LINEAR_U:
        reach = math.inf if abs(u_old) > DEEP_U else 2.0 * abs(u_old)
        return _sign(u_new) * min(abs(u_new), reach)
    return stepped


@kernel
def limit(vnew, vold, p, out):
    """The input stage moves at most its linear range per step off it; the gain node keeps
    off the tanh's flat (devices/opamp.OpAmpBank.limit)."""
    copy_matrix(vnew, out)
    for d in range(vnew.shape[1]):
        reach = _slew_current(p, d) * R1 / p[AOL, d]
        step = vnew[4, d] - vold[4, d]
        if not (abs(vnew[4, d]) <= reach or abs(step) <= reach):
            out[4, d] = vold[4, d] + min(max(step, -reach), reach)
        vmid, h, _, _ = _window(vnew[1, d], vnew[2, d], p, d)
        u_new, u_old = (vnew[0, d] - vmid) / h, (vold[0, d] - vmid) / h
        if not abs(u_new) <= 1.0:
            u = _limit_gain(u_new, u_old)
            if u != u_new:
                out[0, d] = vmid + u * h


@kernel
def capacitances(v, p, out):
    """None: the op-amp's capacitance is its gain node's, a linear part."""
