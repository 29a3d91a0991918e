"""The Gummel-Poon transistor (devices/bjt.py) for one member: junctions (vbe, vbc) x D."""

from __future__ import annotations

import math

from kitleaf.engine.devices.base import GMIN
from kitleaf.engine.devices.bjt import EBO_AMPS
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

KEYS = ("IS", "ISE", "ISC", "NF", "NR", "NE", "NC", "BF", "BR", "VAF", "VAR", "IKF", "IKR",
        "BVEBO", "TF", "CJE", "VJE", "MJE", "CJC", "VJC", "MJC", "FC")  # the rows of ``p``
(IS, ISE, ISC, NF, NR, NE, NC, BF, BR, VAF, VAR, IKF, IKR, BVEBO, TF, CJE, VJE, MJE, CJC, VJC,
 MJC, FC) = range(len(KEYS))


@kernel
def _exp(v, i_sat, n):
    """One exponential current and its conductance."""
    n_vt = n * THERMAL
    e, de = explin(v / n_vt)
    return i_sat * (e - 1.0), i_sat * de / n_vt


@kernel
def _transport(vbe, vbc, p, d):
    """The forward and reverse currents, their conductances, the base charge qb and its
    partials on vbe and vbc."""
    i0, g0 = _exp(vbe, p[IS, d], p[NF, d])
    i1, g1 = _exp(vbc, p[IS, d], p[NR, d])
    q1 = 1.0 / max(1.0 - vbc / p[VAF, d] - vbe / p[VAR, d], 1e-6)
    q2 = i0 / p[IKF, d] + i1 / p[IKR, d]
    sq = math.sqrt(max(1.0 + 4.0 * q2, 1e-12))
    half = q1 * (1.0 + sq) / 2.0
    return (i0, g0, i1, g1, half, half * q1 / p[VAR, d] + q1 * g0 / p[IKF, d] / sq,
            half * q1 / p[VAF, d] + q1 * g1 / p[IKR, d] / sq)


@kernel
def evaluate(v, p, current, slope):
    """Currents (3, D): b->e, b->c, c->e; slopes (3, 2, D)."""
    for d in range(v.shape[1]):
        vbe, vbc = v[0, d], v[1, d]
        i0, g0, i1, g1, qb, dqb_be, dqb_bc = _transport(vbe, vbc, p, d)
        i2, g2 = _exp(vbe, p[ISE, d], p[NE, d])
        i3, g3 = _exp(vbc, p[ISC, d], p[NC, d])
        ice = (i0 - i1) / qb
        bd_i, bd_g = breakdown(vbe, p[BVEBO, d], EBO_AMPS, THERMAL)
        slope[0, 0, d] = g0 / p[BF, d] + g2 + GMIN + bd_g
        slope[0, 1, d] = 0.0
        slope[1, 0, d] = 0.0
        slope[1, 1, d] = g1 / p[BR, d] + g3 + GMIN
        slope[2, 0, d] = (g0 - ice * dqb_be) / qb
        slope[2, 1, d] = (-g1 - ice * dqb_bc) / qb
        current[0, d] = i0 / p[BF, d] + i2 + GMIN * vbe + bd_i
        current[1, d] = i1 / p[BR, d] + i3 + GMIN * vbc
        current[2, d] = ice


@kernel
def limit(vnew, vold, p, out):
    for d in range(vnew.shape[1]):
        n_be, n_bc = p[NF, d] * THERMAL, p[NR, d] * THERMAL
        crit_be, crit_bc = vcrit(n_be, p[IS, d]), vcrit(n_bc, p[IS, d])
        vbe = pnjlim(vnew[0, d], vold[0, d], n_be, crit_be)
        out[0, d] = breakdown_limit(vbe, vold[0, d], p[BVEBO, d], n_be, crit_be)
        out[1, d] = pnjlim(vnew[1, d], vold[1, d], n_bc, crit_bc)


@kernel
def capacitances(v, p, out):
    """Capacitances (2, D): b-e (depletion and diffusion), b-c."""
    for d in range(v.shape[1]):
        vbe, vbc = v[0, d], v[1, d]
        i0, g0, _, _, qb, dqb_be, _ = _transport(vbe, vbc, p, d)
        diffusion = p[TF, d] * (g0 - i0 / qb * dqb_be) / qb
        out[0, d] = depletion(vbe, p[CJE, d], p[VJE, d], p[MJE, d], p[FC, d]) + diffusion
        out[1, d] = depletion(vbc, p[CJC, d], p[VJC, d], p[MJC, d], p[FC, d])
