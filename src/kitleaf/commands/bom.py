"""``kitleaf bom FILE... [--csv] [--kits N --spares P%]``: the parts list or a batch order."""

from __future__ import annotations

import argparse
from pathlib import Path

from kitleaf.bom import (
    batch_order,
    bom_csv,
    bom_lines,
    bom_text,
    order_csv,
    order_text,
    parse_spares,
)
from kitleaf.circuit.build import build_circuit
from kitleaf.commands import command
from kitleaf.errors import KitleafError, SourceSpan
from kitleaf.guide import parse_guide


def add_options(p: argparse.ArgumentParser) -> None:
    p.add_argument("files", nargs="+", type=Path, metavar="GUIDE",
                   help="a guide file; several, with --kits, for one order across kits")
    p.add_argument("--csv", action="store_true", help="as CSV (columns in docs/bom.md)")
    p.add_argument("--kits", type=int, metavar="N",
                   help="an order for a batch of N kits of each guide")
    p.add_argument("--spares", metavar="PERCENT",
                   help="with --kits: spares per line, such as 10%% (default: 0%%)")


def lines_for(path):
    return bom_lines(build_circuit(parse_guide(path), set_trimmers=False).parts())


def spares_of(args) -> float:
    """The spares fraction; read even without --kits, so a bad value never passes unseen."""
    if args.spares is None:
        return 0.0
    spares = parse_spares(args.spares)
    if args.kits is None:
        raise KitleafError("--spares applies to a batch order; add --kits N, or leave it out")
    return spares


@command("bom", add_options)
def run(args) -> int:
    spares = spares_of(args)
    boms = [lines_for(path) for path in args.files]
    if args.kits is not None:
        order = batch_order(boms, args.kits, spares)
        print(order_csv(order) if args.csv else order_text(order), end="")
        return 0
    if len(boms) > 1:
        raise KitleafError("several guides need --kits N for a batch order; give one guide "
                           "for its parts list", SourceSpan(str(args.files[1])))
    print(bom_csv(boms[0]) if args.csv else bom_text(boms[0]), end="")
    return 0
