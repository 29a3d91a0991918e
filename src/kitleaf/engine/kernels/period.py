"""A run of fixed steps for every member (reduced_steps.step in a loop), compiled.

The drive is given per member and step (``drive`` (B, steps): the source's value at each
step's time), so the same loop serves a sine's period for the shooting and any sampled
signal. ``st`` is updated in place (see kernels/steps.py for its parts); ``waves`` (B, o,
steps) takes the kept waveforms, ``solved`` (steps, B, t) and ``moves`` (steps, B, t, k)
each step's point and sensitivities where they are not empty. ``newton_set`` is
kernels/steps.settings(). ``trail`` (steps, B, t), when
not empty, is each step's first guess (NaN: the extrapolation).
"""

from __future__ import annotations

import numpy as np

from kitleaf.engine.kernels import kernel
from kitleaf.engine.kernels.linalg import copy_into, copy_matrix, lu_solve, matvec
from kitleaf.engine.kernels.steps import _cap_stamps, extend, step_caps, step_newton


@kernel
def _history(d, c1, c2, q, sens, u, du):
    """u = d (c1 q_n + c2 q_n-1) and its sensitivities du (m, k)."""
    for i in range(u.shape[0]):
        u[i] = d[i] * (c1 * q[0, i] + c2 * q[1, i])
        for col in range(du.shape[1]):
            du[i, col] = d[i] * (c1 * sens[0, i, col] + c2 * sens[1, i, col])


@kernel
def _guess(x_t, trail, s, b, out):
    """The extrapolation through the last three points, or the given guess."""
    for i in range(out.shape[0]):
        out[i] = 3.0 * x_t[0, b, i] - 3.0 * x_t[1, b, i] + x_t[2, b, i]
        if trail.shape[0] and not np.isnan(trail[s, b, i]):
            out[i] = trail[s, b, i]


@kernel
def _sensitivities(h_mat, du, caps, pairs, c1, c2, sens_x, b, jac, piv, ok, sx):
    """The kept unknowns' sensitivities sx (k, t) to the start: the last Jacobian against
    the history's (the ports' and the junction capacitances')."""
    t, k = sx.shape[1], sx.shape[0]
    for col in range(k):
        for i in range(t):
            acc = 0.0
            for j in range(du.shape[0]):
                acc += h_mat[i, j] * du[j, col]
            sx[col, i] = -acc
        for c in range(caps.shape[0]):
            ca, cb = pairs[0, c], pairs[1, c]
            moved = 0.0
            if ca < t:
                moved += c1 * sens_x[0, b, ca, col] + c2 * sens_x[1, b, ca, col]
            if cb < t:
                moved -= c1 * sens_x[0, b, cb, col] + c2 * sens_x[1, b, cb, col]
            if ca < t:
                sx[col, ca] -= caps[c] * moved
            if cb < t:
                sx[col, cb] += caps[c] * moved
        lu_solve(jac, piv, ok, sx[col])


@kernel
def _linear_form(m_x, form, m_u, x, u, a, out):
    """out = M_x x + f_dc + a f_e - M_u u: the new ports (Q, y, K) or the kept waveforms
    (O_T, o, O_u)."""
    matvec(m_x, x, out)
    for i in range(out.shape[0]):
        acc = 0.0
        for j in range(u.shape[0]):
            acc += m_u[i, j] * u[j]
        out[i] += form[0, i] + a * form[1, i] - acc


@kernel
def _port_sensitivities(q_mat, k_mat, sx, du, sq):
    """The new ports' sensitivities Q sx - K du (m, k)."""
    for i in range(sq.shape[0]):
        for col in range(sq.shape[1]):
            s = 0.0
            for j in range(sx.shape[1]):
                s += q_mat[i, j] * sx[col, j]
            for j in range(du.shape[0]):
                s -= k_mat[i, j] * du[j, col]
            sq[i, col] = s


def workspace(members: int, t: int, m: int, k: int, caps: int, extended: int,
              outputs: int) -> tuple:
    """``run``'s scratch arrays (the kernels allocate nothing): per capacitance, per port,
    per kept row, the Jacobians and Newton's work space (see steps.newton)."""
    return (np.zeros(caps), np.zeros(caps), np.zeros(m), np.zeros((m, k)), np.zeros(t),
            np.zeros(t), np.zeros((k, t)), np.zeros((m, k)), np.zeros(m), np.zeros(outputs),
            np.zeros((t, t)), (np.zeros(extended), np.zeros(t), np.zeros((t, t)),
                               np.zeros(t, np.int64), np.zeros(t), np.ones(1, np.bool_)))


@kernel
def run(lin, drive, weights, vf, pairs, nodes, fam, st, trail, waves, solved, moves,
        newton_set, space):
    a_red, h_mat, z, q_mat, y, k_mat, d, out_t, out, out_u = lin
    x_t, xe, q, sens, sens_x, vstar, failed = st
    c0, c1, c2 = weights
    members, t = x_t.shape[1], x_t.shape[2]
    caps, cap_hist, u, du, rhs, guess, sx, sq, q_new, wave, jac_base, work = space
    for b in range(members):
        mine = (vstar[0][b], vstar[1][b], vstar[2][b], vstar[3][b])
        for s in range(drive.shape[1]):
            a = drive[b, s]
            _history(d[b], c1, c2, q[:, b], sens[:, b], u, du)
            matvec(h_mat[b], u, rhs)
            for i in range(t):
                rhs[i] = z[b, 0, i] + a * z[b, 1, i] - rhs[i]
            _guess(x_t, trail, s, b, guess)
            step_caps(fam, b, xe[0, b], xe[1, b], pairs, c1, c2, caps, cap_hist)
            copy_matrix(a_red[b], jac_base)
            _cap_stamps(caps, pairs, c0, jac_base)
            eq = (jac_base, rhs, caps, cap_hist, c0, a, vf, pairs, nodes)
            x = guess
            settled = step_newton(a_red[b], eq, fam, b, mine, x, x_t[0, b], xe[0, b],
                                  work, failed[b], newton_set)
            _sensitivities(h_mat[b], du, caps, pairs, c1, c2, sens_x, b, work[2], work[3],
                           work[5][0], sx)
            _linear_form(q_mat[b], y[b], k_mat[b], x, u, a, q_new)
            _port_sensitivities(q_mat[b], k_mat[b], sx, du, sq)
            failed[b] |= not settled
            _push(x_t, b, x)
            _push(xe, b, xe[0, b])
            extend(x, a, vf, xe[0, b])
            _push(q, b, q_new)
            _push_matrix(sens, b, sq)
            _push_matrix(sens_x, b, sx.T)
            _linear_form(out_t[b], out[b], out_u[b], x, u, a, wave)
            for o in range(wave.shape[0]):
                waves[b, o, s] = wave[o]
            if solved.shape[0]:
                copy_into(x, solved[s, b])
            if moves.shape[0]:
                copy_matrix(sx.T, moves[s, b])


@kernel
def _push(history, b, newest):
    """Member ``b``'s history (vectors) one step on (newest first), ``newest`` in front."""
    for age in range(history.shape[0] - 1, 0, -1):
        copy_into(history[age - 1, b], history[age, b])
    copy_into(newest, history[0, b])


@kernel
def _push_matrix(history, b, newest):
    """``_push`` for a history of matrices."""
    for age in range(history.shape[0] - 1, 0, -1):
        copy_matrix(history[age - 1, b], history[age, b])
    copy_matrix(newest, history[0, b])
