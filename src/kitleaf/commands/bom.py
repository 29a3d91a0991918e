"""``kitleaf bom FILE... [--csv] [--kits N --spares P%]``: the parts list or a batch order."""

from __future__ import annotations

from kitleaf.bom import batch_order, bom_csv, bom_lines, bom_text, order_text
from kitleaf.circuit.build import build_circuit
from kitleaf.cli import command
from kitleaf.errors import KitleafError, SourceSpan
from kitleaf.guide import parse_guide
from kitleaf.values import parse_tolerance


def lines_for(path):
    return bom_lines(build_circuit(parse_guide(path)).parts())


@command("bom")
def run(args) -> int:
    boms = [lines_for(path) for path in args.files]
    if args.kits is not None:
        spares = 0.0 if args.spares.strip() in ("", "0", "0%") else parse_tolerance(args.spares)
        print(order_text(batch_order(boms, args.kits, spares)), end="")
        return 0
    if len(boms) > 1:
        raise KitleafError("several guides need --kits N for a batch order; give one guide "
                           "for its parts list", SourceSpan(str(args.files[1])))
    print(bom_csv(boms[0]) if args.csv else bom_text(boms[0]), end="")
    return 0
