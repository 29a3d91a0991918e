"""Batched small-signal responses through the capacitor ports of a reduced circuit.

The nodes fixed by grounded sources leave the system (their AC values are known), and the
linear rest is eliminated by a Schur complement onto the device rows, as for DC. With the
capacitances written C = A diag(d) A^T the response is, by the Woodbury identity,

    x(s) = x0 - s W (I + s D M)^-1 D (A^T x0 + A_F^T v_F),   x0 = G^-1 r, W = G^-1 A,
    M = A^T W, r = b - G_:F v_F,

so only the m x m matrix D M (m capacitances) is diagonalised, and any frequency costs a few
multiplications for every sample at once. The residual of the port system checks each
sample's diagonalisation at given frequencies; the same system, solved directly, answers for
the samples whose check fails.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property

import numpy as np

from kitleaf.engine.batch_lu import block, solve_many
from kitleaf.engine.compile import System, incidence
from kitleaf.engine.deflate import eig_split
from kitleaf.engine.newton import Problem, extend
from kitleaf.engine.poles import evaluate, real_terms
from kitleaf.engine.reduce import Partition, Reduced

DIRECT_BLOCK = 1 << 21  # matrix entries per block of the direct solve (32 MB of complex)
# A sample whose modal port solution leaves a larger componentwise backward error at a check
# frequency is answered by the direct port solve instead (LAPACK's own: about 1e-15; the
# refined eigenvectors of the kits seen: below 1e-10).
BACKWARD = 1e-9


@dataclass(frozen=True)
class PortForm:
    """Rows ``rows`` of the response: x0 (s, r), W (s, r, m), D M (s, m, m), z (s, m)."""

    x0: np.ndarray
    w: np.ndarray
    dm: np.ndarray
    z: np.ndarray

    def direct(self, freqs: np.ndarray, idx: np.ndarray | None = None) -> np.ndarray:
        """Exact responses (samples, F, r) by a direct solve of the m x m port system.

        Solved a block of frequencies at a time: all at once, 200 samples at 200 frequencies
        of a 21-capacitor circuit would hold about 300 MB of matrices.
        """
        sel = slice(None) if idx is None else idx
        f = np.asarray(freqs, float)
        f = np.broadcast_to(f, (self.x0[sel].shape[0], f.shape[-1]))
        step = max(1, DIRECT_BLOCK // max(1, f.shape[0] * self.dm.shape[-1] ** 2))
        return np.concatenate([self._direct(f[:, i:i + step], sel)
                               for i in range(0, f.shape[1], step)], axis=1)

    def _direct(self, f: np.ndarray, sel) -> np.ndarray:
        s = 2j * np.pi * f
        eye = np.eye(self.dm.shape[-1])
        a = eye + s[:, :, None, None] * self.dm[sel][:, None]
        b = np.broadcast_to(self.z[sel][:, None, :, None], (*a.shape[:-1], 1))
        y = np.linalg.solve(a, b.astype(complex))[..., 0]
        return self.x0[sel][:, None, :] - s[..., None] * np.einsum("srm,sfm->sfr",
                                                                    self.w[sel], y)


@dataclass(frozen=True)
class PoleResidue:
    """x(f) = alpha + s sum_k residues[..., k] / (1 + s lambdas[k]) per sample, with the
    samples whose diagonalisation failed the check answered by the port solve.

    The residues -(W V) diag(weights) cost rows x m^2 per sample, so they are formed on first
    use, and :meth:`take` forms only the rows it keeps: a large kit reads a few of its nodes
    at many frequencies, and all of them only at one (:meth:`through_modes`)."""

    alpha: np.ndarray  # (s, r)
    lambdas: np.ndarray  # (s, m)
    vecs: np.ndarray  # the eigenvectors V (s, m, m)
    weights: np.ndarray  # V^-1 z (s, m)
    ports: PortForm
    bad: np.ndarray  # sample indices answered directly

    @cached_property
    def residues(self) -> np.ndarray:
        """(s, r, m)."""
        return -(self.ports.w @ self.vecs) * self.weights[:, None, :]

    def mode_shape(self, sample: int, k: int) -> np.ndarray:
        """How mode ``k`` of sample ``sample`` spreads over the rows: column k of W V (r,),
        the rows' voltages as the mode starts alone."""
        return self.ports.w[sample] @ self.vecs[sample][:, k]

    def __call__(self, freqs: np.ndarray) -> np.ndarray:
        """Responses (samples, F, r) at ``freqs`` (F,) or per sample (samples, F)."""
        return self._at(freqs, magnitude=False)

    def magnitude(self, freqs: np.ndarray) -> np.ndarray:
        """|responses| (samples, F, r), as __call__ without the complex values."""
        return self._at(freqs, magnitude=True)

    def through_modes(self, freqs: np.ndarray) -> np.ndarray:
        """Responses (samples, F, r) at a few ``freqs`` (F,) as alpha - s W V (weights /
        (1 + s lambda)), without the residues: rows x m per frequency instead of rows x m^2
        once (the same sums in another order, so equal to rounding)."""
        f = np.asarray(freqs, float)
        s = 2j * np.pi * f
        modes = self.weights[:, :, None] / (1.0 + s[None, None, :] * self.lambdas[:, :, None])
        y = self.vecs @ modes
        out = self.alpha[:, None, :] - s[None, :, None] * _complex_product(
            self.ports.w, y).transpose(0, 2, 1)
        return self._direct_for_bad(out, f, magnitude=False)

    def _at(self, freqs: np.ndarray, magnitude: bool) -> np.ndarray:
        out = evaluate(self.alpha, self.residues, self.lambdas, freqs, magnitude, self._terms)
        return self._direct_for_bad(out, freqs, magnitude)

    def _direct_for_bad(self, out: np.ndarray, freqs, magnitude: bool) -> np.ndarray:
        if self.bad.size:
            f = np.asarray(freqs, float)
            direct = self.ports.direct(f if f.ndim == 1 else f[self.bad], self.bad)
            out[self.bad] = np.abs(direct) if magnitude else direct
        return out

    @cached_property
    def _terms(self) -> tuple[np.ndarray, np.ndarray] | None:
        """The real poles' evaluation terms, formed once for repeated evaluations."""
        if np.iscomplexobj(self.residues) or np.iscomplexobj(self.lambdas):
            return None
        return real_terms(self.residues, self.lambdas)

    def take(self, rows: list[int]) -> PoleResidue:
        """The same form for some of its rows (positions in this form)."""
        form = PoleResidue(self.alpha[:, rows], self.lambdas, self.vecs, self.weights,
                           PortForm(self.ports.x0[:, rows], self.ports.w[:, rows],
                                    self.ports.dm, self.ports.z), self.bad)
        if "residues" in self.__dict__:  # formed already: the rows are a slice
            form.__dict__["residues"] = self.residues[:, rows]
        return form


def port_form(system: System, part: Partition, problem: Problem, x: np.ndarray,
              factors: np.ndarray | None, rhs: np.ndarray, rows: list[int],
              reduced: Reduced | None = None) -> PortForm:
    """The port system of unknowns ``rows`` for excitation ``rhs`` (1, n) at operating
    points ``x``; ``reduced``, the DC reduction of the same ``problem``, saves eliminating
    the linear rows again and linearising the devices over the whole matrix."""
    if reduced is not None and _reusable(part, reduced, rhs, rows):
        return _reduced_form(system, part, problem, reduced, x, factors, rhs, rows)
    g, a, d, used = _linearised(system, problem, x, factors)
    vf = part.values(rhs)
    r = rhs - np.einsum("snf,f->sn", g[:, :, part.fixed], vf[0])
    x0, w = _schur_solve(g, part, np.concatenate(
        [r[:, :, None], np.broadcast_to(a, (g.shape[0], *a.shape))], 2))
    unknown = np.concatenate([part.keep, part.rest])
    a_u, a_f = a[unknown], a[part.fixed]
    dm = d[:, :, None] * (a_u.T @ w)
    z = d * (x0[..., 0] @ a_u + vf @ a_f)
    full = np.zeros((g.shape[0], part.size, 1 + a.shape[1]))
    full[:, unknown] = np.concatenate([x0, w], axis=2)
    full[:, part.fixed, 0] = vf
    if np.isin(rows, part.fixed_branch).any():
        _fixed_currents(full, g, a, rhs, part)
    return PortForm(full[:, rows, 0], full[:, rows, 1:], dm, z)


def _reusable(part: Partition, reduced: Reduced, rhs: np.ndarray, rows: list[int]) -> bool:
    """Whether the reduced frame answers: node rows only, no excitation on the eliminated
    rows, and no excited fixed node at a device terminal (the reduced device maps drop the
    device couplings to fixed nodes, which only an AC voltage there would need)."""
    if rhs[:, part.rest].any() or np.isin(rows, part.fixed_branch).any():
        return False
    excited = part.keep.size + 1 + np.flatnonzero(part.values(rhs)[0])
    return not any(np.isin(excited, np.concatenate([b.jp.ravel(), b.jn.ravel()])).any()
                   for b in reduced.problem.devices.banks)


def _reduced_form(system: System, part: Partition, problem: Problem, reduced: Reduced,
                  x: np.ndarray, factors, rhs: np.ndarray, rows: list[int]) -> PortForm:
    """port_form in the DC reduction's frame: the devices linearised on the kept rows only,
    G_KK - G_KL G_LL^-1 G_LK and G_LL^-1 [G_LF, A_L] taken from the reduction, and only the
    requested rows and the capacitor ports' projections formed (no n x n temporaries)."""
    keep, rest, f = part.keep, part.rest, part.fixed.size
    devices = reduced.problem.devices
    v = devices.junctions(reduced.problem.extend(x[:, keep]))
    _, dev_kk = devices.linearise(v, v)
    a, d, used = capacitances(system, problem, v, factors, x.shape[0])
    vf = part.values(rhs)
    ports = reduced.ports
    z_rhs = np.concatenate([-(ports[:, :, :f] @ vf[0])[:, :, None], ports[:, :, f:][:, :, used]],
                           axis=2)  # G_LL^-1 [r_L, A_L], r_L = -G_LF v_F
    g_kl = block(problem.g, keep, rest)
    r_k = rhs[:, keep] - block(problem.g, keep, part.fixed) @ vf[0]
    rhs_k = np.concatenate([r_k[..., None], np.broadcast_to(a[keep], (x.shape[0], *a[keep].shape))],
                           axis=2)
    # the multipliers check the shared pivots, as for the DC reduction (see batch_lu)
    y_k = solve_many(reduced.problem.g + dev_kk, rhs_k - g_kl @ z_rhs, check="growth")
    y_l = z_rhs - reduced.back @ y_k
    y_u = np.concatenate([y_k, y_l], axis=1)
    proj = _across(a, np.concatenate([keep, rest]), y_u)
    dm = d[:, :, None] * proj[:, :, 1:]
    z = d * (proj[:, :, 0] + vf @ a[part.fixed])
    picked = _pick_rows(part, rows, y_u, vf)
    return PortForm(picked[:, :, 0], picked[:, :, 1:], dm, z)


def _pick_rows(part: Partition, rows: list[int], y_u: np.ndarray, vf: np.ndarray) -> np.ndarray:
    """[x0, W] (s, len(rows), 1 + m) of node ``rows`` from the unknown rows' y_u (kept, then
    eliminated), a fixed node taking its source's value and no port term."""
    position = {int(r): k for k, r in enumerate(np.concatenate([part.keep, part.rest]))}
    fixed = {int(r): k for k, r in enumerate(part.fixed)}
    picked = np.zeros((y_u.shape[0], len(rows), y_u.shape[2]))
    for out, row in enumerate(rows):
        if row in fixed:
            picked[:, out, 0] = vf[0, fixed[row]]
        else:
            picked[:, out] = y_u[:, position[row]]
    return picked


def _fixed_currents(full: np.ndarray, g: np.ndarray, a: np.ndarray, rhs: np.ndarray,
                    part: Partition) -> None:
    """Branch currents of the fixing sources, from their nodes' current balance:
    i = (b_p - G_p x(s) - s A_p y(s)) / G_pk, with the capacitor currents s y(s)."""
    coeff = g[:, part.fixed, part.fixed_branch]  # (s, f)
    balance = g[:, part.fixed, :] @ full
    balance[:, :, 0] -= rhs[:, part.fixed]
    balance[:, :, 1:] -= a[part.fixed][None]
    full[:, part.fixed_branch] = -balance / coeff[..., None]


def modal(ports: PortForm, check_hz) -> PoleResidue:
    """Diagonalise D M (very slow ports split off first, see deflate), each sample checked
    by the residual of its port system at ``check_hz`` (one frequency or several)."""
    lambdas, vecs, inv = eig_split(ports.dm)
    # real when every pole is (numpy keeps the eigenvectors real then), which halves the work
    weights = (inv @ ports.z[..., None].astype(vecs.dtype))[..., 0]
    s = 2j * np.pi * np.atleast_1d(np.asarray(check_hz, float))
    modes = weights[:, :, None] / (1.0 + s[None, None, :] * lambdas[:, :, None])
    ok = backward_error(ports.dm, ports.z, vecs, modes, s) <= BACKWARD
    return PoleResidue(ports.x0, lambdas, vecs, weights, ports, np.flatnonzero(~ok))


def backward_error(dm: np.ndarray, z: np.ndarray, vecs: np.ndarray, modes: np.ndarray,
                   s: np.ndarray) -> np.ndarray:
    """Per sample, the largest componentwise backward error of y = V modes as the solution
    of (I + s D M) y = z over the frequencies s (k,), modes (samples, m, k):
    max_i |r_i| / (|y_i| + |s| (|D M| |y|)_i + |z_i|); a non-finite y gives inf. Real and
    imaginary parts go through the real products together."""
    y = vecs @ modes if np.iscomplexobj(vecs) else _complex_product(vecs, modes)
    residual = y + s * _complex_product(dm, y) - z[:, :, None]
    scale = np.abs(y) + np.abs(s) * (np.abs(dm) @ np.abs(y)) + np.abs(z)[:, :, None]
    with np.errstate(invalid="ignore", divide="ignore"):
        ratio = np.where(residual == 0, 0.0, np.abs(residual) / scale)
    error = np.max(ratio.reshape(ratio.shape[0], -1), axis=1, initial=0.0)
    return np.where(np.isfinite(error), error, np.inf)


def _complex_product(real: np.ndarray, x: np.ndarray) -> np.ndarray:
    """real @ x for a real batch and a complex one, as one real product of both parts."""
    both = real @ np.concatenate([x.real, x.imag], axis=2)
    half = x.shape[2]
    return both[:, :, :half] + 1j * both[:, :, half:]


def _across(a: np.ndarray, rows: np.ndarray, y: np.ndarray) -> np.ndarray:
    """A^T y for an incidence A (n, m) whose unknown rows ``rows`` hold y (s, len(rows), k),
    the other rows being zero: each port's + row minus its - row, by two gathers rather
    than a product (about ten times quicker on a batch)."""
    padded = np.concatenate([y, np.zeros((y.shape[0], 1, y.shape[2]))], axis=1)
    position = np.full(a.shape[0], rows.size)  # rows outside ``rows`` read the zero row
    position[rows] = np.arange(rows.size)
    ends = [np.where((a == sign).any(axis=0), position[np.argmax(a == sign, axis=0)], rows.size)
            for sign in (1.0, -1.0)]
    # np.take keeps the samples outermost (fancy indexing would put the ports there)
    return np.take(padded, ends[0], axis=1) - np.take(padded, ends[1], axis=1)


def _linearised(system: System, problem: Problem, x: np.ndarray, factors):
    """Small-signal G (s, n, n) and the capacitances as incidence A (n + 1 rows dropped to
    n, m) and values d (s, m), unused capacitances left out."""
    samples = x.shape[0]
    g = np.broadcast_to(problem.g, (samples, *problem.g.shape[1:]))
    v = None
    if problem.devices.banks:
        v = problem.devices.junctions(extend(x))
        g = g + problem.devices.linearise(v, v)[1]
    return (g, *capacitances(system, problem, v, factors, samples))


def capacitances(system: System, problem: Problem, v, factors, samples: int):
    """Incidence A (n, m), values d (s, m) and the used mask of every capacitance: the
    capacitors', then the devices' at junction voltages ``v``."""
    cap_a, cap_d = system.cap_columns(factors)
    cap_d = np.broadcast_to(cap_d, (samples, cap_d.shape[1]))
    devices = problem.devices
    if devices.banks:
        cap_a = np.concatenate([cap_a, incidence(system.layout.size, devices.cap_pairs())], 1)
        cap_d = np.concatenate([cap_d, devices.cap_values(v)], axis=1)
    used = np.any(cap_d != 0, axis=0) & np.any(cap_a != 0, axis=0)
    return cap_a[:, used], cap_d[:, used], used


def _schur_solve(g: np.ndarray, part: Partition, rhs: np.ndarray) -> tuple[np.ndarray, ...]:
    """Solutions over the unknown rows (keep, then rest) of G_UU y = rhs_U, split as
    (first column, the others)."""
    t, order = part.keep.size, np.concatenate([part.keep, part.rest])
    g_uu = block(g, order, order)  # one copy; the blocks below are views
    rhs_u = rhs[:, order]
    if not t or t == order.size:
        y = np.linalg.solve(g_uu, rhs_u)
    else:
        g_kr, g_rk = g_uu[:, :t, t:], g_uu[:, t:, :t]
        z = np.linalg.solve(g_uu[:, t:, t:], np.concatenate([g_rk, rhs_u[:, t:]], axis=2))
        back, z_rhs = z[:, :, :t], z[:, :, t:]
        y_keep = np.linalg.solve(g_uu[:, :t, :t] - g_kr @ back, rhs_u[:, :t] - g_kr @ z_rhs)
        y = np.concatenate([y_keep, z_rhs - back @ y_keep], axis=1)
    return y[:, :, :1], y[:, :, 1:]
