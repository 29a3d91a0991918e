"""Scalar forms of the shared junction equations (devices/base.py), for the kernels."""

from __future__ import annotations

import math

from kitleaf.engine.devices.base import VT
from kitleaf.engine.kernels import kernel

EXP_CAP = 80.0
SQRT2 = math.sqrt(2.0)
THERMAL = VT


@kernel
def explin(arg):
    """exp(arg) continued linearly above exp(80), and its slope."""
    capped = min(arg, EXP_CAP)
    value = math.exp(capped)
    return value * (1.0 + (arg - capped)), value


@kernel
def breakdown(v, bv, ibv, n_vt):
    """The reverse breakdown current and its slope; zero where ``bv`` is infinite."""
    if not math.isfinite(bv):
        return 0.0, 0.0
    e, de = explin(-(v + bv) / n_vt)
    return -ibv * e, ibv * de / n_vt


@kernel
def pnjlim(vnew, vold, vt, vcrit):
    """SPICE's junction limiting of one voltage."""
    if not (vnew > vcrit and abs(vnew - vold) > 2.0 * vt):
        return vnew
    if vold > 0:
        arg = 1.0 + (vnew - vold) / vt
        return vold + vt * math.log(max(arg, 1e-300)) if arg > 0 else vcrit
    return vt * math.log(max(vnew / vt, 1e-300))


@kernel
def breakdown_limit(vnew, vold, bv, n_vt, crit):
    """The limiting of a step deep into reverse breakdown (``bv`` infinite: none)."""
    if not math.isfinite(bv) or not vnew < min(0.0, -bv + 10.0 * n_vt):
        return vnew
    mirrored = -(vnew + bv)
    limited = pnjlim(mirrored, -(vold + bv), n_vt, crit)
    return -(limited + bv) if limited != mirrored else vnew


@kernel
def vcrit(n_vt, i_sat):
    return n_vt * math.log(n_vt / (SQRT2 * i_sat))


@kernel
def depletion(v, cj0, vj, m, fc):
    """Depletion capacitance, linear above fc*vj."""
    if v < fc * vj:
        return cj0 * (1.0 - v / vj) ** (-m)
    return cj0 / (1.0 - fc) ** (1.0 + m) * (1.0 - fc * (1.0 + m) + m * v / vj)
