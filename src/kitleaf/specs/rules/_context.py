"""What a design rule reads: the guide, the solved kit at every knob position over the
tolerance spread, and findings."""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, replace
from functools import cached_property

import numpy as np

from kitleaf.circuit.chain import KitCircuit
from kitleaf.circuit.kind import Stage
from kitleaf.circuit.parts import Part
from kitleaf.display import setting, settings
from kitleaf.errors import SourceSpan
from kitleaf.guide.model import Guide
from kitleaf.specs.finding import Finding
from kitleaf.specs.lookup import KIT
from kitleaf.specs.model import KitSpecs, Range
from kitleaf.specs.polarity import Orientation, orientations
from kitleaf.specs.ratings import LIMITS, Stress, derated_limit, part_stress
from kitleaf.specs.rules._settings import DcSetting, Reading
from kitleaf.specs.solve import KitState, nominal_positions
from kitleaf.values import format_value

# A rule finds a knob setting where the nominal build fails, or where at least this share of
# the builds drawn within part tolerances fails: the 5th-95th percentile spread claims use.
SHARE_LIMIT = 0.05
# Values that move less than this (relative) over the knob settings do not depend on them.
KNOB_FREE = 1e-3
EVERY_SETTING = "at every knob setting"




def drive_words(positions: tuple[tuple[str, float | str], ...]) -> str:
    """A knob or switch setting of the large-signal figures in words."""
    return settings(positions) if positions else "knobs at half way"


@dataclass(frozen=True)
class Verdict:
    """Where a rule's test fails most: the state, whether the nominal build fails there and
    the share of tolerance builds that do."""

    state: DcSetting
    nominal: bool
    share: float
    everywhere: bool  # the same outcome at every knob setting
    knobs: bool = True  # the kit has knobs to name

    @property
    def where(self) -> str:
        """`` with KNOB at P %``, `` at every knob setting``, or nothing for a kit without
        knobs; with its leading space."""
        if not self.knobs:
            return ""
        return f" {EVERY_SETTING}" if self.everywhere else f" with {self.state.words}"

    def builds(self) -> str:
        """Words for how many builds fail, for the end of a finding's first clause."""
        count = "all builds" if self.share >= 1.0 else f"{int(self.share * 100)} % of builds"
        if self.nominal and self.share < SHARE_LIMIT:
            return f"with nominal parts (in only {count} within part tolerances)"
        if self.nominal:
            return f"with nominal parts and in {count} within part tolerances"
        return f"in {count} within part tolerances, though not with nominal parts"


def past_limit(value: Range | None, limit: float, above: bool, quantity: str) -> str | None:
    """Words saying that a computed value lies past ``limit`` (over it when ``above``), after
    its nominal value in a finding; None when neither the nominal value nor the 5th-95th
    percentile spread (at least 5 % of builds) goes past it."""
    if value is None:
        return None
    side, edge = ("above", value.high) if above else ("below", value.low)
    past = (lambda x: x > limit) if above else (lambda x: x < limit)
    shown = format_value(limit, quantity)
    if past(value.nominal):
        return f", {side} {shown}"
    if edge is not None and past(edge):
        return (f", but {side} {shown} in at least {SHARE_LIMIT * 100:g} % of builds within part "
                f"tolerances ({'up' if above else 'down'} to {format_value(edge, quantity)})")
    return None


@dataclass
class RuleContext:
    """One guide's solved kit; DC states are solved once, on first use, and shared by rules."""

    guide: Guide
    kit: KitCircuit
    specs: KitSpecs
    solved: object | None = None  # the specs' SolvedKit, whose states the rules share

    @cached_property
    def states(self) -> tuple[DcSetting, ...]:
        """Knobs at half way (switches where they rest), then each knob or switch
        alone at every swept position (DC only)."""
        nominal = nominal_positions(self.kit)
        settings = [("knobs at half way", None, 0)]
        for control in self.kit.controls:
            for k, (pos, shown) in enumerate(control.steps):
                if pos != nominal[control.designator]:
                    settings.append((setting(control.name, shown), control, k))
        memo: dict = {}
        return tuple(DcSetting(words, self._state(control, k), memo)
                     for words, control, k in settings)

    def _state(self, control, k: int) -> KitState:
        """The kit with ``control`` at its step ``k`` and the others at their nominal
        settings (None: all nominal), from the shared solved states when there are some."""
        if self.solved is not None:
            return self.solved.base if control is None else self.solved.sweeps[
                control.designator][k]
        if control is None:
            return self._base
        positions = {**nominal_positions(self.kit), control.designator: control.steps[k][0]}
        return KitState(self.kit, positions, near=self._base)

    @cached_property
    def _base(self) -> KitState:
        return KitState(self.kit, nominal_positions(self.kit))

    def worst(self, fails: Callable[[Reading], Sequence[bool]]) -> Verdict | None:
        """The state where ``fails`` (a reading -> whether each build fails) finds the most:
        the nominal build first, then the largest share of tolerance builds; None when the
        nominal build passes everywhere and fewer than SHARE_LIMIT of the builds fail."""
        found, outcomes = None, set()
        for state in self.states:
            nominal = bool(np.asarray(fails(state.nominal))[0])
            share = float(np.mean(np.asarray(fails(state.samples))))
            outcomes.add((nominal, share))
            if (nominal or share >= SHARE_LIMIT) and (
                    found is None or (nominal, share) > (found.nominal, found.share)):
                found = Verdict(state, nominal, share, False)
        return None if found is None else replace(found, everywhere=len(outcomes) == 1,
                                                  knobs=bool(self.kit.controls))

    @staticmethod
    def shown(verdict: Verdict, measure: Callable[[Reading], np.ndarray],
              high: bool = True) -> tuple[float, str]:
        """The value a finding shows, with words before it: the nominal build's where it
        fails, else the 95th percentile of the tolerance builds (5th with ``high`` False),
        which lies past the limit since at least SHARE_LIMIT of them fail."""
        if verdict.nominal:
            return float(np.asarray(measure(verdict.state.nominal))[0]), ""
        values = np.asarray(measure(verdict.state.samples), float)
        percentile = 100.0 * (1.0 - SHARE_LIMIT) if high else 100.0 * SHARE_LIMIT
        value = float(np.percentile(values, percentile, method="inverted_cdf"))
        return value, "up to " if high else "as little as "

    def setting(self, state: DcSetting, value: Callable[[Reading], float]) -> str:
        """`` with KNOB at P %`` for ``state``, or `` at every knob setting`` when ``value``
        (nominal) does not depend on the knobs, since naming a knob position would send the
        maker to turn it; nothing for a kit without knobs. With its leading space."""
        if not self.kit.controls:
            return ""
        seen = [value(s.nominal) for s in self.states]
        scale = max(abs(v) for v in seen)
        if max(seen) - min(seen) <= KNOB_FREE * scale:
            return f" {EVERY_SETTING}"
        return f" with {state.words}"

    @cached_property
    def stresses(self) -> dict[str, Stress]:
        """Each rated part's worst DC stress over the knob states (see specs/ratings.py)."""
        return {p.designator: self._stress(p) for p in self.parts if p.type in LIMITS}

    def _stress(self, part: Part) -> Stress:
        """Where the nominal build or SHARE_LIMIT of the builds exceed the part's derated
        rating, the stress that shows it (the nominal build's, else the 95th percentile of
        the builds); otherwise the nominal build's worst, the first setting winning a tie."""
        element = self.states[0].circuit.element(part.designator)

        def stress(reading: Reading) -> np.ndarray:
            legs = reading.leg_factors(part.designator) if hasattr(element, "legs") else None
            return part_stress(part.type, reading, element, reading.factor(part.designator),
                               legs)

        def nominal(reading: Reading) -> float:
            return float(stress(reading)[0])

        limit = derated_limit(part.type, part.rating)
        verdict = None if limit is None else self.worst(lambda r: stress(r) > limit)
        if verdict is None:
            value, i = max((nominal(s.nominal), -i) for i, s in enumerate(self.states))
            return Stress(value, self.setting(self.states[-i], nominal).strip())
        value, bound = self.shown(verdict, stress)
        where = self.setting(verdict.state, nominal).strip()
        return Stress(value, ", ".join(filter(None, (where, verdict.builds()))), bound)

    def corner_stages(self) -> tuple[Stage, ...]:
        """The signal stages whose corners the rules judge: all but passive tone controls, and
        but a kit that oscillates with its knobs at half way (no corner means anything there:
        rule stable names it)."""
        return tuple(s for s in self.kit.signal_stages
                     if not self.kit.kind(s).shapes_response
                     and self.specs.stage(s.id).unstable is None)

    @cached_property
    def orientations(self) -> dict[str, Orientation]:
        """Each polarised capacitor's + end over the knob states (see specs/polarity.py)."""
        return orientations(self)

    @cached_property
    def parts(self) -> tuple[Part, ...]:
        return tuple(p for s in self.kit.stages for p in s.all_parts())

    def of_type(self, *types: str) -> tuple[Part, ...]:
        return tuple(p for p in self.parts if p.type in types)

    def finding(self, rule: str, part_or_stage, message: str) -> Finding:
        """A finding about a part (placed at its line) or a stage (at its block)."""
        if isinstance(part_or_stage, Part):
            p = part_or_stage
            return Finding(rule, p.designator, p.stage_id or KIT, message, p.span)
        stage = part_or_stage
        return Finding(rule, stage.id, stage.id, message, stage.span)

    def kit_finding(self, rule: str, message: str, span: SourceSpan | None = None) -> Finding:
        return Finding(rule, KIT, KIT, message, span or self.guide.kit.span)
