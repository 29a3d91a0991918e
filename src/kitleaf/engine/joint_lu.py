"""Sparse elimination of one small system over a whole batch of values at once.

The system joining a large circuit's blocks (see :mod:`~kitleaf.engine.blocks`) has one
unknown per joint and a handful of entries per row: a chain of stages gives each joint its
two neighbours and the rails. Its structure is fixed, its values change with every sample
and frequency, so the elimination order and its fill-in are planned once (minimum degree on
the symmetric structure, ties by index, so a chain is eliminated from its ends and the rails
come last) and every step is one numpy operation over all the values. No pivoting: a
joint's diagonal holds every admittance to it, and a sample whose pivot vanishes comes out
non-finite, for the caller to solve another way.
"""

from __future__ import annotations


class JointLu:
    """The elimination plan of a ``size`` x ``size`` structure with entries at ``pairs``."""

    def __init__(self, size: int, pairs) -> None:
        adjacent: list[set[int]] = [set() for _ in range(size)]
        for i, j in pairs:
            if i != j:
                adjacent[i].add(j)
                adjacent[j].add(i)
        remaining, self.steps = set(range(size)), []
        while remaining:
            p = min(remaining, key=lambda r: (len(adjacent[r]), r))
            neighbours = sorted(adjacent[p])
            for a in neighbours:
                adjacent[a].discard(p)
                adjacent[a].update(b for b in neighbours if b != a)
            remaining.remove(p)
            self.steps.append((p, neighbours))

    def solve(self, entries: dict, rhs: list) -> list:
        """x with A x = rhs, A given as ``entries`` {(row, col): values}; every value an
        array of one shape (the batch), rhs one such array per row. ``entries`` is used up."""
        b, kept = list(rhs), []
        for p, neighbours in self.steps:
            pivot = entries.pop((p, p))
            row = [(j, entries.pop((p, j))) for j in neighbours if (p, j) in entries]
            for i in neighbours:
                below = entries.pop((i, p), None)
                if below is None:
                    continue
                factor = below / pivot
                for j, u in row:
                    entries[(i, j)] = entries.get((i, j), 0.0) - factor * u
                b[i] = b[i] - factor * b[p]
            kept.append((p, pivot, row))
        x = [None] * len(b)
        for p, pivot, row in reversed(kept):
            total = b[p]
            for j, u in row:
                total = total - u * x[j]
            x[p] = total / pivot
        return x
