"""One state of a kit (knob positions, supply) solved nominally and over tolerance samples."""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import replace
from functools import cached_property

import numpy as np

from kitleaf.circuit.chain import KNOB_STEPS as KNOB_STEPS  # where the specs read it
from kitleaf.circuit.chain import SOURCE, KitCircuit
from kitleaf.engine.elements import Pot, taper_fraction, upper_leg_columns
from kitleaf.specs.model import Range
from kitleaf.specs.response import REFERENCE_HZ, Sweep
from kitleaf.specs.sampled import Batch, solve_alike, solve_nominal, solve_samples


class View:
    """One batch (nominal or samples) with its AC solutions, each solved on first use."""

    def __init__(self, batch: Batch, joints: tuple[str, ...] = (),
                 pairs: tuple[tuple[str, str], ...] = ()) -> None:
        """``joints`` and ``pairs``: the kit's nodes where its stages meet and the pairs whose
        corners are found together (see :class:`Sweep`)."""
        self.batch, self.joints, self.pairs = batch, joints, pairs
        self.memo: dict = {}

    @cached_property
    def sweep(self) -> Sweep:
        """Node voltages over the plotted band; its 1 kHz check reuses :attr:`ref`."""
        return Sweep(self.batch, SOURCE, self.ref, self.joints, self.pairs)

    @cached_property
    def ref(self) -> np.ndarray:
        """Complex node voltages and branch currents at 1 kHz, (samples, n)."""
        return self.batch.solve(np.array([REFERENCE_HZ]), self.batch.excitation(SOURCE))[:, 0]

    def at_ref(self, node: str) -> np.ndarray:
        row = self.batch.row(node)
        return np.zeros(self.batch.size, complex) if row is None else self.ref[:, row]

    def once(self, key, compute: Callable[[], object]):
        """``compute()`` cached under ``key`` (corners are asked for twice, low and high)."""
        if key not in self.memo:
            self.memo[key] = compute()
        return self.memo[key]


class KitState:
    """The kit at given knob positions and supply: a nominal view and a samples view.

    In the samples, each trimmer is turned where that build needs it to meet its set-up
    target (``trims``: per-sample positions by trimmer; by default the kit's own, from
    :func:`kitleaf.specs.trim.trimmed_positions`), as a builder sets each kit on the bench.
    """

    def __init__(self, kit: KitCircuit, positions: Mapping[str, float],
                 supply_v: float | None = None, near: KitState | None = None,
                 trims: Mapping[str, np.ndarray] | None = None) -> None:
        self.kit, self._trims = kit, trims
        self.circuit = kit.netlist(positions, supply_v)
        self.near = near
        # Same supply, and every moved pot idle at DC: the nearby state's operating point holds.
        self.same_dc = (near is not None and near.supply_v == supply_v
                        and idle_at_dc(near, moved_pots(near.positions, positions)))
        self.positions, self.supply_v = dict(positions), supply_v
        self.nominal = View(solve_alike(self.circuit, near.nominal.batch) if self.same_dc
                            else solve_nominal(self.circuit), *kit.sweep_nodes)

    @cached_property
    def samples(self) -> View:
        """The tolerance samples: the nearby state's operating point when it holds here,
        otherwise solved with Newton started from the nearby state's samples (if any)."""
        if self.same_dc:
            return View(solve_alike(self.circuit, self.near.samples.batch), *self.kit.sweep_nodes)
        if self.near is None:
            return View(solve_samples(self.circuit, nominal=self.nominal.batch,
                                      scale=self.scale), *self.kit.sweep_nodes)
        return View(solve_samples(self.circuit, start=self.near.samples.batch.x,
                                  scale=self.scale), *self.kit.sweep_nodes)

    @cached_property
    def scale(self) -> np.ndarray | None:
        """The samples' part multipliers that turn each trimmer where its build needs it."""
        trims = self._trims
        if trims is None and self.kit.trims:
            from kitleaf.specs.trim import trimmed_positions  # it solves states of its own

            trims = trimmed_positions(self.kit)
        if not trims:
            return None
        set_at = {**dict(self.kit.presets), **self.positions}
        tapers = {p.designator: p.attrs["taper"] for p in self.kit.parts() if p.designator in trims}
        return trim_scale(self.circuit, trims, set_at, tapers)

    def range(self, measure: Callable[[View], np.ndarray]) -> Range | None:
        """``measure`` nominally and its 5th-95th percentiles over the samples; None when the
        nominal value does not exist (a corner beyond the band)."""
        nominal = float(measure(self.nominal)[0])
        if not np.isfinite(nominal):
            return None
        spread = np.asarray(measure(self.samples), float)
        finite = spread[np.isfinite(spread)]
        if finite.size == 0:
            return Range(nominal)
        low, high = np.percentile(finite, [5.0, 95.0])
        return Range(nominal, float(low), float(high))


def trim_scale(circuit, trims: Mapping[str, np.ndarray], set_at: Mapping[str, float],
               tapers: Mapping[str, str]) -> np.ndarray:
    """Multipliers (samples, elements and pots' upper legs): 1, but for each trimmer the
    change its build's position makes to the netlist's. In a resistor's place (a resistor
    element of its name, set at ``set_at``) that is the ratio of the two tracks; wired as a
    divider (a pot element, in a custom stage) each leg's ratio, which moves the wiper."""
    size = len(next(iter(trims.values())))
    uppers = upper_leg_columns(circuit.elements)
    scale = np.ones((size, len(circuit.elements) + len(uppers)))
    for k, e in enumerate(circuit.elements):
        if e.name not in trims:
            continue
        if isinstance(e, Pot):
            lower, upper = _legs(e, trims[e.name])
            scale[:, k], scale[:, uppers[e.name]] = lower / e.legs()[0], upper / e.legs()[1]
        else:
            taper = tapers[e.name]
            scale[:, k] = _track(taper, trims[e.name]) / _track(taper, [set_at[e.name]])[0]
    return scale


def _legs(pot: Pot, positions: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """A pot's two legs with its wiper at each of ``positions``, as :meth:`Pot.legs`."""
    legs = np.array([replace(pot, position=float(p)).legs() for p in positions])
    return legs[:, 0], legs[:, 1]


def _track(taper: str, positions) -> np.ndarray:
    """The share of the track below the wiper, floored as the engine floors a leg."""
    shares = np.vectorize(lambda p: taper_fraction(taper, float(p)))(positions)
    return np.maximum(shares, 1e-6)


def moved_pots(before: Mapping[str, float], after: Mapping[str, float]) -> set[str]:
    return {name for name in after if before.get(name) != after[name]}


def idle_at_dc(state: KitState, pots: set[str]) -> bool:
    """Whether every pot in ``pots`` has exactly zero volts across both legs (so no current),
    nominally and in every sample of ``state``: its position then cannot move the bias."""
    found = [e for e in state.circuit.elements if isinstance(e, Pot) and e.name in pots]
    if len(found) != len(pots):
        return False
    for batch in (state.nominal.batch, state.samples.batch):
        for pot in found:
            w = batch.voltage(pot.w)
            if np.any(batch.voltage(pot.ccw) != w) or np.any(batch.voltage(pot.cw) != w):
                return False
    return True


def nominal_positions(kit: KitCircuit) -> dict[str, float]:
    """Every knob at half its rotation and every switch where it rests: the state
    the voltage table and headline figures assume."""
    return kit.rest_positions()
