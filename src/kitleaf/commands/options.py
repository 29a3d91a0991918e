"""Options several commands share: the guides folder, the output folder and how to build."""

from __future__ import annotations

import argparse
import os
from pathlib import Path

from kitleaf.errors import KitleafError

DEFAULT_GUIDES = Path("guides")
DEFAULT_OUT = Path("published")
CACHE_ENV = "KITLEAF_CACHE_DIR"  # the build cache's folder, where --cache-dir is not given


def add_guides(p: argparse.ArgumentParser) -> None:
    p.add_argument("guides", nargs="?", default=DEFAULT_GUIDES, type=Path, metavar="GUIDES",
                   help="a folder of guides (*.md), or one guide file (default: guides/)")


def add_fail_on_findings(p: argparse.ArgumentParser, what: str) -> None:
    p.add_argument("--fail-on-findings", action="store_true",
                   help=f"a design-rule finding fails its guide: {what}")


def add_build_options(p: argparse.ArgumentParser) -> None:
    """The guides, the output folder and the build's processes and cache."""
    add_guides(p)
    p.add_argument("-o", "--out", default=DEFAULT_OUT, type=Path, metavar="FOLDER",
                   help="the folder to publish the site into (default: published/)")
    p.add_argument("-j", "--jobs", type=int, default=None, metavar="N",
                   help="processes to build with, 1 or more (default: one per core)")
    p.add_argument("--no-cache", action="store_true", help="build everything afresh")
    p.add_argument("--cache-dir", type=Path, metavar="FOLDER",
                   help=f"the build cache's folder (default: ${CACHE_ENV} if set, else "
                        ".kitleaf-cache/ beside the output folder)")


def cache_dir_of(args) -> Path | None:
    """The cache folder the user chose: ``--cache-dir``, else the environment; None for the
    default beside the output folder."""
    chosen = getattr(args, "cache_dir", None) or os.environ.get(CACHE_ENV, "").strip()
    return Path(chosen) if chosen else None


def whole_at_least_one(value: int | None, option: str) -> int | None:
    """``value`` unless it is below 1 (an option left out stays None)."""
    if value is not None and value < 1:
        raise KitleafError(f"{option} must be a whole number of 1 or more, got {value}")
    return value
