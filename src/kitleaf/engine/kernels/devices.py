"""Every device family of one member, linearised and stamped onto its kept rows.

The families sit in fixed slots (diode, BJT, JFET, op-amp); ``fam`` holds, as homogeneous
tuples over the slots, their rows (jp, jn, src, dst), polarity, parameters (members or 1,
keys, devices) and scratch space (raw and limited junction voltages, currents, slopes), then
each slot's first capacitance column and count. Rows at or
past the kept count (ground, the fixed nodes) take no stamp, as in nonlinear.Devices.
"""

from __future__ import annotations

from kitleaf.engine.kernels import bjt, diode, inlined, jfet, opamp

SLOTS = (diode, bjt, jfet, opamp)  # the family of each slot, in this order


@inlined
def evaluate(slot, v, p, current, slope):
    if slot == 0:
        diode.evaluate(v, p, current, slope)
    elif slot == 1:
        bjt.evaluate(v, p, current, slope)
    elif slot == 2:
        jfet.evaluate(v, p, current, slope)
    else:
        opamp.evaluate(v, p, current, slope)


@inlined
def limit(slot, vnew, vold, p, out):
    if slot == 0:
        diode.limit(vnew, vold, p, out)
    elif slot == 1:
        bjt.limit(vnew, vold, p, out)
    elif slot == 2:
        jfet.limit(vnew, vold, p, out)
    else:
        opamp.limit(vnew, vold, p, out)


@inlined
def capacitances(slot, v, p, out):
    if slot == 0:
        diode.capacitances(v, p, out)
    elif slot == 1:
        bjt.capacitances(v, p, out)
    elif slot == 2:
        jfet.capacitances(v, p, out)


@inlined
def junctions(xe, jp, jn, polarity, out):
    """Device-frame junction voltages (k, D) from the extended rows ``xe``."""
    for j in range(jp.shape[0]):
        for d in range(jp.shape[1]):
            out[j, d] = (xe[jp[j, d]] - xe[jn[j, d]]) * polarity[d]


@inlined
def params_of(params, member):
    """A member's parameters (keys, D): shared ones are stored once."""
    return params[member] if params.shape[0] > 1 else params[0]


@inlined
def linearise(fam, member, xe, vstar, residual, jac):
    """Adds every device's tangent current at its limited junction voltages to
    ``residual`` and its slopes to ``jac``; ``vstar`` (per slot, (k, D) of this member)
    takes the limited voltages. True when a junction was limited. (Each slot by a constant
    index: a tuple read at a varying index costs more than the device's equations.)"""
    limited = False
    if fam[0][0].shape[1]:  # an empty slot costs nothing
        limited |= _slot(0, member, fam[0][0], fam[1][0], fam[2][0], fam[3][0],
                         fam[4][0], fam[5][0], (fam[6][0], fam[7][0], fam[8][0], fam[9][0]),
                         vstar[0], xe, residual, jac)
    if fam[0][1].shape[1]:  # an empty slot costs nothing
        limited |= _slot(1, member, fam[0][1], fam[1][1], fam[2][1], fam[3][1],
                         fam[4][1], fam[5][1], (fam[6][1], fam[7][1], fam[8][1], fam[9][1]),
                         vstar[1], xe, residual, jac)
    if fam[0][2].shape[1]:  # an empty slot costs nothing
        limited |= _slot(2, member, fam[0][2], fam[1][2], fam[2][2], fam[3][2],
                         fam[4][2], fam[5][2], (fam[6][2], fam[7][2], fam[8][2], fam[9][2]),
                         vstar[2], xe, residual, jac)
    if fam[0][3].shape[1]:  # an empty slot costs nothing
        limited |= _slot(3, member, fam[0][3], fam[1][3], fam[2][3], fam[3][3],
                         fam[4][3], fam[5][3], (fam[6][3], fam[7][3], fam[8][3], fam[9][3]),
                         vstar[3], xe, residual, jac)
    return limited


@inlined
def _slot(f, member, jp, jn, src, dst, polarity, params, scratch, vstar, xe, residual, jac):
    """``linearise`` for the devices of slot ``f``."""
    if jp.shape[1] == 0:
        return False
    vraw, vlim, current, slope = scratch
    p = params_of(params, member)
    junctions(xe, jp, jn, polarity, vraw)
    limit(f, vraw, vstar, p, vlim)
    evaluate(f, vlim, p, current, slope)
    limited = False
    for j in range(jp.shape[0]):
        for d in range(jp.shape[1]):
            limited |= vraw[j, d] != vlim[j, d]
            vstar[j, d] = vlim[j, d]
    _stamp(jp, jn, src, dst, polarity, vraw, vlim, current, slope, residual.shape[0],
           residual, jac)
    return limited


@inlined
def _stamp(jp, jn, src, dst, polarity, vraw, vlim, current, slope, kept, residual, jac):
    for t in range(src.shape[0]):
        for d in range(src.shape[1]):
            tangent = current[t, d]
            for j in range(jp.shape[0]):
                tangent += slope[t, j, d] * (vraw[j, d] - vlim[j, d])
            a, b = src[t, d], dst[t, d]
            if a < kept:
                residual[a] += tangent * polarity[d]
            if b < kept:
                residual[b] -= tangent * polarity[d]
            for j in range(jp.shape[0]):
                g, cp, cn = slope[t, j, d], jp[j, d], jn[j, d]
                if a < kept and cp < kept:
                    jac[a, cp] += g
                if a < kept and cn < kept:
                    jac[a, cn] -= g
                if b < kept and cp < kept:
                    jac[b, cp] -= g
                if b < kept and cn < kept:
                    jac[b, cn] += g


@inlined
def cap_values(fam, member, xe, out):
    """Every junction capacitance (caps,) at the extended rows ``xe``, in the columns of
    the banks' order (each slot's first column and count); the current scratch (at least
    as many rows as capacitances) holds them on the way."""
    if fam[0][0].shape[1] and fam[11][0]:
        _slot_caps(0, member, fam[0][0], fam[1][0], fam[4][0], fam[5][0], fam[6][0],
                   fam[8][0], fam[10][0], fam[11][0], xe, out)
    if fam[0][1].shape[1] and fam[11][1]:
        _slot_caps(1, member, fam[0][1], fam[1][1], fam[4][1], fam[5][1], fam[6][1],
                   fam[8][1], fam[10][1], fam[11][1], xe, out)
    if fam[0][2].shape[1] and fam[11][2]:
        _slot_caps(2, member, fam[0][2], fam[1][2], fam[4][2], fam[5][2], fam[6][2],
                   fam[8][2], fam[10][2], fam[11][2], xe, out)


@inlined
def _slot_caps(f, member, jp, jn, polarity, params, vraw, scratch, offset, count, xe, out):
    """``cap_values`` for the devices of slot ``f`` (the op-amp's slot has none)."""
    devices = jp.shape[1]
    if devices == 0 or count == 0:
        return
    junctions(xe, jp, jn, polarity, vraw)
    capacitances(f, vraw, params_of(params, member), scratch)
    for c in range(count):
        for d in range(devices):
            out[offset + c * devices + d] = scratch[c, d]
