"""The CLI's commands, one module each; importing this package registers them all."""

from kitleaf.commands import bom, build, check, new, serve, specs  # noqa: F401
