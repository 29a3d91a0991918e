"""Every device family of one member, linearised and stamped onto its kept rows.

The families sit in fixed slots (diode, BJT, JFET, op-amp); ``fam`` holds, as homogeneous
tuples over the slots, their rows (jp, jn, src, dst), polarity, parameters (members or 1,
keys, devices) and scratch space (raw and limited junction voltages, currents, slopes), then
each slot's first capacitance column and count. Rows at or
past the kept count (ground, the fixed nodes) take no stamp, as in nonlinear.Devices.
"""

from __future__ import annotations

from kitleaf.engine.kernels import bjt, diode, jfet, kernel, opamp

SLOTS = (diode, bjt, jfet, opamp)  # the family of each slot, in this order


@kernel
def evaluate(slot, v, p, current, slope):
    if slot == 0:
        diode.evaluate(v, p, current, slope)
    elif slot == 1:
        bjt.evaluate(v, p, current, slope)
    elif slot == 2:
        jfet.evaluate(v, p, current, slope)
    else:
        opamp.evaluate(v, p, current, slope)


@kernel
def limit(slot, vnew, vold, p, out):
    if slot == 0:
        diode.limit(vnew, vold, p, out)
    elif slot == 1:
        bjt.limit(vnew, vold, p, out)
    elif slot == 2:
        jfet.limit(vnew, vold, p, out)
    else:
        opamp.limit(vnew, vold, p, out)


@kernel
def capacitances(slot, v, p, out):
    if slot == 0:
        diode.capacitances(v, p, out)
    elif slot == 1:
        bjt.capacitances(v, p, out)
    elif slot == 2:
        jfet.capacitances(v, p, out)


@kernel
def junctions(xe, jp, jn, polarity, out):
    """Device-frame junction voltages (k, D) from the extended rows ``xe``."""
    for j in range(jp.shape[0]):
        for d in range(jp.shape[1]):
            out[j, d] = (xe[jp[j, d]] - xe[jn[j, d]]) * polarity[d]


@kernel
def params_of(params, member):
    """A member's parameters (keys, D): shared ones are stored once."""
    return params[member] if params.shape[0] > 1 else params[0]


@kernel
def linearise(fam, member, xe, vstar, residual, jac):
    """Adds every device's tangent current at its limited junction voltages to
    ``residual`` and its slopes to ``jac``; ``vstar`` (per slot, (k, D) of this member)
    takes the limited voltages. True when a junction was limited."""
    jp, jn, src, dst, polarity, params, vraw, vlim, current, slope, _, _ = fam
    kept = residual.shape[0]
    limited = False
    for f in range(len(jp)):
        if jp[f].shape[1] == 0:
            continue
        p = params_of(params[f], member)
        junctions(xe, jp[f], jn[f], polarity[f], vraw[f])
        limit(f, vraw[f], vstar[f], p, vlim[f])
        evaluate(f, vlim[f], p, current[f], slope[f])
        for j in range(jp[f].shape[0]):
            for d in range(jp[f].shape[1]):
                limited |= vraw[f][j, d] != vlim[f][j, d]
                vstar[f][j, d] = vlim[f][j, d]
        _stamp(jp[f], jn[f], src[f], dst[f], polarity[f], vraw[f], vlim[f], current[f],
               slope[f], kept, residual, jac)
    return limited


@kernel
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


@kernel
def cap_values(fam, member, xe, out):
    """Every junction capacitance (caps,) at the extended rows ``xe``, in the columns of
    the banks' order (each slot's first column and count); the current scratch (at least
    as many rows as capacitances) holds them on the way."""
    jp, jn, _, _, polarity, params, vraw, _, current, _, offsets, caps_of = fam
    for f in range(len(jp)):
        if jp[f].shape[1] == 0 or caps_of[f] == 0:
            continue
        p = params_of(params[f], member)
        junctions(xe, jp[f], jn[f], polarity[f], vraw[f])
        capacitances(f, vraw[f], p, current[f])
        n_dev = jp[f].shape[1]
        for c in range(caps_of[f]):
            for d in range(n_dev):
                out[offsets[f] + c * n_dev + d] = current[f][c, d]
