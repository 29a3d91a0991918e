"""Ranks the faults of a kit by how well each explains a builder's readings.

Each fault predicts, at each test point, what the meter shows with nominal parts (its
10 Mohm loading included) and the range its tolerance samples span around that. The
readings are scored by a mixture of two normal curves about the prediction, taken over all
points together: a sharp one as wide as the meter's own uncertainty (a board of parts near
nominal) and a broad one whose width, on each reading's side, is half that side of the range
combined with the meter's uncertainty (parts anywhere in their spread). A fault whose
prediction is sharp and right scores above one whose range is wide enough to hold anything. Every
fault is equally likely before the readings (no base rates are known), so the likelihoods,
normalised, are the ranking's probabilities.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np

from kitleaf.faults.model import Fault
from kitleaf.faults.probes import BLACK, meter_error
from kitleaf.faults.solve import Readings

WIDEN = 0.15  # a good build's sampled range is widened by this share of its width each
# side when judging a fit: eight samples span less than the whole spread
BROAD = 0.5  # the share of boards whose parts sit anywhere in their spread; the rest sit
# near nominal, where a reading fits a fault's centre within the meter's uncertainty
ALIKE = 1.0  # two faults read alike when their predictions differ by under this many
# uncertainties at every measured point


@dataclass(frozen=True)
class Candidate:
    """A fault, its probability given the readings, and what it predicts where measured."""

    fault: Fault
    probability: float
    predicted: tuple[float, ...]
    alike: tuple[str, ...]  # keys of other faults that read the same at these points


@dataclass(frozen=True)
class Ranking:
    """Candidates best first; ``fits_good`` when every reading is in a good build's range."""

    black: str
    measured: tuple[str, ...]
    candidates: tuple[Candidate, ...]
    fits_good: bool


def log_likelihoods(readings: Readings, measured: Mapping[str, float], black: str
                    ) -> np.ndarray:
    """Per fault, the log-likelihood of the readings ``measured`` (probe name -> volts)."""
    b = [x.key for x in BLACK].index(black)
    names = [p.name for p in readings.probes]
    cols = [names.index(n) for n in measured]
    m = np.array(list(measured.values()))
    centre = readings.centre[:, cols, b]
    # each side of the centre its own spread: the sampled range is about two of them
    side = np.where(m >= centre, readings.high[:, cols, b] - centre,
                    centre - readings.low[:, cols, b]) / 2.0
    broad = _normal(m, centre, np.sqrt(side ** 2 + meter_error(m) ** 2))
    sharp = _normal(m, centre, np.broadcast_to(meter_error(m), centre.shape))
    return np.logaddexp(np.log(1.0 - BROAD) + sharp, np.log(BROAD) + broad)


def _normal(m: np.ndarray, centre: np.ndarray, sigma: np.ndarray) -> np.ndarray:
    """The joint log-density of the readings over the points (axis 1)."""
    per_point = -0.5 * ((m - centre) / sigma) ** 2 - np.log(sigma)
    return per_point.sum(axis=1)


def rank(readings: Readings, measured: Mapping[str, float], black: str = "supply",
         top: int = 10) -> Ranking:
    """The faults best explaining ``measured``, at most ``top`` of them."""
    ll = log_likelihoods(readings, measured, black)
    p = np.exp(ll - ll.max())
    p /= p.sum()
    order = np.argsort(-ll, kind="stable")
    b = [x.key for x in BLACK].index(black)
    names = [x.name for x in readings.probes]
    cols = [names.index(n) for n in measured]
    centre = readings.centre[:, cols, b]
    sigma = meter_error(np.array(list(measured.values())))
    candidates = []
    for i in order[:top]:
        alike = np.all(np.abs(centre - centre[i]) < ALIKE * sigma, axis=1)
        alike[i] = False
        candidates.append(Candidate(readings.faults[i], float(p[i]),
                                    tuple(float(v) for v in centre[i]),
                                    tuple(readings.faults[j].key for j in np.flatnonzero(alike))))
    fits_good = bool(_inside(readings, cols, b, np.array(list(measured.values()))))
    return Ranking(black, tuple(measured), tuple(candidates), fits_good)


def _inside(readings: Readings, cols: list[int], b: int, m: np.ndarray) -> bool:
    """Every reading within the good build's widened range (fault 0 is the good build)."""
    lo, hi = readings.low[0, cols, b], readings.high[0, cols, b]
    pad = WIDEN * (hi - lo) + meter_error(m)
    return bool(np.all((m >= lo - pad) & (m <= hi + pad)))
