"""The registry of stage kinds: the modules of this package, in order, each registering the
kinds it defines (see :mod:`kitleaf.registry`)."""

from __future__ import annotations

from kitleaf.circuit.kind import StageKind
from kitleaf.registry import add, load

KINDS: dict[str, StageKind] = {}

# The modules defining kinds, in the order docs/stage-kinds.md lists the kinds. A new kind is
# one new module here plus its tests; a test fails while a module of this folder is not listed.
MODULES = (
    "common_emitter",
    "custom",
    "diode_clipper",
    "direct_coupled_fuzz",
    "emitter_follower",
    "passive_filters",  # high-pass, low-pass
    "jfet_common_source",
    "jfet_source_follower",
    "opamp_inverting",
    "opamp_non_inverting",
    "opamp_soft_clip",
    "opamp_spare",
    "output_buffer",
    "power",
    "tone_active",
    "tone_blend",
    "tone_cut",
    "tone_stack",
    "volume",
)


def register(cls: type[StageKind]) -> type[StageKind]:
    """Class decorator: make a stage kind available under its ``name``."""
    add(KINDS, cls.name, cls(), "stage kind")
    return cls


load(__name__, MODULES)
