"""A design rule's view of the kit at one knob setting: its DC operating point in the nominal
build and in the builds drawn within part tolerances, each figure one value per build."""

from __future__ import annotations

from functools import cached_property

import numpy as np

from kitleaf.specs.sampled import Batch
from kitleaf.specs.solve import KitState


class Reading:
    """One knob setting's DC operating point in a set of builds (the nominal one, or the
    tolerance samples): every figure is an array, one value per build."""

    def __init__(self, batch: Batch, memo: dict) -> None:
        self.batch, self._memo = batch, memo

    def voltage(self, node: str) -> np.ndarray:
        return self.batch.voltage(node)

    def device(self, name: str, key: str) -> list:
        """Figure ``key`` of device ``name``'s report (its ``region``, ``id``...) per build."""
        return [report[key] for report in self._reports(name)]

    def factor(self, name: str) -> np.ndarray:
        """Each build's multiplier of part ``name``'s value."""
        return self.batch.system.factor(name)

    def leg_factors(self, name: str) -> tuple[np.ndarray, np.ndarray]:
        """Each build's multipliers of pot ``name``'s lower and upper legs (they differ where
        a trimmer is set per build)."""
        return self.batch.system.leg_factors(name)

    def _reports(self, name: str) -> tuple[dict, ...]:
        # Settings whose knobs move no DC current share one operating point (the same
        # array), so their device reports are computed once.
        key = (name, id(self.batch.system.x))
        if key not in self._memo:
            self._memo[key] = self.batch.system.reports(name)
        return self._memo[key]


class DcSetting:
    """The kit at one setting of its knobs, with words for that setting: its nominal build
    and, solved on first use, the builds drawn within part tolerances."""

    def __init__(self, words: str, state: KitState, memo: dict) -> None:
        self.words, self.circuit = words, state.circuit
        self._state, self._memo = state, memo
        self.nominal = Reading(state.nominal.batch, memo)
        self.view = state.nominal  # the nominal build's AC solutions, shared with the specs

    @cached_property
    def samples(self) -> Reading:
        return Reading(self._state.samples.batch, self._memo)
