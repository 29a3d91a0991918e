"""The reduced members and their step state as the kernels' arrays, and back.

Each device bank goes to its family's slot (kernels/devices.py); a slot with no bank holds
empty arrays of its family's shape, so every call has the same types (one compilation).
"""

from __future__ import annotations

import math

import numpy as np

from kitleaf.engine import reduced_steps
from kitleaf.engine.devices.bjt import BjtBank
from kitleaf.engine.devices.diode import DiodeBank
from kitleaf.engine.devices.jfet import JfetBank
from kitleaf.engine.devices.opamp import OpAmpBank
from kitleaf.engine.kernels import period
from kitleaf.engine.kernels.devices import SLOTS
from kitleaf.engine.kernels.steps import settings
from kitleaf.engine.nonlinear import Devices
from kitleaf.engine.reduced_steps import Linear, Members, StepState, bdf2

BANKS = (DiodeBank, BjtBank, JfetBank, OpAmpBank)  # in the order of SLOTS
# (junctions, currents) of each slot's devices
SHAPES = ((1, 1), (2, 3), (2, 3), (5, 4))


def owned(a, dtype=float) -> np.ndarray:
    """A writable C-ordered copy: the kernels type an array by its layout and flags."""
    return np.array(a, dtype=dtype, order="C", copy=True)


def slots(devices: Devices) -> list[int] | None:
    """Each bank's slot, or None when a bank is of no slot's family or shares one."""
    found = [next((i for i, kind in enumerate(BANKS) if type(bank) is kind), -1)
             for bank in devices.banks]
    if -1 in found or len(set(found)) < len(found):
        return None
    return found


def families(devices: Devices) -> tuple:
    """``fam`` for the kernels (rows, polarity, parameters, scratch, capacitance columns)."""
    where = slots(devices)
    by_slot = dict(zip(where, devices.banks, strict=True))
    parts = [[] for _ in range(10)]
    offsets, counts = np.zeros(4, np.int64), np.zeros(4, np.int64)
    column = 0
    for slot, bank in zip(where, devices.banks, strict=True):
        offsets[slot], counts[slot] = column, bank.cap_a.shape[0]
        column += bank.cap_a.size
    for slot, module in enumerate(SLOTS):
        k, terms = SHAPES[slot]
        bank = by_slot.get(slot)
        n = 0 if bank is None else bank.jp.shape[1]
        rows = [np.zeros((k, n), np.int64)] * 2 + [np.zeros((terms, n), np.int64)] * 2
        if bank is not None:
            rows = [owned(getattr(bank, f), np.int64)
                    for f in ("jp", "jn", "src", "dst")]
        polarity = np.ones(n) if bank is None else owned(bank.polarity, float)
        params = (np.zeros((1, len(module.KEYS), 0)) if bank is None else owned(
            np.stack([bank.p(key) for key in module.KEYS], axis=1), float))
        scratch = [np.zeros((k, n)), np.zeros((k, n)), np.zeros((terms, n)),
                   np.zeros((terms, k, n))]
        for i, value in enumerate([*rows, polarity, params, *scratch]):
            parts[i].append(value)
    return (*(tuple(p) for p in parts), offsets, counts)


def vstar_slots(devices: Devices, vstar: list[np.ndarray], members: int) -> tuple:
    """The banks' last junction voltages (B, k, D), one array per slot."""
    by_slot = dict(zip(slots(devices), vstar, strict=True))
    return tuple(owned(np.broadcast_to(
        by_slot[s], (members, *by_slot[s].shape[1:])), float) if s in by_slot
                 else np.zeros((members, SHAPES[s][0], 0)) for s in range(len(SLOTS)))


def linear(lin: Linear) -> tuple:
    return tuple(owned(getattr(lin, f), float) for f in Linear.__dataclass_fields__)


def run(mem: Members, st: StepState, drive: np.ndarray, h: float,
        trail: np.ndarray | None = None, keep: bool = True):
    """Steps every member through ``drive`` (B, steps) at step ``h``, ``st`` updated; the
    kept waveforms (B, o, steps), and when ``keep`` each step's point (steps, B, t) and
    sensitivities (steps, B, t, k)."""
    count, steps = drive.shape
    t, k = st.x_t[0].shape[1], st.sens[0].shape[2]
    sens_x = (np.zeros((2, count, t, k)) if st.sens_x is None
              else owned(np.stack(st.sens_x)))
    vstar = vstar_slots(mem.devices, st.vstar, count)
    state = (np.stack(st.x_t).astype(float), np.stack(st.xe).astype(float),
             np.stack(st.q).astype(float), owned(np.stack(st.sens), float),
             sens_x, vstar, st.failed.copy())
    pairs = np.array(mem.devices.cap_pairs(), np.int64).reshape(-1, 2).T.copy()
    waves = np.zeros((count, mem.linear.out_t.shape[1], steps))
    solved = np.zeros((steps, count, t) if keep else (0, 1, 1))
    moves = np.zeros((steps, count, t, k) if keep else (0, 1, 1, 1))
    guesses = np.zeros((0, 1, 1)) if trail is None else owned(trail, float)
    space = period.workspace(count, t, st.q[0].shape[1], k, pairs.shape[1],
                             st.xe[0].shape[1], waves.shape[1])
    period.run(linear(mem.linear), owned(drive, float), bdf2(h),
               owned(mem.vf, float), pairs, mem.node_count,
               families(mem.devices), state, guesses, waves, solved, moves,
               settings(reduced_steps), space)
    _store(mem.devices, st, state)
    return waves, solved, moves


def _store(devices: Devices, st: StepState, state: tuple) -> None:
    x_t, xe, q, sens, sens_x, vstar, failed = state
    st.x_t, st.xe, st.q, st.sens = list(x_t), list(xe), list(q), list(sens)
    if st.sens_x is not None:
        st.sens_x = list(sens_x)
    st.vstar = [vstar[s] for s in slots(devices)]
    st.failed = failed


def sine_drive(mem: Members, steps: int) -> np.ndarray:
    """The sine's value at each step of one period (B, steps), as reduced_steps.step takes
    it."""
    period_s = 2.0 * math.pi / mem.omega
    sines = np.array([math.sin(mem.omega * (k * period_s / steps)) for k in range(1, steps + 1)])
    return mem.amplitude[:, None] * sines[None, :]
