"""Which clips a kit's page plays: the knob settings heard, their names and file names."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from kitleaf.guide.slug import slug_for

MAX_CLIPS = 9  # clips of the kit itself per page, the bypass clip aside
TURNS = (0.0, 1.0)  # each knob at the ends of its travel, the others at half way


@dataclass(frozen=True)
class ClipSetting:
    """One clip: knob positions (designator -> 0..1 of rotation) and how the page names it."""

    name: str  # file stem, ASCII: "all-half", "gain-0", "gain-100"
    label: str  # "Every knob at half way", "Gain at 0 %"
    positions: tuple[tuple[str, float], ...]

    @property
    def position_map(self) -> dict[str, float]:
        return dict(self.positions)


@dataclass(frozen=True)
class ClipPlan:
    settings: tuple[ClipSetting, ...]
    left_out: tuple[str, ...]  # knobs whose turned clips did not fit in MAX_CLIPS


def clip_plan(knobs: Sequence[tuple[str, str]]) -> ClipPlan:
    """The clips of a kit whose knobs are ``(name, designator)`` pairs in the kit's order: every
    knob at half way, then each knob at 0 % and 100 % with the rest at half (its 50 % is the
    first clip), as many knobs as fit in MAX_CLIPS."""
    half = {designator: 0.5 for _, designator in knobs}
    settings = [ClipSetting("all-half", "Every knob at half way" if knobs else "As built",
                            tuple(sorted(half.items())))]
    left_out = []
    used = set()
    for name, designator in knobs:
        if len(settings) + len(TURNS) > MAX_CLIPS:
            left_out.append(name)
            continue
        stem = _stem(name, designator, used)
        for turn in TURNS:
            positions = tuple(sorted({**half, designator: turn}.items()))
            settings.append(ClipSetting(f"{stem}-{round(turn * 100)}",
                                        f"{name} at {round(turn * 100)} %", positions))
    return ClipPlan(tuple(settings), tuple(left_out))


def _stem(name: str, designator: str, used: set[str]) -> str:
    """A file-name stem for a knob: its name as a slug, else its designator."""
    stem = slug_for(name) or designator.lower()
    if stem in used or stem == "all":
        stem = f"{stem}-{designator.lower()}"
    used.add(stem)
    return stem
