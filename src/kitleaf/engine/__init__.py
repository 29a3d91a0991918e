"""The circuit engine: modified nodal analysis on numpy, a netlist in and solved figures out."""

from kitleaf.engine.ac import AcResult, solve_ac
from kitleaf.engine.batch import BatchResult, solve_batch
from kitleaf.engine.circuit import Circuit
from kitleaf.engine.dc import OperatingPoint, solve_dc
from kitleaf.engine.elements import TAPERS, taper_fraction
from kitleaf.engine.measure import band_gain_db, corners, gain_db_at, phase_deg_at
from kitleaf.engine.models import DeviceModel, get_model, register_model, registered_models
from kitleaf.engine.montecarlo import McResult, Spread, monte_carlo
from kitleaf.engine.ports import PoleResidue

__all__ = [
    "TAPERS", "AcResult", "BatchResult", "Circuit", "DeviceModel", "McResult", "OperatingPoint",
    "PoleResidue", "Spread", "band_gain_db", "corners", "gain_db_at", "get_model", "monte_carlo",
    "phase_deg_at", "register_model", "registered_models", "solve_ac", "solve_batch", "solve_dc",
    "taper_fraction",
]
