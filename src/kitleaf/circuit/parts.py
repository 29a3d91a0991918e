"""Parts as the circuit model knows them: a designator, a type, an SI value and its attributes."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import TYPE_CHECKING

from kitleaf.errors import SourceSpan

if TYPE_CHECKING:  # parts are read without loading the engine (a cached rebuild, the BOM)
    from kitleaf.engine.models import DeviceModel

# Part types and the SI quantity their value is in (None: named by a device model instead).
PART_QUANTITY: Mapping[str, str | None] = MappingProxyType(
    {
        "resistor": "resistance",
        "capacitor": "capacitance",
        "inductor": "inductance",
        "pot": "resistance",
        "trimmer": "resistance",
        "diode": None,
        "led": None,
        "bjt": None,
        "jfet": None,
        "opamp": None,
        "pump": None,
        "switch": None,
        "hardware": None,
    }
)


@dataclass(frozen=True)
class Part:
    """One part of a stage, or one piece of off-board hardware from the kit block.

    ``value`` is SI (ohms, farads, henries) for passives and None for semiconductors, which
    are named by ``model`` instead. ``tolerance`` is a fraction (0.05 for 5 %). ``rating`` is the
    stated voltage rating of a capacitor in volts or the power rating of a resistor in watts.
    ``attrs`` keeps every other word written on the part line (dielectric, taper, package...).
    ``device`` is the engine model ``model`` names: the guide's own or the library's.
    """

    designator: str
    type: str
    text: str
    span: SourceSpan
    value: float | None = None
    model: str | None = None
    tolerance: float | None = None
    rating: float | None = None
    attrs: Mapping[str, str] = field(default_factory=dict)
    role: str = ""
    stage_id: str = ""
    device: DeviceModel | None = None

    @property
    def dielectric(self) -> str | None:
        return self.attrs.get("dielectric")

    @property
    def polarised(self) -> bool:
        return self.type in ("diode", "led") or self.dielectric in ("electrolytic", "tantalum")
