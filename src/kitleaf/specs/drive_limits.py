"""The pickup levels where THD first reaches 1 % and 10 %, bracketed and solved for.

The sweep's grid only says between which two of its levels THD first reaches a threshold
going up; this module narrows each such bracket by solving the kit again at levels inside
it, by Brent's method on log scales (inverse quadratic and secant steps, bisection where
they stall: R. P. Brent, Algorithms for Minimization without Derivatives, 1973, chapter 4),
until the bracket is under 1 % wide or a level's THD lies within 0.5 % of the threshold.
THD may rise and fall with level, and a fuzz's exceeds 100 %: the bracket is always the
grid's first one going up, and nothing is capped. Every open bracket of every knob setting
and stage takes one step per round, all solved in one batch.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Generator, Sequence

import numpy as np

LEVEL_RATIO = 1.01  # a bracket this narrow (high / low) is done
THD_CLOSE = 0.005  # a level whose THD is this close to the threshold (relative) is the answer
MAX_ROUNDS = 10
THD_FLOOR = 1e-12  # THD below this reads as this on log scales (a perfectly clean level)

# A bracket's search: it yields each level to solve and is sent that level's THD back; it
# returns the crossing.
Search = Generator[float, float, float]


def first_bracket(levels: Sequence[float], thd: Sequence[float],
                  threshold: float) -> tuple[float, ...] | float | None:
    """The grid's first interval going up where THD reaches ``threshold``, as
    :func:`search` takes it (threshold, low, high, THD at low, THD at high); the lowest
    level when THD is already there, None when it never gets there within the grid."""
    above = np.flatnonzero(np.asarray(thd) >= threshold)
    if above.size == 0:
        return None
    i = int(above[0])
    if i == 0:
        return float(levels[0])
    return (threshold, float(levels[i - 1]), float(levels[i]), float(thd[i - 1]),
            float(thd[i]))


def search(threshold: float, low: float, high: float, thd_low: float,
           thd_high: float) -> Search:
    """Brent's method on x = ln(level), f = ln(THD / threshold), from f(low) < 0 <= f(high).
    A THD sent back as NaN (the level was not solved) ends it at the best level so far."""
    a, b = math.log(low), math.log(high)
    fa, fb = _gap(thd_low, threshold), _gap(thd_high, threshold)
    c, fc, d, e = a, fa, b - a, b - a
    tol = math.log(LEVEL_RATIO) / 2
    while True:
        if (fb > 0) == (fc > 0):  # keep the crossing between b and c
            c, fc, d, e = a, fa, b - a, b - a
        if abs(fc) < abs(fb):
            a, b, c, fa, fb, fc = b, c, b, fb, fc, fb
        middle = (c - b) / 2
        if abs(middle) <= tol or abs(fb) <= THD_CLOSE:
            return math.exp(b)
        d, e = _step(a, b, c, fa, fb, fc, d, e, middle, tol)
        a, fa = b, fb
        b += d if abs(d) > tol else math.copysign(tol, middle)
        thd = yield math.exp(b)
        if not math.isfinite(thd):
            return math.exp(a)  # the best level before this one
        fb = _gap(thd, threshold)


def _step(a, b, c, fa, fb, fc, d, e, middle, tol) -> tuple[float, float]:
    """Brent's next step from b and the step before (d, e): interpolated where that
    shrinks the bracket fast enough, else half the bracket."""
    if abs(e) < tol or abs(fa) <= abs(fb):
        return middle, middle
    s = fb / fa
    if a == c:  # secant
        p, q = 2 * middle * s, 1 - s
    else:  # inverse quadratic interpolation
        q, r = fa / fc, fb / fc
        p = s * (2 * middle * q * (q - r) - (b - a) * (r - 1))
        q = (q - 1) * (r - 1) * (s - 1)
    q = -q if p > 0 else q
    p = abs(p)
    if 2 * p < min(3 * middle * q - abs(tol * q), abs(e * q)):
        return p / q, d
    return middle, middle


def _gap(thd: float, threshold: float) -> float:
    return math.log(max(thd, THD_FLOOR) / threshold)


# What a round solves: (key, level) per open search -> THD per request (NaN: not solved).
Solver = Callable[[list[tuple[object, float]]], Sequence[float]]


def refine(brackets: dict[object, tuple[float, ...]], solve: Solver) -> dict[object, float]:
    """Each bracket's crossing (brackets as :func:`first_bracket` gives them), keyed as
    given, by rounds of :func:`search` steps solved together. After MAX_ROUNDS a search
    stops at the level it would solve next."""
    found: dict[object, float] = {}
    asked: dict[object, float] = {}
    searches = {}
    for key, bracket in brackets.items():
        searches[key] = search(*bracket)
        _advance(key, searches, asked, found, None)
    for _ in range(MAX_ROUNDS):
        if not asked:
            break
        requests = list(asked.items())
        asked.clear()
        for (key, _), thd in zip(requests, solve(requests), strict=True):
            _advance(key, searches, asked, found, float(thd))
    for key, level in asked.items():  # out of rounds: the level it would solve next
        found[key] = level
    return found


def _advance(key, searches: dict, asked: dict, found: dict, thd: float | None) -> None:
    """One step of ``key``'s search: the next level it asks for, or its crossing."""
    try:
        asked[key] = next(searches[key]) if thd is None else searches[key].send(thd)
    except StopIteration as done:
        found[key] = done.value
