"""The CLI's commands, one module each, named as the command; each defines its options and
registers itself when imported (:func:`command`), and the CLI imports only the one it runs.
:data:`ORDER` lists them as ``kitleaf --help`` shows them, with the one-line summary that help
shows without importing any of them. ``options.py`` holds options several share. The registry
lives here, below the CLI, so a command never imports the CLI that runs it."""

from __future__ import annotations

import argparse
from collections.abc import Callable
from dataclasses import dataclass

from kitleaf.registry import add

ORDER: tuple[tuple[str, str], ...] = (
    ("new", "write a ready-to-edit guide"),
    ("check", "parse, solve and check every guide without writing anything"),
    ("build", "build the site from a folder of guides"),
    ("proof", "build, show the site on this machine and rebuild on each change"),
    ("specs", "print a guide's computed specs"),
    ("bom", "print a guide's bill of materials, or a batch order for several kits"),
    ("pinpoint", "rank the faults a builder's meter readings point to"),
)


@dataclass(frozen=True)
class Command:
    """A registered command: what it adds to its parser, and what it runs."""

    add_options: Callable[[argparse.ArgumentParser], None]
    run: Callable[[argparse.Namespace], int]


COMMANDS: dict[str, Command] = {}


def command(name: str, add_options: Callable[[argparse.ArgumentParser], None]):
    """Register the decorated function as command ``name`` with its options (its module is
    named as the command and listed in :data:`ORDER`)."""

    def register(func):
        add(COMMANDS, name, Command(add_options, func), "command")
        return func

    return register
