"""Test points on a schematic: a small numbered circle at each node the builder measures, and a
legend under the drawing giving each number the voltage table's wording.

A kind's drawing leaves the points on the sheet as it draws (device pins, rails, ports, net
labels: :attr:`SchematicSheet.spots`); each marker then takes the first nearby place that is
clear of every part, wire and label, joined to its node by a short leader.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

from kitleaf.render.schematic import FONT_SIZE, Point, SchematicSheet, text_width

RADIUS = 0.17  # of the numbered circle, in grid units
DISTANCES = (0.45, 0.75, 1.05, 1.35, 1.65)  # from the node to the circle's centre, nearest first
# Directions tried in turn: the four diagonals first, they leave the wires' own lines alone.
DIRECTIONS = ((1, 1), (-1, 1), (1, -1), (-1, -1), (1, 0), (-1, 0), (0, 1), (0, -1))
LEGEND_SIZE = FONT_SIZE * 0.85
LINE_STEP = 0.4  # between legend lines
SEPARATOR = " · "  # between legend entries (SVG collapses runs of spaces)


def spot_key(test_point) -> tuple[str, str]:
    """Where a test point is found among the sheet's spots: its device pin, else its node."""
    return (test_point.device, test_point.pin) if test_point.device else ("", test_point.node)


def mark_test_points(sheet: SchematicSheet, test_points: Sequence) -> None:
    """A numbered marker at each drawn test point, then the legend of all of them."""
    if not test_points:
        return
    for number, tp in enumerate(test_points, 1):
        at = sheet.spots.get(spot_key(tp))
        if at is not None:
            _marker(sheet, tp.node, at, str(number), _free_place(sheet, at))
    _legend(sheet, [f"{n} {_legend_label(tp, sheet)}" for n, tp in enumerate(test_points, 1)])


def _legend_label(tp, sheet: SchematicSheet) -> str:
    """The table's wording; a point not drawn as such (a custom stage's node) names its node."""
    return tp.label if spot_key(tp) in sheet.spots else f"{tp.label} (node {tp.node})"


def _free_place(sheet: SchematicSheet, at: Point) -> Point:
    taken = sheet.occupied()
    # diagonals at every distance before the straight directions, which run along wires
    candidates = [(d, v) for group in (DIRECTIONS[:4], DIRECTIONS[4:]) for d in DISTANCES
                  for v in group]
    for distance, (dx, dy) in candidates:
        scale = distance / math.hypot(dx, dy)
        centre = (at[0] + dx * scale, at[1] + dy * scale)
        along = [(at[0] + (centre[0] - at[0]) * t, at[1] + (centre[1] - at[1]) * t)
                 for t in (0.3, 0.5, 0.7)]  # the leader, sampled
        clear = [_box(centre)] + [_box(p, air=0.04 - RADIUS) for p in along]
        if not any(_meets(mine, box) for mine in clear for box in taken):
            return centre
    return (at[0] + DISTANCES[0], at[1] + DISTANCES[0])


def _box(centre: Point, air: float = 0.06) -> tuple[float, float, float, float]:
    r = RADIUS + air
    return (centre[0] - r, centre[1] - r, centre[0] + r, centre[1] + r)


def _meets(a, b) -> bool:
    return a[0] < b[2] and b[0] < a[2] and a[1] < b[3] and b[1] < a[3]


def _marker(sheet: SchematicSheet, node: str, at: Point, number: str, centre: Point) -> None:
    dx, dy = centre[0] - at[0], centre[1] - at[1]
    reach = 1 - RADIUS / math.hypot(dx, dy)
    sheet.leader(node, at, (round(at[0] + dx * reach, 4), round(at[1] + dy * reach, 4)), centre)
    sheet.ring(centre, RADIUS)
    sheet.text(number, centre, size=FONT_SIZE * 0.7, side="centre", exact=True)


def _legend(sheet: SchematicSheet, entries: Sequence[str]) -> None:
    """Entries packed into lines no wider than the drawing, under everything drawn."""
    x0, y0, x1, _ = sheet.extent()
    lines, width = [["Test points"]], max(x1 - x0, 6.0)
    for entry in entries:
        trial = SEPARATOR.join([*lines[-1], entry])
        if text_width(trial, LEGEND_SIZE) > width and len(lines[-1]) > 1:
            lines.append([entry])
        else:
            lines[-1].append(entry)
    for i, line in enumerate(lines):
        sheet.text(SEPARATOR.join(line), (x0, y0 - 0.35 - LINE_STEP * i), size=LEGEND_SIZE,
                   side="below right")
