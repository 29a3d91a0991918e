"""The bill of materials and batch orders as CSV and as plain text for a terminal.

CSV columns are documented in docs/bom.md; rows keep the build order; output is the same
bytes for the same lines (``\\n`` line ends, no timestamps).
"""

from __future__ import annotations

import csv
import io
from collections.abc import Sequence

from kitleaf.bom.lines import BomLine
from kitleaf.bom.order import group_heading
from kitleaf.bom.pinouts import DIODE_VIEW
from kitleaf.bom.purchase import OrderLine

BOM_COLUMNS = ("designators", "quantity", "value", "value_si", "type", "attributes", "marking")
ORDER_COLUMNS = ("quantity", "needed", "spares", "per_kit", "value", "value_si", "type",
                 "attributes")


def marking_text(line: BomLine) -> str:
    """What to look for on the part: colour bands, the capacitor code, or the pinout."""
    if line.bands:
        return " ".join(band.colour for band in line.bands)
    if line.code:
        return line.code
    if line.pinout and line.pinout.view == DIODE_VIEW:
        return f"{line.pinout.package}, band = cathode"
    if line.pinout:
        return f"{line.pinout.package} {' '.join(line.pinout.pins)}"
    return ""


def _csv(header: Sequence[str], rows: list[list[str]]) -> str:
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\n")
    writer.writerow(header)
    writer.writerows(rows)
    return out.getvalue()


def bom_csv(lines: Sequence[BomLine]) -> str:
    """One row per line of the bill of materials, in build order."""
    rows = [
        [" ".join(line.designators), str(line.quantity), line.value_text, line.value_display,
         line.type, "; ".join(line.attributes), marking_text(line)]
        for line in lines
    ]
    return _csv(BOM_COLUMNS, rows)


def order_csv(lines: Sequence[OrderLine]) -> str:
    """One row per line of a batch order."""
    rows = [
        [str(line.quantity), str(line.needed), str(line.spares), str(line.per_kit),
         line.value_text, line.value_display, line.type, "; ".join(line.attributes)]
        for line in lines
    ]
    return _csv(ORDER_COLUMNS, rows)


def _table(rows: list[tuple[str, ...]]) -> list[str]:
    widths = [max(len(row[i]) for row in rows) for i in range(len(rows[0]))]
    return ["  " + "  ".join(c.ljust(w) for c, w in zip(row, widths, strict=True)).rstrip()
            for row in rows]


def _grouped(lines, row) -> str:
    out: list[str] = []
    groups: dict[str, list[tuple[str, ...]]] = {}
    for line in lines:
        groups.setdefault(line.group, []).append(row(line))
    for group, rows in groups.items():
        out += [group_heading(group), *_table(rows), ""]
    return "\n".join(out)


def bom_text(lines: Sequence[BomLine]) -> str:
    """The bill of materials for a terminal: a heading per build group, aligned columns."""
    def row(line: BomLine) -> tuple[str, ...]:
        return (str(line.quantity), line.value_text, " ".join(line.designators),
                ", ".join(line.attributes), marking_text(line))

    text = _grouped(lines, row)
    warnings = [str(w) for line in lines for w in line.warnings]
    return text + "".join(f"{w}\n" for w in warnings)


def order_text(lines: Sequence[OrderLine]) -> str:
    """A batch order for a terminal: quantity to buy (needed + spares), value, attributes."""
    def row(line: OrderLine) -> tuple[str, ...]:
        return (str(line.quantity), f"({line.needed} + {line.spares})", line.value_text,
                ", ".join(line.attributes))

    return _grouped(lines, row)
