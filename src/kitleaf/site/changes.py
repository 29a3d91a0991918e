"""Changes since the last publish: which parts changed value and which specs moved, for errata.

Two manifests in, a change record out. A spec counts as moved when its displayed text moves
(a shift below the shown precision is no erratum). The record is plain JSON data, stored in the
new manifest, so a build that changes no part and no spec carries the last record forward and
the changes page stays byte-identical.
"""

from __future__ import annotations

import json
from collections.abc import Iterator
from dataclasses import asdict, dataclass
from typing import Any

from kitleaf.circuit.parts import PART_QUANTITY
from kitleaf.display import settings
from kitleaf.values import format_db, format_value

# Specs JSON keys the report follows: (key, label, display quantity, scale to SI).
SPEC_KEYS = (
    ("gain_db_1khz", "gain at 1 kHz", "db", 1.0),
    ("low_corner_hz", "low corner", "frequency", 1.0),
    ("high_corner_hz", "high corner", "frequency", 1.0),
    ("input_impedance_ohm_1khz", "input impedance", "resistance", 1.0),
    ("output_impedance_ohm_1khz", "output impedance", "resistance", 1.0),
    ("supply_current_ma", "current draw", "current", 1e-3),
)


@dataclass(frozen=True)
class Move:
    """One thing that changed: what, before and after as displayed, and by how much."""

    name: str
    before: str
    after: str
    delta: str = ""


@dataclass(frozen=True)
class GuideChange:
    """What changed in one guide between two publishes."""

    slug: str
    code: str
    title: str
    status: str  # "added", "removed" or "changed"
    parts: tuple[Move, ...] = ()
    specs: tuple[Move, ...] = ()


def compare(before: dict | None, after: dict) -> dict[str, Any]:
    """The change record of publishing ``after`` over ``before`` (manifests; None: first build)."""
    if before is None:
        return {"baseline": False, "guides": []}
    old, new = before.get("guides", {}), after.get("guides", {})
    if old == new:
        return before.get("changes", {"baseline": True, "guides": []})
    guides = [guide_change(slug, old.get(slug), new.get(slug)) for slug in sorted({*old, *new})]
    # Through JSON once, so a fresh record equals one read back from a manifest.
    record = {"baseline": True, "guides": [asdict(g) for g in guides if g is not None]}
    return json.loads(json.dumps(record))


def guide_change(slug: str, old: dict | None, new: dict | None) -> GuideChange | None:
    kit = (new or old)["specs"]["kit"]
    if old is None or new is None:
        return GuideChange(slug, kit["code"], kit["title"], "added" if old is None else "removed")
    parts = tuple(part_moves(old["parts"], new["parts"]))
    specs = tuple(spec_moves(old["specs"], new["specs"]))
    if not parts and not specs:
        return None
    return GuideChange(slug, kit["code"], kit["title"], "changed", parts, specs)


def part_moves(old: list[dict], new: list[dict]) -> Iterator[Move]:
    """Parts by designator: changed value, model or tolerance, added or removed."""
    before = {p["designator"]: p for p in old}
    after = {p["designator"]: p for p in new}
    for designator in sorted({*before, *after}):
        a, b = before.get(designator), after.get(designator)
        if a is None:
            yield Move(designator, "not fitted", part_text(b))
        elif b is None:
            yield Move(designator, part_text(a), "removed")
        elif (move := part_move(a, b)) is not None:
            yield move


def part_move(a: dict, b: dict) -> Move | None:
    before, after = part_text(a), part_text(b)
    if a["tolerance"] != b["tolerance"]:
        before, after = f"{before} {_tolerance(a)}", f"{after} {_tolerance(b)}"
    if before == after and a["text"] != b["text"]:
        before, after = a["text"], b["text"]  # another word of the line changed: show both lines
    return None if before == after else Move(a["designator"], before, after)


def part_text(part: dict) -> str:
    """A part as the change report shows it: its value, or its model for a semiconductor."""
    quantity = PART_QUANTITY.get(part["type"])
    if quantity and part["value"] is not None:
        return format_value(part["value"], quantity)
    return part["model"] or part["text"]


def _tolerance(part: dict) -> str:
    t = part["tolerance"]
    return "(usual tolerance)" if t is None else f"{t * 100:g} %"


def spec_moves(old: dict, new: dict) -> Iterator[Move]:
    """Kit specs, knob points, then each stage's specs and test-point voltages."""
    yield from _moves(_kit_values(old), _kit_values(new))
    old_stages = {s["id"]: s for s in old["stages"]}
    for stage in new["stages"]:
        if stage["id"] in old_stages:
            yield from _moves(_stage_values(old_stages[stage["id"]]), _stage_values(stage))


def _moves(old: dict, new: dict) -> Iterator[Move]:
    for name, (quantity, after) in new.items():
        if name not in old or old[name][1] is None or after is None:
            continue
        before = old[name][1]
        a, b = show(before, quantity), show(after, quantity)
        if a != b:
            yield Move(name, a, b, delta(before, after, quantity))


def _kit_values(specs: dict) -> dict[str, tuple[str, float | None]]:
    values = _values(specs, "")
    values.update(_knob_values(specs, ""))
    return values


def _stage_values(stage: dict) -> dict[str, tuple[str, float | None]]:
    prefix = f"{stage['title']}: "
    values = _values(stage, prefix)
    values.update(_knob_values(stage, prefix))
    for v in stage["dc_voltages"]:
        values[f"{prefix}{v['label']}"] = ("voltage", _nominal(v["volts"], 1.0))
    return values


def _values(specs: dict, prefix: str) -> dict[str, tuple[str, float | None]]:
    return {f"{prefix}{label}": (quantity, _nominal(specs.get(key), scale))
            for key, label, quantity, scale in SPEC_KEYS}


def _knob_values(specs: dict, prefix: str) -> dict[str, tuple[str, float | None]]:
    values = {}
    for point in specs.get("gain_db_1khz_by_knob", []):
        knobs = settings(sorted(point["knobs"].items()))
        values[f"{prefix}gain with {knobs}"] = ("db", _nominal(point["gain_db"], 1.0))
    return values


def _nominal(value: dict | None, scale: float) -> float | None:
    return None if value is None or value["nominal"] is None else value["nominal"] * scale


def show(x: float, quantity: str) -> str:
    return format_db(x) if quantity == "db" else format_value(x, quantity)


def delta(before: float, after: float, quantity: str) -> str:
    """By how much: dB as a difference, everything else as a relative change."""
    if quantity == "db":
        return f"{after - before:+.1f} dB"
    if before == 0:
        return ""
    return f"{(after - before) / abs(before) * 100:+.1f} %"


def summary_lines(changes: dict, limit: int = 4) -> list[str]:
    """The change record for the terminal: one line per guide, the first few moves."""
    lines = []
    for g in changes.get("guides", []):
        head = f"{g['code']} {g['title']}"
        if g["status"] != "changed":
            lines.append(f"{head}: {g['status']}")
            continue
        moves = [f"{m['name']} {m['before']} to {m['after']}" for m in g["parts"] + g["specs"]]
        more = f" and {len(moves) - limit} more" if len(moves) > limit else ""
        lines.append(f"{head}: {'; '.join(moves[:limit])}{more}")
    return lines
