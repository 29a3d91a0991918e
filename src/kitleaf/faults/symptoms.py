"""The symptom table of a guide page: for each test point, the readings that point to faults
(near 0 V, low, high, near the supply, below 0 V) and the faults ranked under each; and the
same readings as plain data for the page's ranking form."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from kitleaf.faults.probes import (
    BLACK,
    METER_ACCURACY,
    METER_RESOLUTION,
    MODEL_MARGIN,
    meter_error,
)
from kitleaf.faults.rank import BROAD, WIDEN, log_likelihoods
from kitleaf.faults.solve import Readings

PAGE_BLACK = "ground"  # the page's voltage table has the black probe on board ground
NEAR_ZERO = 0.2  # volts: a reading this close to 0 V is "near 0 V"
NEAR_SUPPLY = 0.5  # volts under the supply: "near the supply"
SHOWN = 6  # faults listed under one reading; the rest are counted
SYMPTOMS = ("near 0 V", "low", "high", "near the supply", "below 0 V")


@dataclass(frozen=True)
class Symptom:
    """A kind of wrong reading at one point: the volts its faults read, and the faults."""

    kind: str
    low: float
    high: float
    faults: tuple[str, ...]  # the faults' sentences, likeliest first
    more: int
    # per fault: it gives this same kind of reading at every test point (a missing supply or
    # ground wire, a reversed adapter), so a printed list names it once, above the table
    everywhere: tuple[bool, ...] = ()
    own: int = 0  # this point's own faults (not everywhere), those past the shown ones counted

    def printed(self, limit: int) -> tuple[bool, ...]:
        """Which faults a printed list shows: the likeliest ``limit`` of this point's own."""
        shown, out = 0, []
        for wide in self.everywhere or (False,) * len(self.faults):
            out.append(not wide and shown < limit)
            shown += out[-1]
        return tuple(out)

    def unprinted(self, limit: int) -> int:
        """How many of this point's own faults (the page's 'and N more' included) the printed
        list leaves to the web page."""
        return self.own - sum(self.printed(limit))


@dataclass(frozen=True)
class SymptomRow:
    name: str
    label: str
    good_low: float
    good_high: float
    symptoms: tuple[Symptom, ...]


def symptom_rows(readings: Readings, black: str = PAGE_BLACK) -> tuple[SymptomRow, ...]:
    """One row per test point with its symptoms in SYMPTOMS order (empty ones left out)."""
    b = [x.key for x in BLACK].index(black)
    goods = [_good_range(readings, p, b) for p in range(len(readings.probes))]
    kind_of = [[_kind(float(readings.centre[f, p, b]), lo, hi, readings.supply_v)
                for p, (lo, hi) in enumerate(goods)] for f in range(len(readings.faults))]
    everywhere = {f for f in range(1, len(readings.faults))
                  if kind_of[f][0] is not None and len(set(kind_of[f])) == 1}
    rows = []
    for p, probe in enumerate(readings.probes):
        kinds: dict[str, list[int]] = {}
        for f in range(1, len(readings.faults)):
            if kind_of[f][p] is not None:
                kinds.setdefault(kind_of[f][p], []).append(f)
        symptoms = tuple(_symptom(readings, probe.name, p, b, k, kinds[k], everywhere)
                         for k in SYMPTOMS if k in kinds)
        rows.append(SymptomRow(probe.name, probe.label, *goods[p], symptoms))
    return tuple(rows)


def everywhere_faults(rows: tuple[SymptomRow, ...]) -> dict[str, tuple[str, ...]]:
    """The faults that read the same at every test point, by that reading's kind."""
    found: dict[str, dict[str, None]] = {}
    for row in rows:
        for s in row.symptoms:
            for text, wide in zip(s.faults, s.everywhere, strict=True):
                if wide:
                    found.setdefault(s.kind, {})[text] = None
    return {kind: tuple(texts) for kind, texts in found.items()}


def _good_range(readings: Readings, p: int, b: int) -> tuple[float, float]:
    lo, hi = float(readings.low[0, p, b]), float(readings.high[0, p, b])
    pad = WIDEN * (hi - lo)
    return lo - pad - meter_error(lo), hi + pad + meter_error(hi)


def _kind(volts: float, lo: float, hi: float, supply: float) -> str | None:
    if lo <= volts <= hi:
        return None
    if volts < -NEAR_ZERO:
        return "below 0 V"
    if abs(volts) < NEAR_ZERO:
        return "near 0 V"
    if volts > supply - NEAR_SUPPLY:
        return "near the supply"
    return "low" if volts < lo else "high"


def _symptom(readings: Readings, name: str, p: int, b: int, kind: str,
             faults: list[int], everywhere: set[int]) -> Symptom:
    """The faults of one symptom, ranked by how well each explains the typical reading."""
    volts = readings.centre[faults, p, b]
    typical = float(np.median(volts))
    ll = log_likelihoods(readings, {name: typical}, BLACK[b].key)[faults]
    order = [faults[i] for i in np.argsort(-ll, kind="stable")]
    texts = tuple(readings.faults[f].text for f in order)
    return Symptom(kind, float(volts.min()), float(volts.max()), texts[:SHOWN],
                   max(0, len(texts) - SHOWN), tuple(f in everywhere for f in order[:SHOWN]),
                   sum(f not in everywhere for f in order))


def page_data(readings: Readings) -> dict:
    """What the page's ranking form needs, rounded to the millivolt: every fault's readings
    at every point from both black-probe places, and the ranking's constants."""
    def mv(a: np.ndarray) -> list:
        return np.round(a, 3).tolist()

    return {
        "supply": readings.supply_v,
        "black": [b.key for b in BLACK],
        "points": [{"name": p.name, "label": p.label} for p in readings.probes],
        "faults": [{"key": f.key, "text": f.text} for f in readings.faults],
        "centre": mv(readings.centre), "low": mv(readings.low), "high": mv(readings.high),
        "meter": {"resolution": METER_RESOLUTION, "accuracy": METER_ACCURACY,
                  "margin": MODEL_MARGIN},
        "broad": BROAD, "widen": WIDEN,
    }
