"""A ranking as the builder reads it: plain text, or JSON for other programs."""

from __future__ import annotations

from kitleaf.display import meter_volts
from kitleaf.faults.model import GOOD
from kitleaf.faults.probes import black
from kitleaf.faults.rank import Ranking
from kitleaf.faults.solve import Readings

MIN_SHOWN = 3  # candidates always listed
SHOWN_FROM = 0.01  # beyond those, the ones at least this likely
ALIKE_SHOWN = 4


def ranking_text(title: str, readings: Readings, ranking: Ranking,
                 measured: dict[str, float], rest: str = "knobs at half way") -> str:
    """What the readings point to, most likely first, with the good build beside them;
    ``rest`` says where the controls are (:func:`kitleaf.display.at_rest`)."""
    b = black(ranking.black)
    lines = [f"{title}: {len(measured)} reading{'s' * (len(measured) != 1)} at "
             f"{readings.supply_v:g} V, {b.text}.", ""]
    lines += _table(readings, ranking, measured)
    lines.append("")
    if readings.unsolved:
        lines += [unsolved_text(readings), ""]
    if ranking.fits_good:
        lines.append("These readings fit a good build. If the kit still does not work, check "
                     "what no DC reading shows (the jacks, the footswitch wiring, the signal "
                     "path) and these faults, which read much like a good build:")
    else:
        lines.append("These readings do not fit a good build. Most likely:")
    lines.append("")
    faults = [c for c in ranking.candidates if not ranking.fits_good or c.fault.key != GOOD.key]
    shown = [c for i, c in enumerate(faults) if i < MIN_SHOWN or c.probability >= SHOWN_FROM]
    for n, c in enumerate(shown, 1):
        share = f"{c.probability:.0%}" if c.probability >= 0.005 else "<1%"
        lines.append(f"{n:>3}. {share:>4}  {c.fault.text}")
        lines.append(f"           expected: {', '.join(meter_volts(v) for v in c.predicted)}")
        if c.alike:
            more = f" and {len(c.alike) - ALIKE_SHOWN} more" if len(c.alike) > ALIKE_SHOWN else ""
            alike = ", ".join("a good build" if k == GOOD.key else k
                              for k in c.alike[:ALIKE_SHOWN])
            lines.append(f"           reads the same as: {alike}{more}")
    lines += ["", f"Readings assume a 10 Mohm meter on its 20 V range, {rest}. "
              "Disconnect the supply before you resolder anything."]
    return "\n".join(lines)


def _table(readings: Readings, ranking: Ranking, measured: dict[str, float]) -> list[str]:
    names = [p.name for p in readings.probes]
    b = ["supply", "ground"].index(ranking.black)
    width = max(len(n) for n in measured)
    out = [f"  {'test point':<{width}}  {'reads':>8}  good build"]
    for name, volts in measured.items():
        i = names.index(name)
        lo, hi = readings.low[0, i, b], readings.high[0, i, b]
        out.append(f"  {name:<{width}}  {meter_volts(volts):>8}  "
                   f"{meter_volts(lo)} to {meter_volts(hi)}")
    return out


def ranking_json(guide: str, readings: Readings, ranking: Ranking,
                 measured: dict[str, float]) -> dict:
    """The ranking as plain data (volts, probabilities from 0 to 1)."""
    return {
        "guide": guide,
        "supply_v": readings.supply_v,
        "black_probe": ranking.black,
        "readings": measured,
        "fits_good_build": ranking.fits_good,
        "not_computed": [f.key for f in readings.unsolved],
        "candidates": [
            {"fault": c.fault.key, "kind": c.fault.kind, "part": c.fault.part,
             "text": c.fault.text, "probability": round(c.probability, 4),
             "reads": {n: round(v, 4) for n, v in zip(ranking.measured, c.predicted,
                                                      strict=True)},
             "reads_the_same_as": list(c.alike)}
            for c in ranking.candidates
        ],
    }


def points_text(readings: Readings, black_key: str) -> str:
    """The kit's test points, as the command takes them, with a good build's readings."""
    b = ["supply", "ground"].index(black_key)
    width = max(len(p.name) for p in readings.probes)
    return "\n".join(f"{p.name:<{width}}  {meter_volts(readings.centre[0, i, b]):>8}  {p.label}"
                     for i, p in enumerate(readings.probes))


def unsolved_text(readings: Readings) -> str:
    """The faults left out of every ranking because no DC operating point was found."""
    return ("Not ranked: kitleaf found no DC operating point for "
            + "; ".join(f.text for f in readings.unsolved) + ".")
