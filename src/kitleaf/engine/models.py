"""Device models: named parameter sets with defaults, spreads and provenance, in a registry."""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field
from types import MappingProxyType

from kitleaf.errors import ModelError

INF = math.inf

_DIODE = {
    "IS": 1e-14, "N": 1.0, "RS": 0.0, "CJO": 0.0, "VJ": 1.0, "M": 0.5, "FC": 0.5,
    "TT": 0.0, "BV": INF, "IBV": 1e-3,
}
# SPICE Gummel-Poon defaults; VAF/VAR/IKF/IKR of infinity mean "effect off". BVEBO is
# kitleaf's: the emitter-base reverse breakdown voltage V(BR)EBO (infinity: none).
_BJT = {
    "IS": 1e-16, "BF": 100.0, "BR": 1.0, "NF": 1.0, "NR": 1.0, "VAF": INF, "VAR": INF,
    "IKF": INF, "IKR": INF, "ISE": 0.0, "NE": 1.5, "ISC": 0.0, "NC": 2.0, "RB": 0.0,
    "RE": 0.0, "RC": 0.0, "CJE": 0.0, "VJE": 0.75, "MJE": 0.33, "CJC": 0.0, "VJC": 0.75,
    "MJC": 0.33, "FC": 0.5, "TF": 0.0, "BVEBO": INF,
}
# Parameters of kitleaf's own beyond the SPICE model card (the exporter writes them apart).
NON_SPICE = {"BVEBO"}
# SPICE JFET level 1 (Shichman-Hodges) defaults.
_JFET = {
    "VTO": -2.0, "BETA": 1e-4, "LAMBDA": 0.0, "IS": 1e-14, "N": 1.0, "RD": 0.0, "RS": 0.0,
    "CGS": 0.0, "CGD": 0.0, "PB": 1.0, "FC": 0.5,
}
# kitleaf's op-amp macro-model (see docs/engine.md): open-loop gain AOL (V/V), gain-bandwidth
# GBW (Hz), input and output resistance, output swing limits SWING_HI/LO (volts short of each
# rail), input common-mode range CM_HI/LO (volts inside each rail), quiescent current IQ (A),
# slew rate SR (V/s) and output current limit ILIM (A).
_OPAMP = {
    "AOL": 2e5, "GBW": 1e6, "RIN": 1e12, "ROUT": 100.0, "SWING_HI": 1.5, "SWING_LO": 1.5,
    "CM_HI": 0.0, "CM_LO": 3.0, "IQ": 1e-3, "IB": 0.0, "SR": 0.5e6, "ILIM": 20e-3,
}

# A charge-pump chip (kitleaf's own, see docs/engine.md): the switches' output resistance
# ROUT, the oscillator frequency FOSC and the quiescent current IQ. How it is wired (doubler
# or inverter) is the circuit's, and its flying capacitor adds 1 / (FOSC C) to ROUT.
_PUMP = {"ROUT": 45.0, "FOSC": 10e3, "IQ": 100e-6}

DEFAULTS: dict[str, dict[str, float]] = {
    "diode": _DIODE, "npn": _BJT, "pnp": _BJT, "njf": _JFET, "pjf": _JFET, "opamp": _OPAMP,
    "pump": _PUMP,
}
# Parameters that may be zero, and those of either sign; every other one must be positive.
_NON_NEGATIVE = {"ISE", "ISC", "RS", "RB", "RE", "RC", "RD", "CJO", "CJE", "CJC", "CGS", "CGD",
                 "TT", "TF", "LAMBDA", "SWING_HI", "SWING_LO", "CM_HI", "CM_LO", "IQ", "M"}
_ANY_SIGN = {"VTO", "IB"}  # a threshold; a bias current that flows out of a PNP input
# Parameters whose infinity means "effect off"; every other one must be finite.
_MAY_BE_INFINITE = {"VAF", "VAR", "IKF", "IKR", "BV"}
# Parameters SPICE reads as "effect off" when written as zero (an Early voltage or a knee
# current of 0 is taken as infinite; SPICE3 user's manual, BJT model table, from memory):
# stored as infinity, so the equations never divide by it.
ZERO_MEANS_OFF = frozenset({"VAF", "VAR", "IKF", "IKR"})
# Bounds beyond which a parameter is absurd or breaks the model's equations (low, high; the
# high end excluded): the depletion capacitance divides by 1 - FC and is meant for gradings
# below one (SPICE clamps FC at 0.95 and grading at 0.9, from memory); emission coefficients
# of real junctions lie between about 1 and 4 and current gains below a few thousand
# (from memory), so a hundredfold beyond either is a typing slip, not a part.
_RANGES = {
    "FC": (0.0, 1.0), "M": (0.0, 1.0), "MJE": (0.0, 1.0), "MJC": (0.0, 1.0),
    "N": (0.1, 100.0), "NF": (0.1, 100.0), "NR": (0.1, 100.0), "NE": (0.1, 100.0),
    "NC": (0.1, 100.0), "BF": (0.0, 1e6), "BR": (0.0, 1e6), "AOL": (0.0, 1e12),
}
# Spread keys that are not model parameters: IDSS sets BETA = IDSS / VTO**2.
_DERIVED_SPREADS = {"njf": {"IDSS"}, "pjf": {"IDSS"}}
PROVENANCES = ("datasheet typical", "textbook", "from memory", "user")


@dataclass(frozen=True)
class DeviceModel:
    """A device type: ``kind`` (diode, npn, pnp, njf, pjf, opamp, pump) and its parameters,
    SPICE-named where SPICE has them.

    ``spread`` maps a parameter to its (low, high) range across production, drawn uniformly by
    Monte Carlo; ``provenance`` says where the numbers come from.
    """

    name: str
    kind: str
    params: Mapping[str, float] = field(default_factory=dict)
    spread: Mapping[str, tuple[float, float]] = field(default_factory=dict)
    provenance: str = "user"
    note: str = ""

    def __post_init__(self) -> None:
        if self.kind not in DEFAULTS:
            raise ModelError(f"model {self.name!r}: unknown kind {self.kind!r}, "
                             f"use one of {', '.join(sorted(DEFAULTS))}")
        params = {k: (INF if k in ZERO_MEANS_OFF and v == 0 else v)
                  for k, v in self.params.items()}
        for key, value in params.items():
            _check_param(self, key, value)
        allowed = DEFAULTS[self.kind].keys() | _DERIVED_SPREADS.get(self.kind, set())
        for key, (low, high) in self.spread.items():
            if key not in allowed or not low <= high:
                raise ModelError(f"model {self.name!r}: bad spread for {key!r}")
        object.__setattr__(self, "params", MappingProxyType(params))
        object.__setattr__(self, "spread", MappingProxyType(dict(self.spread)))

    def get(self, key: str) -> float:
        """A parameter's value, or the published model's default when unset."""
        return self.params.get(key, DEFAULTS[self.kind][key])

    def full(self) -> dict[str, float]:
        """All parameters with defaults filled in."""
        return {**DEFAULTS[self.kind], **self.params}


def _check_param(model: DeviceModel, key: str, value: float) -> None:
    if key not in DEFAULTS[model.kind]:
        raise ModelError(f"model {model.name!r}: {key!r} is not a {model.kind} parameter")
    if not isinstance(value, int | float) or math.isnan(value):
        raise ModelError(f"model {model.name!r}: {key} must be a number, got {value!r}")
    _check_range(model, key, value)
    if key in _ANY_SIGN:
        return
    if key in _NON_NEGATIVE and value < 0:
        raise ModelError(f"model {model.name!r}: {key} must not be negative, got {value!r}")
    if key not in _NON_NEGATIVE and value <= 0:
        raise ModelError(f"model {model.name!r}: {key} must be positive, got {value!r}")


def _check_range(model: DeviceModel, key: str, value: float) -> None:
    if math.isinf(value) and key not in _MAY_BE_INFINITE:
        raise ModelError(f"model {model.name!r}: {key} must be finite, got {value!r}")
    if key in _RANGES and not _RANGES[key][0] <= value < _RANGES[key][1]:
        low, high = _RANGES[key]
        raise ModelError(f"model {model.name!r}: {key} = {value!r} is outside its range, "
                         f"from {low:g} up to (not including) {high:g}")


_REGISTRY: dict[str, DeviceModel] = {}


def register_model(name: str, model: DeviceModel) -> DeviceModel:
    """Make ``model`` available under ``name`` (a guide's own parts override library ones)."""
    if not isinstance(model, DeviceModel):
        raise ModelError(f"model {name!r}: expected a DeviceModel, got {type(model).__name__}")
    _REGISTRY[name.upper()] = model
    return model


def get_model(name: str | DeviceModel) -> DeviceModel:
    """The registered model called ``name`` (case-insensitive); a DeviceModel passes through."""
    if isinstance(name, DeviceModel):
        return name
    from kitleaf.engine import library  # noqa: F401  (fills the registry on first use)

    try:
        return _REGISTRY[str(name).upper()]
    except KeyError:
        known = ", ".join(sorted(_REGISTRY))
        raise ModelError(f"unknown device model {name!r}; known models: {known}") from None


def registered_models() -> tuple[str, ...]:
    """Names of every registered model, sorted."""
    from kitleaf.engine import library  # noqa: F401

    return tuple(sorted(_REGISTRY))
