"""What a design rule reads: the guide, the solved kit at every knob position, and findings."""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property

from kitleaf.circuit.chain import KitCircuit
from kitleaf.circuit.parts import Part
from kitleaf.engine import OperatingPoint, solve_dc
from kitleaf.errors import SourceSpan
from kitleaf.guide.model import Guide
from kitleaf.specs.derive import KNOB_STEPS
from kitleaf.specs.finding import Finding
from kitleaf.specs.lookup import KIT
from kitleaf.specs.model import KitSpecs
from kitleaf.specs.ratings import Stress, worst_stresses
from kitleaf.specs.solve import nominal_positions


def drive_words(positions: tuple[tuple[str, float], ...]) -> str:
    """A knob setting of the large-signal figures in words."""
    if not positions:
        return "knobs at half way"
    return ", ".join(f"{name} at {round(pos * 100)} %" for name, pos in positions)


@dataclass(frozen=True)
class DcSetting:
    """The kit's DC operating point at one setting of its knobs, with words for that setting."""

    words: str
    circuit: object
    op: OperatingPoint


@dataclass
class RuleContext:
    """One guide's solved kit; DC states are solved once, on first use, and shared by rules."""

    guide: Guide
    kit: KitCircuit
    specs: KitSpecs

    @cached_property
    def states(self) -> tuple[DcSetting, ...]:
        """Knobs at half way, then each knob alone at every swept position (DC only)."""
        nominal = nominal_positions(self.kit)
        settings = [("knobs at half way", nominal)]
        for knob in self.kit.knobs:
            for pos in KNOB_STEPS:
                if pos != nominal[knob.designator]:
                    words = f"{knob.name} at {round(pos * 100)} %"
                    settings.append((words, {**nominal, knob.designator: pos}))
        return tuple(self._solve(words, positions) for words, positions in settings)

    def _solve(self, words: str, positions: dict) -> DcSetting:
        circuit = self.kit.netlist(positions)
        return DcSetting(words, circuit, solve_dc(circuit))

    @cached_property
    def stresses(self) -> dict[str, Stress]:
        """Each rated part's worst DC stress over the knob states (see specs/ratings.py)."""
        return worst_stresses(self.parts, self.states)

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
