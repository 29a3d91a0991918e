"""Time steps for a batch of circuits: BDF2 with Newton and junction limiting, error-controlled.

Each step solves C (c0 x + c1 x_n + c2 x_n-1) + G x + i(x) = b(t) for x at the new time, the
variable-step BDF2 formula (backward Euler on the first step, so the start is damped). The
junction capacitances are taken at the step's starting point (they are picofarads beside
the circuit's nanofarads and microfarads, so lagging them one step is far below the error
allowed). A step whose local error estimate (predictor against corrector) exceeds the
tolerance, or whose Newton iteration does not settle, is halved; the next steps grow back
by doubling (BDF2 stays stable while a step is at most 2.4 times the one before).
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace

import numpy as np

from kitleaf.engine.newton import extend
from kitleaf.engine.nonlinear import Devices
from kitleaf.engine.stamps import apply

RELTOL = 1e-6  # Newton's per-step tolerance, relative
VNTOL = 1e-8  # volts
ABSTOL = 1e-9  # amperes, branch currents (their rows see C / h times volts of rounding)
MAX_NEWTON = 25
LTE_SIGNAL = 1e-3  # the local truncation error allowed per step, relative to the node's signal
LTE_DRIVE = 1e-5  # and, in volts, this share of the member's drive level (small drives small)
LTE_VALUE = 1e-5  # and this share of the node's volts: ten times Newton's own tolerance
LTE_FACTOR = 2.0 / 11.0  # BDF2's error constant 2/9 over (1 + 2/9): LTE from the predictor gap
MIN_FRACTION = 2.0 ** -8  # the smallest step, as a fraction of the output interval


@dataclass
class Drive:
    """The batch's equations: G, C (B, n, n), devices, and b(t) = b_dc + amp sin(w t) e."""

    g: np.ndarray
    c: np.ndarray
    devices: Devices
    b_dc: np.ndarray  # (n,)
    excitation: np.ndarray  # (n,)
    amplitude: np.ndarray  # (B,)
    omega: float
    node_count: int
    # the nodes whose local error is judged: the circuit's own (a device's internal nodes,
    # such as an op-amp's clamped gain node, show only through them)
    judged: np.ndarray
    # each member's half peak-to-peak signal at the judged nodes (B, judged), from the last
    # period solved; before one is, the drive level stands in for it
    swing: np.ndarray | None = None

    def take(self, idx: np.ndarray) -> Drive:
        """The members at ``idx`` alone."""
        banks = [bank.with_params(**{k: v[idx] if v.shape[0] > 1 else v
                                     for k, v in bank.params.items()})
                 for bank in self.devices.banks]
        return replace(self, g=self.g[idx], c=self.c[idx], amplitude=self.amplitude[idx],
                       devices=self.devices.with_banks(banks),
                       swing=None if self.swing is None else self.swing[idx])

    def rhs(self, t: float) -> np.ndarray:
        wave = self.amplitude * np.sin(self.omega * t)
        return self.b_dc[None, :] + wave[:, None] * self.excitation[None, :]

    def caps(self, x: np.ndarray) -> np.ndarray:
        """C with the junction capacitances at ``x`` (B, n, n)."""
        if not self.devices.banks or self.devices.cap_map.shape[1] == 0:
            return self.c
        v = self.devices.junctions(extend(x))
        dev = apply(self.devices.cap_values(v), self.devices.cap_map, self.c.shape[1:])
        return self.c + dev


@dataclass
class History:
    """The last accepted points (newest first), their junction voltages and sensitivities."""

    t: list[float]
    x: list[np.ndarray]
    vstar: list[np.ndarray]
    sens: list[np.ndarray | None]  # d x / d s0 (B, n, m) per point, None when not tracked
    c_start: np.ndarray  # C at the newest point
    failed: np.ndarray = field(default_factory=lambda: np.zeros(0, bool))
    h_last: float = 0.0


def coefficients(h: float, h_prev: float | None) -> tuple[float, float, float]:
    """BDF2 derivative weights (c0, c1, c2) on x_new, x_n, x_n-1; backward Euler without
    a previous step."""
    if h_prev is None:
        return 1.0 / h, -1.0 / h, 0.0
    w = h / h_prev
    return (1.0 + 2.0 * w) / ((1.0 + w) * h), -(1.0 + w) / h, w * w / ((1.0 + w) * h)


def predict(hist: History, t: float) -> np.ndarray:
    """Lagrange extrapolation through the last (up to three) points."""
    ts, xs = hist.t[:3], hist.x[:3]
    out = np.zeros_like(xs[0])
    for i, (ti, xi) in enumerate(zip(ts, xs, strict=True)):
        weight = 1.0
        for j, tj in enumerate(ts):
            if j != i:
                weight *= (t - tj) / (ti - tj)
        out += weight * xi
    return out


@dataclass
class StepResult:
    x: np.ndarray
    vstar: list[np.ndarray]
    settled: np.ndarray  # (B,) Newton converged
    error: np.ndarray  # (B,) local error in units of its tolerance (0 without an estimate)
    sens: np.ndarray | None


def try_step(drive: Drive, hist: History, h: float) -> StepResult:
    """One BDF2 step of size ``h`` from the newest point; nothing in ``hist`` changes."""
    t = hist.t[0] + h
    first = len(hist.t) < 2
    c0, c1, c2 = coefficients(h, None if first else hist.t[0] - hist.t[1])
    c = hist.c_start
    past = c1 * hist.x[0] + (c2 * hist.x[1] if c2 else 0.0)
    past = np.einsum("bij,bj->bi", c, past)
    x = predict(hist, t) if not first else hist.x[0].copy()
    carried = None
    if hist.sens[0] is not None:  # solved beside each Newton step, with its factorisation
        moved = c1 * hist.sens[0] + (c2 * hist.sens[1] if c2 else 0.0)
        carried = -np.einsum("bij,bjm->bim", c, moved)
    x, vstar, settled, sens = _newton(drive, hist, x, c, c0, past, drive.rhs(t), carried)
    error = _local_error(drive, hist, t, x) if len(hist.t) >= 3 else np.zeros(x.shape[0])
    return StepResult(x, vstar, settled, error, sens)


def _newton(drive: Drive, hist: History, x: np.ndarray, c: np.ndarray, c0: float,
            past: np.ndarray, b: np.ndarray, carried: np.ndarray | None):
    """Newton with junction limiting; returns x, the junction voltages, the settled flags
    and ``carried`` (B, n, m) solved by the last Jacobian (the sensitivities' step)."""
    size, banks = x.shape[1], drive.devices.banks
    tol_abs = np.where(np.arange(size) < drive.node_count, VNTOL, ABSTOL)
    base = drive.g + c0 * c
    vstar = hist.vstar
    settled = np.zeros(x.shape[0], bool)
    jac = base
    for _ in range(MAX_NEWTON):
        residual = np.einsum("bij,bj->bi", base, x) + past - b
        limited = np.zeros(x.shape[0], bool)
        if banks:
            vraw = drive.devices.junctions(extend(x))
            vlim = [bank.limit(vr, vs) for bank, vr, vs in zip(banks, vraw, vstar, strict=True)]
            for vr, vl in zip(vraw, vlim, strict=True):
                limited |= np.any(vr != vl, axis=(1, 2))
            currents, dev_jac = drive.devices.linearise(vlim, vraw)
            residual, jac, vstar = residual + currents, base + dev_jac, vlim
        with np.errstate(invalid="ignore", over="ignore"):
            rhs = -residual[..., None]
            if carried is not None:
                rhs = np.concatenate([rhs, carried], axis=2)
            solved = np.linalg.solve(jac, rhs)
            step = solved[..., 0]
            x = x + step
            small = np.all(np.abs(step) <= RELTOL * np.abs(x) + tol_abs, axis=1)
        settled = small & ~limited & np.isfinite(step).all(axis=1)
        if (settled | hist.failed).all():
            break
    return x, vstar, settled, None if carried is None else solved[..., 1:]


def _local_error(drive: Drive, hist: History, t: float, x: np.ndarray) -> np.ndarray:
    """The step's local error over its tolerance, on node voltages, worst node per sample."""
    rows = drive.judged
    gap = LTE_FACTOR * np.abs(x - predict(hist, t))[:, rows]
    signal = drive.amplitude[:, None] if drive.swing is None else drive.swing
    allowed = (LTE_SIGNAL * signal + LTE_DRIVE * drive.amplitude[:, None]
               + LTE_VALUE * np.abs(x[:, rows]) + 1e-12)
    return np.max(gap / allowed, axis=1)


def accept(drive: Drive, hist: History, h: float, res: StepResult) -> None:
    """Push an accepted step onto the history (three points kept)."""
    hist.t.insert(0, hist.t[0] + h)
    hist.x.insert(0, res.x)
    hist.sens.insert(0, res.sens)
    del hist.t[3:], hist.x[3:], hist.sens[3:]
    hist.vstar = res.vstar
    hist.c_start = drive.caps(res.x)
    hist.h_last = h
    hist.failed |= ~res.settled


def advance(drive: Drive, hist: History, t_end: float, h_grid: float) -> None:
    """Step from the newest point to ``t_end`` exactly, halving rejected steps; a sample whose
    Newton fails even at the smallest step is marked failed and carried along."""
    h_min = h_grid * MIN_FRACTION
    h = min(h_grid, 2.0 * hist.h_last) if hist.h_last else h_grid * MIN_FRACTION * 16
    while t_end - hist.t[0] > 1e-9 * h_grid:
        h = min(h, t_end - hist.t[0])
        if t_end - hist.t[0] - h < 0.05 * h:  # no sliver left over
            h = t_end - hist.t[0]
        res = try_step(drive, hist, h)
        live = ~hist.failed
        good = res.settled[live].all() and (res.error[live] <= 1.0).all()
        if good or h <= h_min:
            accept(drive, hist, h, res)
            h = min(2.0 * h, h_grid)
        else:
            h /= 2.0
