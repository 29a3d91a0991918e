"""The bill of materials: lines to buy and find, build order, CSV, batch orders, rating checks."""

from kitleaf.bom.fitting import fitting_notes
from kitleaf.bom.lines import BomLine, bom_lines, natural_key
from kitleaf.bom.order import BUILD_ORDER
from kitleaf.bom.pinouts import PINOUTS, Pinout, pinout_for
from kitleaf.bom.purchase import OrderLine, batch_order, parse_spares
from kitleaf.bom.ratings import RatingWarning, rating_warnings
from kitleaf.bom.writers import bom_csv, bom_text, order_csv, order_text

__all__ = [
    "BUILD_ORDER",
    "PINOUTS",
    "BomLine",
    "OrderLine",
    "Pinout",
    "RatingWarning",
    "batch_order",
    "bom_csv",
    "bom_lines",
    "bom_text",
    "fitting_notes",
    "natural_key",
    "order_csv",
    "order_text",
    "parse_spares",
    "pinout_for",
    "rating_warnings",
]
