"""The registry of stage kinds: every module in this package registers the kinds it defines."""

from __future__ import annotations

import importlib
import pkgutil

from kitleaf.circuit.kind import StageKind

KINDS: dict[str, StageKind] = {}


def register(cls: type[StageKind]) -> type[StageKind]:
    """Class decorator: make a stage kind available under its ``name``."""
    if not cls.name or cls.name in KINDS:
        raise ValueError(f"stage kind name {cls.name!r} is empty or taken")
    KINDS[cls.name] = cls()
    return cls


def _load_all() -> None:
    # A new kind is one new module in this folder; nothing else needs editing.
    for module in sorted(m.name for m in pkgutil.iter_modules(__path__)):
        importlib.import_module(f"{__name__}.{module}")


_load_all()
