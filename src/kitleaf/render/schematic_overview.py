"""The kit at a glance: signal stages as blocks in chain order, the power section feeding them.

Blocks run left to right, :data:`PER_ROW` to a row (one to a row in the narrow drawing a
phone shows), the signal going up and over to the next row. Below each row a supply bus (the
rails the stages use: VCC, V2, VREF, VEE) drops a stub into every stage that draws on the power
section; the buses join on a trunk at the far left and come down into the power block under
the last row. Drawn on a
:class:`~kitleaf.render.schematic.SchematicSheet`.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass

from kitleaf.circuit.rails import POWER_RAILS
from kitleaf.render.schematic import FONT_SIZE, Point, SchematicSheet, text_width

PER_ROW = 4  # blocks per row, so a long chain still fits a printed page
NARROW_PER_ROW = 1  # a phone's column: the drawing at its own size, its text readable
MIN_WIDTH, HEIGHT, POWER_HEIGHT, GAP = 4.8, 2.2, 1.6, 1.4
PADDING = 0.6  # inside a block, around its longest line
BUS_DROP = 0.7  # from a row's bottom edge down to its bus
OVER = 0.6  # a row-to-row signal link runs this far above the lower row
ROW_STEP = HEIGHT + BUS_DROP + 0.8 + OVER  # bus and link lines between rows, with air
FEED = 1.0  # from the last bus down to the power block's top
TRUNK_X = -0.5  # the vertical joining the buses, left of the row-to-row links
LEFT = 1.0  # the first column's left edge, after the IN port


@dataclass(frozen=True)
class _Block:
    stage: object
    lines: tuple[str, ...]
    corner: Point
    width: float
    height: float

    @property
    def feed_point(self) -> Point:
        """Middle of the bottom edge, where a supply stub enters."""
        return (self.corner[0] + self.width / 2, self.corner[1])


def draw_overview(sheet: SchematicSheet, kit, headline: Mapping[str, str],
                  per_row: int = PER_ROW) -> None:
    chain = kit.signal_stages
    width = _width([_lines(s, headline) for s in chain])
    rows = max(1, -(-len(chain) // per_row))
    blocks = [_Block(s, _lines(s, headline), _corner(i, rows, width, per_row), width, HEIGHT)
              for i, s in enumerate(chain)]
    _draw_chain(sheet, blocks)
    power = next((s for s in kit.stages if kit.kind(s).provides_power), None)
    if power is not None:
        _draw_power(sheet, kit, power, headline, blocks, rows)
    _draw_off_path(sheet, kit, headline, blocks, power, stacked=per_row == 1)


def _draw_off_path(sheet: SchematicSheet, kit, headline, blocks: Sequence[_Block],
                   power, stacked: bool) -> None:
    """Stages off the signal path besides the power section (an op-amp's unused half), in a
    row beside it (``stacked``: one under another, below it): they draw current but pass no
    signal."""
    others = [s for s in kit.stages if not kit.kind(s).signal and s is not power]
    last_bus = blocks[-1].corner[1] - BUS_DROP if blocks else 0.0
    x, y = LEFT, last_bus - FEED - POWER_HEIGHT
    if power is not None and stacked:
        y -= POWER_HEIGHT + GAP / 2
    elif power is not None:
        x += _width([_lines(power, headline)]) + GAP
    for stage in others:
        lines = _lines(stage, headline)
        width = _width([lines])
        sheet.block((x, y), width, POWER_HEIGHT, lines)
        if stacked:
            y -= POWER_HEIGHT + GAP / 2
        else:
            x += width + GAP


def _lines(stage, headline: Mapping[str, str]) -> tuple[str, ...]:
    extra = (headline[stage.id],) if headline.get(stage.id) else ()
    return (stage.title, f"({stage.kind})", *extra)


def _width(all_lines: Sequence[Sequence[str]]) -> float:
    widest = max((text_width(line) for lines in all_lines for line in lines), default=0.0)
    return max(MIN_WIDTH, round(widest + PADDING, 1))


def _corner(i: int, rows: int, width: float, per_row: int) -> Point:
    row = i // per_row
    return (LEFT + (width + GAP) * (i % per_row), ROW_STEP * (rows - 1 - row))


def _draw_chain(sheet: SchematicSheet, blocks: Sequence[_Block]) -> None:
    top = blocks[0].corner[1] if blocks else 0.0
    end = (0.0, top + HEIGHT / 2)
    sheet.port(end, "IN", "left")
    for block in blocks:
        x, y = block.corner
        _link(sheet, end, (x, y + HEIGHT / 2), y + HEIGHT + OVER)
        sheet.block(block.corner, block.width, block.height, block.lines)
        end = (x + block.width, y + HEIGHT / 2)
    sheet.wire(end, (end[0] + GAP, end[1]))
    sheet.port((end[0] + GAP, end[1]), "OUT", "right")


def _link(sheet: SchematicSheet, end: Point, start: Point, over: float) -> None:
    """A wire from one block's output to the next block's input, up and over on a new row."""
    if abs(end[1] - start[1]) < 1e-9:
        sheet.wire(end, start)
        return
    sheet.wire(end, (end[0] + 0.7, end[1]), (end[0] + 0.7, over), (start[0] - 0.7, over),
               (start[0] - 0.7, start[1]), start)


def _draw_power(sheet: SchematicSheet, kit, power, headline, blocks: Sequence[_Block],
                rows: int) -> None:
    lines = _lines(power, headline)
    fed = [b for b in blocks if kit.rails_used(b.stage)]
    last_bus = blocks[-1].corner[1] - BUS_DROP if blocks else 0.0
    corner = (LEFT, last_bus - FEED - POWER_HEIGHT)
    sheet.block(corner, _width([lines]), POWER_HEIGHT, lines)
    if not fed:
        return
    feed_x = LEFT + fed[0].width / 2
    top = (feed_x, corner[1] + POWER_HEIGHT)
    sheet.wire(top, (feed_x, last_bus))
    rails = sorted({r for b in fed for r in kit.rails_used(b.stage)}, key=POWER_RAILS.index)
    sheet.text(", ".join(sheet.net_name(r) for r in rails), (feed_x + 0.2, top[1] + FEED / 2),
               size=FONT_SIZE * 0.9, side="right")
    upper = sorted({b.corner[1] - BUS_DROP for b in fed} - {last_bus}, reverse=True)
    trunk = [upper[0]] if upper else []
    for y in [last_bus, *upper]:
        downs = {feed_x} if y == last_bus else set()
        lefts = {TRUNK_X} if trunk else set()
        stubs = {b.feed_point[0] for b in fed if abs(b.corner[1] - BUS_DROP - y) < 1e-9}
        _bus(sheet, y, stubs, downs | lefts)
        for x in stubs:
            sheet.wire((x, y), (x, y + BUS_DROP))
    if trunk:
        sheet.wire((TRUNK_X, last_bus), (TRUNK_X, upper[0]))
        for y in upper[1:]:
            sheet.dot((TRUNK_X, y))


def _bus(sheet: SchematicSheet, y: float, ups: set[float], downs: set[float]) -> None:
    """A bus at height ``y`` with stubs going up at ``ups`` and feeds coming from ``downs``;
    a dot wherever three or more wires meet."""
    xs = sorted(ups | downs)
    sheet.wire((xs[0], y), (xs[-1], y))
    for x in xs:
        arms = (x > xs[0]) + (x < xs[-1]) + (x in ups) + (x in downs)
        if arms >= 3:
            sheet.dot((x, y))

