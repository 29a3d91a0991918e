"""The diode's equations (devices/diode.py) for one member: junction (1, D), params (P, D)."""

from __future__ import annotations

from kitleaf.engine.devices.base import GMIN
from kitleaf.engine.kernels import kernel
from kitleaf.engine.kernels.junction import (
    THERMAL,
    breakdown,
    breakdown_limit,
    depletion,
    explin,
    pnjlim,
    vcrit,
)

KEYS = ("IS", "N", "CJO", "VJ", "M", "FC", "TT", "BV", "IBV")  # the rows of ``p``
IS, N, CJO, VJ, M, FC, TT, BV, IBV = range(len(KEYS))


@kernel
def _one(vd, p, d):
    """Current and slope of diode ``d`` at ``vd``."""
    n_vt = p[N, d] * THERMAL
    e, de = explin(vd / n_vt)
    bd_i, bd_g = breakdown(vd, p[BV, d], p[IBV, d], n_vt)
    return p[IS, d] * (e - 1.0) + GMIN * vd + bd_i, p[IS, d] * de / n_vt + GMIN + bd_g


@kernel
def evaluate(v, p, current, slope):
    """Currents (1, D) and slopes (1, 1, D) at junction voltages ``v`` (1, D)."""
    for d in range(v.shape[1]):
        current[0, d], slope[0, 0, d] = _one(v[0, d], p, d)


@kernel
def limit(vnew, vold, p, out):
    for d in range(vnew.shape[1]):
        n_vt = p[N, d] * THERMAL
        crit = vcrit(n_vt, p[IS, d])
        limited = pnjlim(vnew[0, d], vold[0, d], n_vt, crit)
        out[0, d] = breakdown_limit(limited, vold[0, d], p[BV, d], n_vt, crit)


@kernel
def capacitances(v, p, out):
    for d in range(v.shape[1]):
        _, g = _one(v[0, d], p, d)
        cj = depletion(v[0, d], p[CJO, d], p[VJ, d], p[M, d], p[FC, d])
        out[0, d] = cj + p[TT, d] * g
