"""A kit circuit solved as a batch: the nominal parts, or seeded tolerance samples, at once.

The engine's :func:`~kitleaf.engine.solve_batch` draws the samples exactly as its Monte Carlo
does (same generator, same order), so a figure here and the engine's Monte Carlo agree sample
for sample. This module only narrows that result to what the specs read: voltages and branch
currents, complex unknowns at chosen frequencies, driving-point impedances with a branch
opened, and device parameters. A state that differs only in parts idle at DC shares its
neighbour's operating point (:func:`solve_alike`) instead of solving it again.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from kitleaf.engine import BatchResult, PoleResidue, solve_batch
from kitleaf.engine.batch import nominal_variants, share_operating_point
from kitleaf.engine.blocks import BlockResponse
from kitleaf.specs.model import SAMPLES, SEED


@dataclass(frozen=True)
class Batch:
    """Some samples (``index``, default all) of a solved batch.

    ``system`` is the engine's result; its ``layout`` maps node and branch names to the
    unknowns' indices, as every array here is laid out."""

    system: BatchResult = field(repr=False)
    index: np.ndarray | None = field(default=None, repr=False)

    @property
    def x(self) -> np.ndarray:
        """DC unknowns (samples, n)."""
        return self._pick(self.system.x)

    @property
    def params(self) -> dict:
        """Device name -> {parameter: (samples,) array}."""
        return {name: {k: self._pick(v) for k, v in p.items()}
                for name, p in self.system.params.items()}

    @property
    def size(self) -> int:
        return self.x.shape[0]

    def row(self, node: str) -> int | None:
        """The unknown's index of ``node``; None for ground."""
        return self.system.row(node)

    def voltage(self, node: str) -> np.ndarray:
        """DC voltage of ``node`` per sample."""
        return self._pick(self.system.voltage(node))

    def current(self, branch: str) -> np.ndarray:
        """DC branch current of a voltage source per sample (SPICE sign)."""
        return self._pick(self.system.current(branch))

    def subset(self, idx: np.ndarray) -> Batch:
        """The samples at ``idx`` alone."""
        whole = np.arange(self.system.size) if self.index is None else self.index
        return Batch(self.system, whole[idx])

    def factor(self, name: str) -> np.ndarray:
        """The multiplier each build drew for part ``name``'s value (ones when nominal)."""
        return self._pick(self.system.factor(name))

    def excitation(self, source: str) -> np.ndarray:
        """The right-hand side with ``source`` alone at an AC amplitude of one."""
        return self.system.excitation(source)

    def solve(self, freqs: np.ndarray, rhs: np.ndarray, opened: str | None = None
              ) -> np.ndarray:
        """Complex solutions (samples, frequencies, n); ``freqs`` is (F,) or (samples, F)."""
        return self.system.solve_ac(freqs, rhs, opened, samples=self.index)

    def modal(self, rhs: np.ndarray, joints: tuple[str, ...] = ()) -> Modal:
        """Every node's response to ``rhs`` in pole-residue form, for cheap evaluation
        anywhere (nodes come first among the unknowns, so a row is its node's unknown);
        a large circuit split at its ``joints`` block by block (the engine's blocks)."""
        return Modal(self.system.response(rhs, joints=joints), self.index)

    def impedance(self, node: str, freqs: np.ndarray, opened: str | None = None) -> np.ndarray:
        """Driving-point impedance (samples, F) from ``node`` to ground, every source at rest."""
        rhs = np.zeros(self.system.layout.size)
        rhs[self.row(node)] = 1.0
        return self.solve(freqs, rhs, opened)[:, :, self.row(node)]

    def _pick(self, values: np.ndarray) -> np.ndarray:
        return values if self.index is None else values[self.index]


@dataclass(frozen=True)
class Modal:
    """Every node's response to one excitation, as the engine's pole-residue form."""

    form: PoleResidue | BlockResponse
    index: np.ndarray | None = None
    # the forms of the row sets read so far: a corner search reads the same two nodes at
    # dozens of frequencies, and their residues are formed once
    taken: dict = field(default_factory=dict, repr=False, compare=False)

    def __call__(self, freqs: np.ndarray, rows: list[int]) -> np.ndarray:
        """Unknowns ``rows`` (samples, F, len(rows)); ``freqs`` is (F,) or (samples, F)."""
        if self.index is not None:
            raise ValueError("a pole-residue form is evaluated on its whole batch")
        key = tuple(rows)
        if key not in self.taken:
            self.taken[key] = self.form.take(rows)
        return self.taken[key](freqs)

    def every_node(self, freqs: np.ndarray) -> np.ndarray:
        """Every node (samples, F, nodes) at a few ``freqs`` (F,), through the modes."""
        return self.form.through_modes(freqs)


def solve_nominal(circuit) -> Batch:
    """The circuit with every part at its nominal value: a batch of one."""
    return Batch(solve_batch(circuit))


def solve_samples(circuit, samples: int = SAMPLES, seed: int = SEED,
                  start: np.ndarray | None = None, nominal: Batch | None = None,
                  scale: np.ndarray | None = None) -> Batch:
    """``samples`` seeded variants within part tolerances and device spreads (uniform);
    ``scale`` (samples, elements) multiplies each sample's drawn part values (a trimmer
    turned where that build needs it).

    Newton starts every sample at the nominal operating point (``nominal``, this circuit's
    :func:`solve_nominal`, saves solving it again), or at ``start`` (samples, n): the same
    samples solved in a nearby state, such as another knob position.
    """
    known = None if nominal is None else nominal.system
    return Batch(solve_batch(circuit, samples, seed, "uniform", start, nominal=known,
                             scale=scale))


def solve_alike(circuit, like: Batch) -> Batch:
    """``circuit`` at ``like``'s operating point, with ``like``'s drawn parts and devices.

    Exact only when ``circuit`` differs from ``like``'s circuit in parts that carry no DC
    current there (a pot's position, both legs at zero volts): the same unknowns then satisfy
    both circuits' DC equations, so no Newton solve is needed. The caller checks that.
    """
    if like.index is not None:
        raise ValueError("an operating point is shared by a whole batch only")
    return Batch(share_operating_point(like.system, circuit))


def solve_variants(like: Batch, scale: np.ndarray) -> Batch:
    """``like``, a nominal batch, as variants of its circuit: each with its parts multiplied by
    its row of ``scale`` (variants, elements), all at ``like``'s operating point.

    Exact only when the scaled parts carry no DC current (capacitors). The caller checks that.
    """
    if like.index is not None:
        raise ValueError("an operating point is shared by a whole batch only")
    return Batch(nominal_variants(like.system, scale))
