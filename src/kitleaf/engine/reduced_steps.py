"""Time steps on the device rows alone: the linear network eliminated once per member.

With a fixed step h the BDF2 matrix G + c0 C of the linear parts does not change from step
to step, so its linear rows (L) are eliminated once per member by a Schur complement, as
the DC solver eliminates them (reduce.py), and each step's Newton iterates on the t device
rows (T) alone. The linear network's state is its capacitor and inductor port values
q = P^T x (C = P diag(d) P^T); a step reads the history only through
u = d (c1 q_n + c2 q_n-1), and with the fixed nodes' voltages v_F (grounded sources) and
the drive written as dc + a sin(w t) parts:

    (A_TT - A_TL back) x_T + i_T(x) + H u = z_dc + a sin(w t) z_e      (t rows, Newton)
    q = Q x_T + y_dc + a sin(w t) y_e - K u                            (the new ports)

with back = A_LL^-1 A_LT, H = P_T - A_TL A_LL^-1 P_L, Q = P_T^T - P_L^T back and
K = P_L^T A_LL^-1 P_L. A kept node's waveform is read from x_T, an eliminated one's from
the same linear form. Junction capacitances (on device rows only) are taken at the step's
start, as the full stepper takes them (stepper.py).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from kitleaf.engine.batch_lu import block, solve_many
from kitleaf.engine.nonlinear import Devices
from kitleaf.engine.reduce import Partition

RELTOL = 1e-5  # Newton's per-step tolerance, relative
VNTOL = 1e-7  # volts
ABSTOL = 1e-9  # amperes, kept branch rows
MAX_NEWTON = 40
# After this many iterations a step is cut to DAMP_STEP volts (or amperes) at most: an
# op-amp's saturated input stage against its clamp can make plain Newton cycle
DAMP_AFTER = 12
DAMP_STEP = 1.0
# A step retried from the last point damps from the first iteration (an op-amp input
# stage and clamp that diverge at once), then, if still unsettled, from the twelfth (a
# junction that needs a few long steps first); either may take longer
RETRY_DAMP_AFTER = (0, 12)
RETRY_NEWTON = 80


def bdf2(h: float) -> tuple[float, float, float]:
    """Fixed-step BDF2 weights (c0, c1, c2) on x_new, x_n, x_n-1."""
    return 1.5 / h, -2.0 / h, 0.5 / h


@dataclass
class Linear:
    """Per member: the reduced matrices above, and the output rows' linear forms
    out = O_T x_T + o_dc + a sin(w t) o_e - O_u u."""

    a_red: np.ndarray  # (B, t, t)
    h_mat: np.ndarray  # (B, t, m)
    z: np.ndarray  # (B, 2, t): dc and sine parts
    q_mat: np.ndarray  # (B, m, t)
    y: np.ndarray  # (B, 2, m)
    k_mat: np.ndarray  # (B, m, m)
    d: np.ndarray  # (B, m)
    out_t: np.ndarray  # (B, o, t)
    out: np.ndarray  # (B, 2, o)
    out_u: np.ndarray  # (B, o, m)

    def take(self, idx: np.ndarray) -> Linear:
        return Linear(*(getattr(self, f)[idx] for f in self.__dataclass_fields__))


@dataclass
class Members:
    """The stacked members' reduced equations, their devices and their drive."""

    linear: Linear
    devices: Devices  # re-indexed into [x_T, ground, v_F], parameters per member
    vf: np.ndarray  # (2, f): the fixed nodes' dc and sine parts
    amplitude: np.ndarray  # (B,)
    omega: float
    node_count: int
    cap_inc: np.ndarray  # (t + 1 + f, junction caps): their incidence on the extended rows

    def take(self, idx: np.ndarray) -> Members:
        banks = [bank.with_params(**{k: v[idx] if v.shape[0] > 1 else v
                                     for k, v in bank.params.items()})
                 for bank in self.devices.banks]
        return replace(self, linear=self.linear.take(idx), amplitude=self.amplitude[idx],
                       devices=self.devices.with_banks(banks))

    def drive(self, t: float) -> np.ndarray:
        """The source's value at ``t`` per member (B,): here a sine (a sampled signal's
        members override it)."""
        return self.amplitude * math.sin(self.omega * t)

    def extended(self, x_t: np.ndarray, t: float) -> np.ndarray:
        """[x_T, ground, v_F(t)] per member, the device rows' view."""
        vf = self.vf[0][None, :] + self.drive(t)[:, None] * self.vf[1][None, :]
        return np.concatenate([x_t, np.zeros((x_t.shape[0], 1)), vf], axis=1)


def reduce_linear(g: np.ndarray, c_ports: tuple[np.ndarray, np.ndarray], part: Partition,
                  b_dc: np.ndarray, excitation: np.ndarray, h: float,
                  out_rows: list[int | None]) -> Linear:
    """The reduced matrices of circuits with conductances ``g`` (s, n, n) and capacitor ports
    (P (n, m), d (s, m)) at step ``h``; ``out_rows`` are the kept waveforms' rows."""
    p, d = c_ports
    c0 = bdf2(h)[0]
    a = g + c0 * np.einsum("nm,sm,km->snk", p, d, p)
    keep, rest, fixed = part.keep, part.rest, part.fixed
    vf = part.fixed_sign[None, :] * np.stack([b_dc, excitation])[:, part.fixed_branch]
    w = np.stack([b_dc, excitation])[None] - np.einsum("snf,kf->skn", a[:, :, fixed], vf)
    s, t, m = a.shape[0], keep.size, p.shape[1]
    p_t, p_l, p_f = p[keep], p[rest], p[fixed]
    rhs = np.concatenate([block(a, rest, keep), np.moveaxis(w[:, :, rest], 1, 2),
                          np.broadcast_to(p_l, (s, *p_l.shape))], axis=2)
    solved = solve_many(block(a, rest, rest), rhs) if rest.size else rhs
    back, base, r = solved[:, :, :t], solved[:, :, t:t + 2], solved[:, :, t + 2:]
    a_tl = block(a, keep, rest)
    a_red = block(a, keep, keep) - a_tl @ back
    z = w[:, :, keep] - np.einsum("stl,slk->skt", a_tl, base)
    h_mat = p_t[None] - a_tl @ r
    q_mat = p_t.T[None] - np.einsum("lm,slt->smt", p_l, back)
    y = np.einsum("lm,slk->skm", p_l, base) + (vf @ p_f)[None]
    k_mat = np.einsum("lm,slj->smj", p_l, r)
    out_t, out, out_u = _outputs(out_rows, part, back, base, r, vf, s, t, m)
    return Linear(a_red, h_mat, z, q_mat, y, k_mat, np.broadcast_to(d, (s, m)).copy(),
                  out_t, out, out_u)


def _outputs(rows: list[int | None], part: Partition, back, base, r, vf, s: int, t: int,
             m: int):
    """Each output row as O_T x_T + o(t) - O_u u (ground: all zero)."""
    o = len(rows)
    out_t, out, out_u = np.zeros((s, o, t)), np.zeros((s, 2, o)), np.zeros((s, o, m))
    where = {int(k): ("T", i) for i, k in enumerate(part.keep)}
    where.update({int(k): ("L", i) for i, k in enumerate(part.rest)})
    where.update({int(k): ("F", i) for i, k in enumerate(part.fixed)})
    for j, row in enumerate(rows):
        if row is None:
            continue
        kind, i = where[row]
        if kind == "T":
            out_t[:, j, i] = 1.0
        elif kind == "F":
            out[:, :, j] = vf[None, :, i]
        else:
            out_t[:, j] = -back[:, i]
            out[:, :, j] = base[:, i]
            out_u[:, j] = r[:, i]
    return out_t, out, out_u


def cap_incidence(devices: Devices, size: int) -> np.ndarray:
    """The junction capacitances' incidence (size, caps) on the extended rows
    [x_T, ground, v_F] (ground is a row here; nothing reads it)."""
    pairs = devices.cap_pairs()
    inc = np.zeros((size, len(pairs)))
    for col, (a, b) in enumerate(pairs):
        inc[a, col] += 1.0
        inc[b, col] -= 1.0
    return inc


@dataclass
class StepState:
    """The last three points' kept unknowns and extended rows, the last two port values,
    the junction voltages devices were last evaluated at, and the ports' sensitivities."""

    x_t: list[np.ndarray]  # newest first, (B, t) each
    xe: list[np.ndarray]  # newest first, (B, t + 1 + f)
    q: list[np.ndarray]  # newest first, (B, m)
    vstar: list[np.ndarray]
    sens: list[np.ndarray]  # d q / d start, newest first, (B, m, k)
    failed: np.ndarray  # (B,) a member whose Newton did not settle at some step
    # d x_T / d start, newest first, (B, t, k): the junction capacitances' history reads it
    sens_x: list[np.ndarray] | None = None


def step(mem: Members, st: StepState, t: float, h: float,
         guess: np.ndarray | None = None) -> np.ndarray:
    """One BDF2 step to time ``t`` from ``guess`` (B, t) (default: extrapolated from the
    last points); updates ``st`` and returns the history term u (B, m)."""
    c0, c1, c2 = bdf2(h)
    lin = mem.linear
    u = lin.d * (c1 * st.q[0] + c2 * st.q[1])
    du = lin.d[:, :, None] * (c1 * st.sens[0] + c2 * st.sens[1])
    a = mem.drive(t)
    rhs_lin = lin.z[:, 0] + a[:, None] * lin.z[:, 1] - _mv(lin.h_mat, u)
    predicted = _predict(st.x_t)
    # a member without a guess of its own (NaN) takes the extrapolation
    guess = predicted if guess is None else np.where(np.isnan(guess), predicted, guess)
    x, jac, settled, caps, st.vstar = _newton(mem, st.xe, st.vstar, st.failed, t, (c0, c1, c2),
                                              rhs_lin, guess)
    for damp_after in RETRY_DAMP_AFTER:  # from the last point itself, damped soon or late
        retry = np.flatnonzero(~settled & ~st.failed)
        if retry.size:
            _retry(mem, st, t, (c0, c1, c2), rhs_lin, retry, (x, jac, settled, caps),
                   damp_after)
    sens_rhs = -(lin.h_mat @ du)
    if caps.shape[1] and st.sens_x is not None:
        cap_t = mem.cap_inc[:x.shape[1]]
        moved = cap_t.T @ (c1 * st.sens_x[0] + c2 * st.sens_x[1])
        sens_rhs -= cap_t @ (caps[:, :, None] * moved)
    with np.errstate(invalid="ignore", over="ignore"):
        sx = solve_each(jac, sens_rhs)
    q = (_mv(lin.q_mat, x) + lin.y[:, 0] + a[:, None] * lin.y[:, 1]
         - _mv(lin.k_mat, u))
    sq = lin.q_mat @ sx - lin.k_mat @ du
    st.failed |= ~settled
    st.x_t = [x, *st.x_t[:2]]
    st.xe = [mem.extended(x, t), st.xe[0]]
    st.q = [q, st.q[0]]
    st.sens = [sq, st.sens[0]]
    if st.sens_x is not None:
        st.sens_x = [sx, st.sens_x[0]]
    return u


def outputs(mem: Members, x_t: np.ndarray, u: np.ndarray, t: float) -> np.ndarray:
    """The kept waveforms' values (B, o) at a solved point."""
    lin = mem.linear
    a = mem.drive(t)
    return (_mv(lin.out_t, x_t) + lin.out[:, 0] + a[:, None] * lin.out[:, 1]
            - _mv(lin.out_u, u))


def solve_each(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Batched solve; a member whose matrix is singular (a step gone to NaN) gets NaN,
    which marks it unsettled, instead of failing the batch."""
    try:
        return np.linalg.solve(a, b)
    except np.linalg.LinAlgError:
        out = np.full(np.broadcast_shapes(b.shape), np.nan)
        for i in range(a.shape[0]):
            try:
                out[i] = np.linalg.solve(a[i], b[i])
            except np.linalg.LinAlgError:
                pass
        return out


def _mv(a: np.ndarray, x: np.ndarray) -> np.ndarray:
    """Batched matrix times vector: (B, i, j) by (B, j)."""
    return (a @ x[..., None])[..., 0]


def _predict(xs: list[np.ndarray]) -> np.ndarray:
    """Equally spaced extrapolation through the last (up to three) points."""
    if len(xs) >= 3:
        return 3.0 * xs[0] - 3.0 * xs[1] + xs[2]
    return 2.0 * xs[0] - xs[1] if len(xs) == 2 else xs[0].copy()


def _retry(mem: Members, st: StepState, t: float, weights: tuple, rhs_lin: np.ndarray,
           idx: np.ndarray, solved: tuple, damp_after: int) -> None:
    """Newton again for the members ``idx`` whose step did not settle from the guess, from
    the last point and in damped steps (a guess extrapolated across a clipping corner can
    land far off, where an op-amp's saturated input stage and its clamp make Newton cycle);
    ``solved`` (x, jac, settled, caps) and ``st.vstar`` take the new answers in place."""
    sub = mem.take(idx)
    xe = [x[idx] for x in st.xe]
    vstar = sub.devices.junctions(xe[0])
    again = _newton(sub, xe, vstar, st.failed[idx], t, weights, rhs_lin[idx],
                    st.x_t[0][idx].copy(), damp_after=damp_after, limit=RETRY_NEWTON)
    for whole, part in zip(solved, again[:4], strict=True):
        whole[idx] = part
    for whole, part in zip(st.vstar, again[4], strict=True):
        whole[idx] = part


def _newton(mem: Members, xe_hist: list, vstar: list, failed: np.ndarray, t: float,
            weights: tuple, rhs_lin: np.ndarray, x: np.ndarray, damp_after: int = DAMP_AFTER,
            limit: int | None = None):
    """Newton with junction limiting on the kept rows from ``x``, the devices last
    evaluated at ``vstar``; returns x, the last Jacobian, the settled flags, the junction
    capacitances used (B, caps) and the junction voltages last evaluated. Settled members
    leave the iteration once they are a good share of it (the rest cost what they cost)."""
    inc = mem.cap_inc
    c0, c1, c2 = weights
    cap_t = inc[:x.shape[1]]
    caps = (mem.devices.cap_values(mem.devices.junctions(xe_hist[0])) if inc.shape[1]
            else np.zeros((x.shape[0], 0)))
    eq = _Equations(mem.linear.a_red + c0 * (cap_t * caps[:, None, :]) @ cap_t.T, rhs_lin,
                    caps, (c1 * xe_hist[0] + c2 * xe_hist[1]) @ inc, c0)
    x, vstar = x.copy(), [v.copy() for v in vstar]
    jac = np.empty_like(eq.jac_base)
    settled = np.zeros(x.shape[0], bool)
    idx, sub, sub_eq = np.arange(x.shape[0]), mem, eq
    for iteration in range(MAX_NEWTON if limit is None else limit):
        xs, js, vs, ok = _iteration(sub, sub_eq, x[idx], [v[idx] for v in vstar], t,
                                    iteration >= damp_after)
        x[idx], jac[idx] = xs, js
        for whole, part in zip(vstar, vs, strict=True):
            whole[idx] = part
        settled[idx] |= ok
        going = ~settled[idx] & ~failed[idx]
        if not going.any():
            break
        if np.count_nonzero(going) < SHRINK * idx.size:
            idx = idx[going]
            sub, sub_eq = mem.take(idx), eq.take(idx)
    return x, jac, settled, caps, vstar


SHRINK = 0.5  # the iteration drops its settled members once they are half of it


@dataclass
class _Equations:
    """One step's equations beside the devices: the linear Jacobian, the right-hand side,
    the junction capacitances and their history term."""

    jac_base: np.ndarray
    rhs: np.ndarray
    caps: np.ndarray
    cap_hist: np.ndarray
    c0: float

    def take(self, idx: np.ndarray) -> _Equations:
        return _Equations(self.jac_base[idx], self.rhs[idx], self.caps[idx],
                          self.cap_hist[idx], self.c0)


def _iteration(mem: Members, eq: _Equations, x: np.ndarray, vstar: list, t: float,
               damp: bool):
    """One Newton iteration: the new x, the Jacobian, the junction voltages evaluated and
    which members settled (an unlimited step within tolerance)."""
    devices, inc = mem.devices, mem.cap_inc
    cap_t = inc[:x.shape[1]]
    tol_abs = np.where(np.arange(x.shape[1]) < mem.node_count, VNTOL, ABSTOL)
    xe = mem.extended(x, t)
    cap_i = (eq.caps * (eq.c0 * (xe @ inc) + eq.cap_hist)) @ cap_t.T
    residual = _mv(mem.linear.a_red, x) + cap_i - eq.rhs
    vraw = devices.junctions(xe)
    vlim = [bank.limit(vr, vs) for bank, vr, vs in zip(devices.banks, vraw, vstar, strict=True)]
    limited = np.zeros(x.shape[0], bool)
    for vr, vl in zip(vraw, vlim, strict=True):
        limited |= np.any(vr != vl, axis=(1, 2))
    currents, dev_jac = devices.linearise(vlim, vraw)
    jac = eq.jac_base + dev_jac
    with np.errstate(invalid="ignore", over="ignore"):
        dx = solve_each(jac, -(residual + currents)[..., None])[..., 0]
        if damp:  # a cycle (a saturated stage's Newton): walk out
            dx *= np.minimum(1.0, DAMP_STEP / np.max(np.abs(dx), axis=1))[:, None]
        x = x + dx
        small = np.all(np.abs(dx) <= RELTOL * np.abs(x) + tol_abs, axis=1)
    return x, jac, vlim, small & ~limited & np.isfinite(dx).all(axis=1)
