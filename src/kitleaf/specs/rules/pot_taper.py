"""Rule pot-taper: a knob whose pot taper crowds its travel into one quarter turn.

A knob should change its stage's gain about evenly over its rotation: most of the change in
one quarter turn (a log pot in a gain role that jumps near the end, a reverse-log volume that
is nearly full at a quarter) makes it touchy there and dead elsewhere (common practice, no
source). The gain at 1 kHz of the knob's stage, the other knobs at half way and nominal parts,
is read at 0, 25, 50, 75 and 100 %; a volume knob's first quarter, which always falls away to
silence, is left out. The finding suggests the taper that spreads the change most evenly.
"""

from __future__ import annotations

from kitleaf.circuit.chain import KnobRef
from kitleaf.specs import measures as m
from kitleaf.specs.rules import register
from kitleaf.specs.rules._context import RuleContext
from kitleaf.specs.sampled import solve_nominal
from kitleaf.specs.solve import KNOB_STEPS, View, nominal_positions

RULE = "pot-taper"
CROWDED = 0.6  # the share of the change one quarter turn may carry (common practice, no source)
MIN_CHANGE_DB = 3.0  # a knob that moves the gain less than this is not judged
# Tapers as guides write them: the letter code and the words.
TAPER_NAMES = {"log": "A (log)", "lin": "B (linear)", "rlog": "C (reverse log)"}
QUARTERS = ("first", "second", "third", "last")


def quarters(gains: list[float], role: str) -> list[tuple[int, float]]:
    """(quarter, dB it moves the gain) over the knob's travel; a volume's first left out."""
    moves = [(i, abs(b - a)) for i, (a, b) in enumerate(zip(gains[:-1], gains[1:], strict=True))]
    return moves[1:] if role == "volume" else moves


def crowding(gains: list[float], role: str) -> tuple[float, int, float] | None:
    """(share of the change in the steepest quarter, that quarter, the change in dB); None
    when the knob moves the gain less than MIN_CHANGE_DB."""
    moves = quarters(gains, role)
    total = sum(dB for _, dB in moves)
    if total < MIN_CHANGE_DB:
        return None
    quarter, steepest = max(moves, key=lambda q: q[1])
    return steepest / total, quarter, total


def stage_gains(ctx: RuleContext, knob: KnobRef, taper: str | None = None) -> list[float]:
    """The knob's stage gain (dB, 1 kHz, nominal) at each of KNOB_STEPS, with the pot's taper
    replaced by ``taper`` if given."""
    measure = m.gain_db(*ctx.kit.stage_nodes(knob.stage_id))
    gains = []
    for position in KNOB_STEPS:
        circuit = ctx.kit.netlist({**nominal_positions(ctx.kit), knob.designator: position})
        if taper is not None:
            circuit = circuit.replaced(knob.designator, taper=taper)
        gains.append(float(measure(View(solve_nominal(circuit)))[0]))
    return gains


@register(RULE, "a knob whose pot taper puts most of its change in one quarter turn")
def check(ctx: RuleContext):
    pots = {p.designator: p for p in ctx.of_type("pot")}
    for knob in ctx.kit.knobs:
        pot = pots[knob.designator]
        sweep = {dict(p.positions)[knob.name]: p.gain_db.nominal
                 for p in ctx.specs.stage(knob.stage_id).knob_sweep
                 if knob.name in dict(p.positions) and p.unstable is None}
        if any(step not in sweep for step in KNOB_STEPS):
            continue  # a step where the stage oscillates has no gain to judge (rule stable)
        found = crowding([sweep[p] for p in KNOB_STEPS], pot.role)
        if found is None or found[0] <= CROWDED:
            continue
        share, quarter, total = found
        yield ctx.finding(RULE, pot, (
            f"{pot.designator} ({knob.name}, {TAPER_NAMES[pot.attrs['taper']]} taper in the "
            f"{pot.role} role) makes {round(share * 100)} % of its {total:.1f} dB change in the "
            f"{QUARTERS[quarter]} quarter turn; {_suggestion(ctx, knob, pot)}"))


def _suggestion(ctx: RuleContext, knob: KnobRef, pot) -> str:
    """The taper that spreads the change most evenly, if it does well enough."""
    tried = []
    for taper in TAPER_NAMES:
        if taper != pot.attrs["taper"]:
            found = crowding(stage_gains(ctx, knob, taper), pot.role)
            if found is not None:
                tried.append((found[0], taper))
    if not tried or min(tried)[0] > CROWDED:
        return "no other taper spreads it evenly: check the parts around the pot"
    share, taper = min(tried)
    return (f"a {TAPER_NAMES[taper]} taper spreads it evenly (at most {round(share * 100)} % "
            "in any quarter turn)")
