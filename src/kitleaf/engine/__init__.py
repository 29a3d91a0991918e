"""The circuit engine: modified nodal analysis on numpy, a netlist in and solved figures out.

A base library: it imports nothing of kitleaf but :mod:`kitleaf.errors`. Its public names are
read from their modules on first use, so a caller that only builds a netlist (the bill of
materials, say) does not pay for numpy, scipy and the solvers at start-up.
"""

from __future__ import annotations

import importlib

# Public name -> the module of this package that defines it.
_HOMES = {
    "AcResult": "ac", "solve_ac": "ac",
    "BatchResult": "batch", "solve_batch": "batch",
    "Circuit": "circuit",
    "OperatingPoint": "dc", "solve_dc": "dc",
    "TAPERS": "elements", "taper_fraction": "elements",
    "band_gain_db": "measure", "corners": "measure", "gain_db_at": "measure",
    "phase_deg_at": "measure",
    "DeviceModel": "models", "get_model": "models", "register_model": "models",
    "registered_models": "models",
    "McResult": "montecarlo", "Spread": "montecarlo", "monte_carlo": "montecarlo",
    "PoleResidue": "ports", "growing": "poles",
}

__all__ = sorted(_HOMES)


def __getattr__(name: str):
    home = _HOMES.get(name)
    if home is None:
        raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
    value = getattr(importlib.import_module(f"{__name__}.{home}"), name)
    globals()[name] = value  # later look-ups skip this function
    return value


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(_HOMES))
