"""How a growing family registers its members: a dict by name, filled in a stated order.

Stage kinds (``circuit/stages``), design rules (``specs/rules``) and prose plugins
(``render/prose``) each keep one dict of their members and, beside it, the tuple of modules
that define them, in order (as markdown-it lists its rules). Importing those modules in that
order fills the dict, each member adding itself with :func:`add`; so the order a reader sees
in the list is the order the members run and are documented in. Tests check each list
against its folder and its documentation.
"""

from __future__ import annotations

import importlib
from collections.abc import Sequence
from typing import TypeVar

T = TypeVar("T")


def add(family: dict[str, T], name: str, member: T, what: str) -> T:
    """Register ``member`` under ``name``; a name empty or taken is a programming error."""
    if not name or name in family:
        raise ValueError(f"{what} {name!r} is empty or registered twice")
    family[name] = member
    return member


def load(package: str, modules: Sequence[str]) -> None:
    """Import a family's member modules in their listed order (each registers what it defines)."""
    for module in modules:
        importlib.import_module(f"{package}.{module}")
