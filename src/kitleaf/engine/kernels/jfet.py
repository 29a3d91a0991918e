"""The level-1 JFET (devices/jfet.py) for one member: junctions (vgs, vgd) x D."""

from __future__ import annotations

from kitleaf.engine.devices.base import GMIN
from kitleaf.engine.devices.jfet import GATE_GRADING
from kitleaf.engine.kernels import kernel
from kitleaf.engine.kernels.junction import THERMAL, depletion, explin, pnjlim, vcrit

KEYS = ("IS", "N", "VTO", "BETA", "LAMBDA", "CGS", "CGD", "PB", "FC")  # the rows of ``p``
IS, N, VTO, BETA, LAMBDA, CGS, CGD, PB, FC = range(len(KEYS))


@kernel
def _square_law(vg_s, vg_d, vto, beta, lam):
    """Drain current for vds >= 0 and its partials on (vg_s, vg_d)."""
    vds, vgst = vg_s - vg_d, vg_s - vto
    if not vgst > 0:
        return 0.0, 0.0, 0.0
    betap = beta * (1.0 + lam * vds)
    if vgst <= vds:
        gm, gds = 2.0 * betap * vgst, lam * beta * vgst * vgst
        current = betap * vgst * vgst
    else:
        gm = 2.0 * betap * vds
        gds = beta * lam * vds * (2.0 * vgst - vds) + betap * 2.0 * (vgst - vds)
        current = betap * vds * (2.0 * vgst - vds)
    return current, gm + gds, -gds


@kernel
def _channel(vgs, vgd, vto, beta, lam):
    """Drain-to-source current and partials; source and drain swap when vds < 0."""
    if vgs >= vgd:
        return _square_law(vgs, vgd, vto, beta, lam)
    current, d_first, d_second = _square_law(vgd, vgs, vto, beta, lam)
    return -current, -d_second, -d_first


@kernel
def evaluate(v, p, current, slope):
    """Currents (3, D): g->s, g->d, d->s; slopes (3, 2, D)."""
    for d in range(v.shape[1]):
        n_vt = p[N, d] * THERMAL
        for j in range(2):
            e, de = explin(v[j, d] / n_vt)
            current[j, d] = p[IS, d] * (e - 1.0) + GMIN * v[j, d]
            slope[j, j, d] = p[IS, d] * de / n_vt + GMIN
            slope[j, 1 - j, d] = 0.0
        ids, d_s, d_d = _channel(v[0, d], v[1, d], p[VTO, d], p[BETA, d], p[LAMBDA, d])
        current[2, d], slope[2, 0, d], slope[2, 1, d] = ids, d_s, d_d


@kernel
def limit(vnew, vold, p, out):
    for d in range(vnew.shape[1]):
        n_vt = p[N, d] * THERMAL
        crit = vcrit(n_vt, p[IS, d])
        for j in range(2):
            out[j, d] = pnjlim(vnew[j, d], vold[j, d], n_vt, crit)


@kernel
def capacitances(v, p, out):
    for d in range(v.shape[1]):
        out[0, d] = depletion(v[0, d], p[CGS, d], p[PB, d], GATE_GRADING, p[FC, d])
        out[1, d] = depletion(v[1, d], p[CGD, d], p[PB, d], GATE_GRADING, p[FC, d])
