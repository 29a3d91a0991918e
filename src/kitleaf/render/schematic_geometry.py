"""Plane geometry of a drawn sheet, in grid units: points on segments, crossings, overlaps,
boxes, and the junctions where three or more lines meet (where a dot belongs)."""

from __future__ import annotations

from kitleaf.render.schematic_record import Box, Point, SheetRecord

EPS = 1e-3  # grid units: points closer than this are one point
TEXT_AIR = 0.02  # a word's box, shrunk by this, may touch no line



def on_segment(p: Point, a: Point, b: Point) -> bool:
    """Is ``p`` on the segment from ``a`` to ``b`` (ends included)?"""
    if not _collinear(a, b, p):
        return False
    return (min(a[0], b[0]) - EPS <= p[0] <= max(a[0], b[0]) + EPS
            and min(a[1], b[1]) - EPS <= p[1] <= max(a[1], b[1]) + EPS)


def inside(p: Point, a: Point, b: Point) -> bool:
    """On the segment but at neither end."""
    return on_segment(p, a, b) and not near(p, a) and not near(p, b)


def near(p: Point, q: Point) -> bool:
    return abs(p[0] - q[0]) <= EPS and abs(p[1] - q[1]) <= EPS


def crossing(s: tuple[Point, Point], t: tuple[Point, Point]) -> Point | None:
    """Where two segments cross inside both (not at an end of either), if they do."""
    (x1, y1), (x2, y2) = s
    (x3, y3), (x4, y4) = t
    den = (x1 - x2) * (y3 - y4) - (y1 - y2) * (x3 - x4)
    if abs(den) < 1e-12:
        return None
    u = ((x1 - x3) * (y3 - y4) - (y1 - y3) * (x3 - x4)) / den
    v = ((x1 - x3) * (y1 - y2) - (y1 - y3) * (x1 - x2)) / den
    at = (x1 + u * (x2 - x1), y1 + u * (y2 - y1))
    if not (0 <= u <= 1 and 0 <= v <= 1):
        return None
    return None if any(near(at, e) for e in (*s, *t)) else at


def overlap(s: tuple[Point, Point], t: tuple[Point, Point]) -> bool:
    """Do two segments run along each other for a stretch (on one line, overlapping)?"""
    (a, b), (c, d) = s, t
    if not (_collinear(a, b, c) and _collinear(a, b, d)):
        return False
    axis = 0 if abs(b[0] - a[0]) >= abs(b[1] - a[1]) else 1
    lo1, hi1 = sorted((a[axis], b[axis]))
    lo2, hi2 = sorted((c[axis], d[axis]))
    return min(hi1, hi2) - max(lo1, lo2) > EPS


def _collinear(a: Point, b: Point, p: Point) -> bool:
    cross = (b[0] - a[0]) * (p[1] - a[1]) - (b[1] - a[1]) * (p[0] - a[0])
    return abs(cross) <= EPS * max(abs(b[0] - a[0]), abs(b[1] - a[1]), 1.0)


def box_meets(box: Box, a: Point, b: Point, air: float = TEXT_AIR) -> bool:
    """Does the segment from ``a`` to ``b`` pass through ``box`` shrunk by ``air``?"""
    x0, y0, x1, y1 = box[0] + air, box[1] + air, box[2] - air, box[3] - air
    lo, hi = 0.0, 1.0
    dx, dy = b[0] - a[0], b[1] - a[1]
    for p, q in ((-dx, a[0] - x0), (dx, x1 - a[0]), (-dy, a[1] - y0), (dy, y1 - a[1])):
        if p == 0 and q < 0:
            return False
        if p != 0:
            lo, hi = (max(lo, q / p), hi) if p < 0 else (lo, min(hi, q / p))
    return lo <= hi


def boxes_meet(a: Box, b: Box) -> bool:
    return a[0] < b[2] and b[0] < a[2] and a[1] < b[3] and b[1] < a[3]


def where(p: Point) -> str:
    return f"({p[0]:g}, {p[1]:g})"


def drawn_points(record: SheetRecord) -> list[Point]:
    """Every point that can join: wire ends, pins, dots, named connections, leader starts."""
    found = {p for w in record.wires for p in w} | set(record.pins.values()) | set(record.dots)
    found |= {at for at, _ in record.names} | {lead.at for lead in record.leaders}
    return sorted(found)


def arms(record: SheetRecord, at: Point) -> int:
    """How many lines leave ``at``: wire ends, wires through it (two each), pins, symbols."""
    count = sum(1 for w in record.wires for end in w if near(end, at))
    count += sum(2 for a, b in record.wires if inside(at, a, b))
    count += sum(1 for p in record.pins.values() if near(p, at))
    return count + sum(1 for p, _ in record.names if near(p, at))


def junctions(record: SheetRecord) -> list[Point]:
    """Where three or more lines meet and at least one ends there: the joins a dot marks."""
    found = []
    for p in drawn_points(record):
        if arms(record, p) >= 3 and not _only_crossing(record, p):
            found.append(p)
    return found


def _only_crossing(record: SheetRecord, at: Point) -> bool:
    """Lines only pass through ``at`` (a crossing), nothing ends there."""
    ends = [e for w in record.wires for e in w] + list(record.pins.values())
    ends += [p for p, _ in record.names]
    return not any(near(e, at) for e in ends)
