"""What a builder needs to pick the right part from the bag and fit it the right way round.

One finder per part type (a registry): the value as the trade writes it, the buying
attributes, and the marks to look for (colour bands, capacitor code, pinout, polarity).
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass
from types import MappingProxyType

from kitleaf.bom.pinouts import DIODE_VIEW, Pinout, pinout_for
from kitleaf.circuit.parts import Part
from kitleaf.circuit.switches import form_of
from kitleaf.display import power_text
from kitleaf.errors import ValueFormatError
from kitleaf.marking import Band, capacitor_code, resistor_bands
from kitleaf.specs.ratings import POLARISED
from kitleaf.values import format_rkm, format_value

# Polarity notes (common practice, no source).
POLARITY: Mapping[str, str] = MappingProxyType(
    {
        "electrolytic": "polarised: the stripe on the can marks the negative (-) lead, "
        "the longer lead is positive (+)",
        "tantalum": "polarised: the + mark on the body is the positive lead",
        "diode": "the band marks the cathode: match it to the band on the board",
        "led": "the longer lead is the anode (+); the flat on the rim marks the cathode",
    }
)

CHECK_DATASHEET = "pinouts vary between makers: check the supplier's data sheet"


@dataclass(frozen=True)
class PartDescription:
    """How one part is written, bought and recognised."""

    value_text: str
    value_display: str
    attributes: tuple[str, ...] = ()
    bands: tuple[Band, ...] = ()
    code: str | None = None
    pinout: Pinout | None = None
    polarity: str | None = None
    notes: tuple[str, ...] = ()


def tolerance_text(tolerance: float | None) -> str | None:
    return None if tolerance is None else f"{tolerance * 100:g}%"


def _words(*texts: str | None) -> tuple[str, ...]:
    return tuple(t for t in texts if t)


def _resistor(part: Part) -> PartDescription:
    rating = power_text(part.rating) if part.rating else None
    try:
        bands = resistor_bands(part.value, part.tolerance or 0.05)
        notes: tuple[str, ...] = ()
    except ValueFormatError as exc:
        bands, notes = (), (f"no colour code: {exc.message}",)
    return PartDescription(format_rkm(part.value, "resistance"),
                           format_value(part.value, "resistance"),
                           _words(tolerance_text(part.tolerance), rating), bands=bands, notes=notes)


def _capacitor(part: Part) -> PartDescription:
    dielectric = part.dielectric
    rating = format_value(part.rating, "voltage") if part.rating else None
    attributes = _words(dielectric, tolerance_text(part.tolerance), rating)
    rkm, shown = format_rkm(part.value, "capacitance"), format_value(part.value, "capacitance")
    if dielectric in POLARISED:
        printed = f"printed {shown}" + (f", {rating}" if rating else "")
        return PartDescription(rkm, shown, attributes, polarity=POLARITY[dielectric],
                               notes=(printed,))
    try:
        code: str | None = capacitor_code(part.value)
        notes = (f"marked {code}",)
    except ValueFormatError:
        code, notes = None, (f"printed {shown}",)
    return PartDescription(rkm, shown, attributes, code=code, notes=notes)


def _inductor(part: Part) -> PartDescription:
    shown = format_value(part.value, "inductance")
    return PartDescription(shown, shown, _words(tolerance_text(part.tolerance)))


def _pot(part: Part) -> PartDescription:
    taper = part.attrs.get("taper", "")
    rkm = format_rkm(part.value, "resistance")
    shown = format_value(part.value, "resistance")
    return PartDescription(f"{rkm} {taper}".strip(), f"{shown} {taper}".strip(),
                   _words(part.attrs.get("shaft"), part.attrs.get("size")))


def _trimmer(part: Part) -> PartDescription:
    """A trimmer is bought by its track value; it is set on the bench (the guide says how)."""
    rkm = format_rkm(part.value, "resistance")
    return PartDescription(rkm, f"{format_value(part.value, 'resistance')} trimmer",
                           _words(part.attrs.get("package"), part.attrs.get("size")),
                           notes=("set on the bench: see the set-up step",))


def _pinout_notes(model: str, pinout: Pinout | None) -> tuple[str, ...]:
    if pinout is None:
        return (f"{model} is not in kitleaf's pinout table: check the supplier's data sheet",)
    if pinout.view == DIODE_VIEW:
        return (f"{pinout.package} package",)
    where = f"{pinout.package}: {pinout.labelled()} ({pinout.view}; {pinout.provenance})"
    return (where, CHECK_DATASHEET)


def _device(part: Part) -> PartDescription:
    model = part.model or part.text
    pinout = pinout_for(model)
    notes = _pinout_notes(model, pinout)
    package = part.attrs.get("package")
    return PartDescription(model, model, _words(package), pinout=pinout,
                   polarity=POLARITY.get(part.type), notes=notes)


def _led(part: Part) -> PartDescription:
    model = part.model or part.text
    return PartDescription(model, model, _words(part.attrs.get("size")), polarity=POLARITY["led"])


def _switch(part: Part) -> PartDescription:
    """A switch as it is bought: its form, the positions of a toggle with off positions, and
    how many positions a rotary has."""
    form = form_of(part)
    function = part.attrs.get("function")
    what = "rotary switch" if form.throw_count > 2 else "toggle switch"
    shown = " ".join(filter(None, (part.attrs["form"], function)))
    return PartDescription(shown, f"{shown} {what}",
                           _words(f"{form.positions} positions", part.attrs.get("mount")))


def _hardware(part: Part) -> PartDescription:
    return PartDescription(part.text, part.text)


_DESCRIBERS: Mapping[str, Callable[[Part], PartDescription]] = MappingProxyType(
    {
        "resistor": _resistor,
        "capacitor": _capacitor,
        "inductor": _inductor,
        "pot": _pot,
        "trimmer": _trimmer,
        "diode": _device,
        "led": _led,
        "bjt": _device,
        "jfet": _device,
        "opamp": _device,
        "pump": _device,
        "switch": _switch,
        "hardware": _hardware,
    }
)


def describe(part: Part) -> PartDescription:
    """How ``part`` is written, bought and recognised; an unknown type by its text alone."""
    return _DESCRIBERS.get(part.type, _hardware)(part)
