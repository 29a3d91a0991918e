"""The Jinja environment of a build: theme loaders, strict undefined, autoescape, our filters."""

from __future__ import annotations

import importlib.resources
from collections.abc import Callable
from pathlib import Path

import jinja2

from kitleaf.values import format_db, format_value

DEFAULT_THEME = "default"
# Display filters by name; every number a page shows goes through one of these.
FILTERS: dict[str, Callable] = {}


def register_filter(name: str):
    def add(func: Callable) -> Callable:
        FILTERS[name] = func
        return func

    return add


def packaged_theme() -> Path:
    """The default theme shipped inside the kitleaf package (top-level themes/ in the repo)."""
    return Path(str(importlib.resources.files("kitleaf.themes") / DEFAULT_THEME))


def theme_dirs(site_root: Path | None, theme: str = DEFAULT_THEME) -> list[Path]:
    """Theme folders, most specific first: the site's own themes/NAME, then the packaged one."""
    dirs = []
    if site_root is not None and (site_root / "themes" / theme).is_dir():
        dirs.append(site_root / "themes" / theme)
    dirs.append(packaged_theme())
    return dirs


def make_environment(themes: list[Path]) -> jinja2.Environment:
    """One environment per build: a site's templates override the packaged ones."""
    loader = jinja2.ChoiceLoader([jinja2.FileSystemLoader(str(d / "templates")) for d in themes])
    env = jinja2.Environment(
        loader=loader,
        undefined=jinja2.StrictUndefined,
        autoescape=True,
        keep_trailing_newline=True,
        trim_blocks=True,
        lstrip_blocks=True,
    )
    env.filters.update(FILTERS)
    return env


@register_filter("si")
def _si(value: float | None, quantity: str, digits: int = 3) -> str:
    return "–" if value is None else format_value(value, quantity, digits)


def _one(value: float, quantity: str) -> str:
    if quantity == "db":
        return format_db(value)
    if quantity == "meter":
        return meter_volts(value)
    return format_value(value, quantity)


def meter_volts(volts: float) -> str:
    """A DC voltage as a multimeter on its 20 V range shows it: "6.87 V", "0.00 V".

    A builder compares the table with the meter's display, so the voltage table keeps one unit
    and two decimals instead of switching to mV or µV (common practice, no source).
    """
    text = f"{volts:.2f}"
    return f"{'0.00' if text == '-0.00' else text} V"


@register_filter("range_text")
def range_text(value, quantity: str) -> str:
    """A spec as the trade writes it, with its tolerance spread: "25.8 dB (24.9–26.6)"."""
    if value is None:
        return "–"
    nominal = _one(value.nominal, quantity)
    if value.low is None or value.high is None:
        return nominal
    low, high = _one(value.low, quantity), _one(value.high, quantity)
    if low == high == nominal:  # no spread at this precision
        return nominal
    unit = nominal.partition(" ")[2]
    if low.endswith(" " + unit) and high.endswith(" " + unit):
        low, high = low.partition(" ")[0], high.partition(" ")[0]
    # A dash between negative numbers reads as a minus sign: "-9.1 to -6.9".
    joiner = " to " if high.startswith("-") or low.startswith("-") else "–"
    return f"{nominal} ({low}{joiner}{high})"


@register_filter("percent")
def percent(fraction: float) -> str:
    """A knob position as a share of its rotation: "25 %"."""
    return f"{round(fraction * 100):d} %"


@register_filter("figure")
def figure(value: float | None, quantity: str) -> str:
    """One plain value in its unit ("db" for decibels); a dash where there is none."""
    return "–" if value is None else _one(value, quantity)
