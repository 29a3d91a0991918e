"""The reduced time steps (reduced_steps.py) compiled: each member's steps in one loop.

One step is reduced_steps.step for one member: Newton with junction limiting on the kept
rows from the extrapolated (or given) guess, retried from the last point in damped steps
when it does not settle, then the ports' sensitivities to the shooting's start solved with
the last Jacobian. The linear forms are ``lin`` (reduced_steps.Linear's fields in order),
the devices ``fam`` (kernels/devices.py), the state ``st`` (kept unknowns at the last three
points, extended rows at the last two, ports and their sensitivities at the last two, the
kept unknowns' sensitivities at the last two, the devices' last junction voltages and the
failed flags), all with the members first (state: after the history index).
"""

from __future__ import annotations

import numpy as np

from kitleaf.engine.kernels import inlined, kernel
from kitleaf.engine.kernels.devices import cap_values, junctions, linearise
from kitleaf.engine.kernels.linalg import (
    copy_into,
    copy_matrix,
    lu_factor,
    lu_solve,
    matvec,
)


def settings(steps) -> tuple:
    """The Newton settings of ``steps`` (the reduced_steps module) as the kernels take
    them, read at each call so that both paths iterate alike: tolerances (relative, volts,
    amperes, damped step) and counts (iterations, retry iterations, damped after, each
    retry's damped after)."""
    return ((steps.RELTOL, steps.VNTOL, steps.ABSTOL, steps.DAMP_STEP),
            (steps.MAX_NEWTON, steps.RETRY_NEWTON, steps.DAMP_AFTER, *steps.RETRY_DAMP_AFTER))


@kernel
def extend(x, a, vf, xe):
    """[x_T, ground, v_F] with the drive at ``a``."""
    t = x.shape[0]
    copy_into(x, xe)
    xe[t] = 0.0
    for i in range(vf.shape[1]):
        xe[t + 1 + i] = vf[0, i] + a * vf[1, i]


@kernel
def _cap_currents(caps, pairs, c0, cap_hist, xe, residual):
    for c in range(caps.shape[0]):
        ca, cb = pairs[0, c], pairs[1, c]
        i = caps[c] * (c0 * (xe[ca] - xe[cb]) + cap_hist[c])
        if ca < residual.shape[0]:
            residual[ca] += i
        if cb < residual.shape[0]:
            residual[cb] -= i


@kernel
def _cap_stamps(caps, pairs, scale, jac):
    """Adds ``scale`` times each capacitance between its kept rows to ``jac``."""
    kept = jac.shape[0]
    for c in range(caps.shape[0]):
        ca, cb, g = pairs[0, c], pairs[1, c], scale * caps[c]
        if ca < kept:
            jac[ca, ca] += g
            if cb < kept:
                jac[ca, cb] -= g
        if cb < kept:
            jac[cb, cb] += g
            if ca < kept:
                jac[cb, ca] -= g


@inlined
def newton(a_red, eq, fam, member, vstar, x, work, damp_after, limit, failed, tolerances):
    """Newton from ``x`` (in place); ``eq`` the step's (jacobian base, right-hand side,
    capacitances, their history term, c0, drive, fixed rows, cap pairs, node count);
    ``work`` (extended rows, residual, Jacobian, pivots, dx, factored flag). True when it
    settled; the last Jacobian's factors stay in the work space for the sensitivities."""
    jac_base, rhs, caps, cap_hist, c0, a, vf, pairs, nodes = eq
    xe, residual, jac, piv, dx, factored = work
    reltol, vntol, abstol, damp_step = tolerances
    t = x.shape[0]
    settled = False
    for iteration in range(limit):
        extend(x, a, vf, xe)
        matvec(a_red, x, residual)
        for i in range(t):
            residual[i] -= rhs[i]
        _cap_currents(caps, pairs, c0, cap_hist, xe, residual)
        copy_matrix(jac_base, jac)
        limited = linearise(fam, member, xe, vstar, residual, jac)
        factored[0] = lu_factor(jac, piv)
        for i in range(t):
            dx[i] = -residual[i]
        lu_solve(jac, piv, factored[0], dx)
        if iteration >= damp_after:  # a cycle (a saturated stage's Newton): walk out
            biggest = 0.0  # np.max(np.abs(dx)), NaN when one is
            for i in range(t):
                if abs(dx[i]) > biggest or np.isnan(dx[i]):
                    biggest = abs(dx[i])
            scale = min(1.0, damp_step / biggest)
            for i in range(t):
                dx[i] *= scale
        small, finite = True, True
        for i in range(t):
            x[i] += dx[i]
            tol = vntol if i < nodes else abstol
            small &= abs(dx[i]) <= reltol * abs(x[i]) + tol
            finite &= np.isfinite(dx[i])
        settled = small and not limited and finite
        if settled or failed:
            break
    return settled


@inlined
def step_newton(a_red, eq, fam, member, vstar, guess, last, xe_last, work, failed, newton_set):
    """A step's Newton for one member: from ``guess``, then (unsettled) from the last
    point ``last`` damped at once, then damped late (``newton_set``: ``settings()``).
    ``guess`` becomes the point; True when it settled."""
    tolerances, (limit, retry_limit, damp_after, first, second) = newton_set
    x = guess
    settled = newton(a_red, eq, fam, member, vstar, x, work, damp_after, limit, failed,
                     tolerances)
    for retry_damp in (first, second):
        if settled or failed:
            break
        _reset(fam, xe_last, vstar)
        copy_into(last, x)
        settled = newton(a_red, eq, fam, member, vstar, x, work, retry_damp, retry_limit,
                         failed, tolerances)
    return settled


@inlined
def _reset(fam, xe, vstar):
    """Each device's junction voltages at the extended rows ``xe`` (slots by constant
    index, as in devices.linearise)."""
    junctions(xe, fam[0][0], fam[1][0], fam[4][0], vstar[0])
    junctions(xe, fam[0][1], fam[1][1], fam[4][1], vstar[1])
    junctions(xe, fam[0][2], fam[1][2], fam[4][2], vstar[2])
    junctions(xe, fam[0][3], fam[1][3], fam[4][3], vstar[3])


@inlined
def step_caps(fam, member, xe0, xe1, pairs, c1, c2, caps, cap_hist):
    """The step's junction capacitances at its start and their history term."""
    if caps.shape[0] == 0:
        return
    cap_values(fam, member, xe0, caps)
    for c in range(caps.shape[0]):
        ca, cb = pairs[0, c], pairs[1, c]
        cap_hist[c] = c1 * (xe0[ca] - xe0[cb]) + c2 * (xe1[ca] - xe1[cb])
