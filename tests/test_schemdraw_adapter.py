"""The one module that reads schemdraw's internals writes what schemdraw's public API writes,
and says so loudly when a schemdraw release moves an internal it reads."""

from __future__ import annotations

import pytest
import schemdraw
import schemdraw.elements as elm

from kitleaf.render import schemdraw_adapter as adapter
from kitleaf.render.schematic import FONT, FONT_SIZE
from kitleaf.render.schematic_text import normalise_svg

CONFIG = {"unit": 3, "fontsize": FONT_SIZE, "font": FONT, "lw": 1.4, "margin": 0.4,
          "color": "black"}
MOVED = ("schemdraw {version} no longer has {name}, which render/schemdraw_adapter.py reads: "
         "adapt that module (and the version pin in pyproject.toml)")


def elements() -> list:
    """One of each kind of element the sheets draw, placed as the sheet places them."""
    return [
        elm.Resistor().endpoints((0.0, 0.0), (3.0, 0.0)),
        elm.Capacitor(polar=True).endpoints((3.0, 0.0), (3.0, -3.0)),
        elm.Diode().endpoints((0.0, -3.0), (3.0, -3.0)),
        elm.Potentiometer().endpoints((6.0, -3.0), (6.0, 0.0)).flip(),
        elm.Line().endpoints((3.0, 0.0), (6.0, 0.0)),
        elm.BjtNpn(circle=True).theta(0).anchor("base").at((8.0, 0.0)),
        elm.Opamp(leads=True).flip().theta(0).anchor("in2").at((8.0, -5.0)),
        elm.Dot(radius=0.09).theta(0).at((3.0, 0.0)),
        elm.Dot(open=True, radius=0.12).theta(0).at((0.0, 0.0)),
        elm.Ground(lead=False).theta(0).at((3.0, -3.0)),
        elm.Vdd(lead=False).theta(0).at((6.0, 1.0)),
        elm.Rect(corner1=(0, 0), corner2=(2.0, 1.0)).theta(0).at((10.0, 2.0)),
        elm.Label().theta(0).at((1.5, 0.5)).label("R1\n10k", halign="center",
                                                  valign="bottom", fontsize=FONT_SIZE),
    ]


def through_the_adapter() -> str:
    drawing = adapter.SheetDrawing(canvas="svg", show=False)
    drawing.config(**CONFIG)
    for element in elements():
        drawing.put(adapter.placed_once(element, drawing.place))
    return drawing.document("probe")


def through_the_public_api() -> str:
    drawing = schemdraw.Drawing(canvas="svg", show=False)
    drawing.config(**CONFIG)
    for element in elements():
        drawing.add(element)
    return normalise_svg(drawing.get_imagedata("svg").decode("utf-8"), "probe")


@pytest.mark.parametrize("name", ["_place", "_draw", "_userparams", "_userlabels", "_dwgparams",
                                  "elmparams", "segments"])
def test_the_element_internals_it_reads_are_there(name):
    element = elm.Resistor().endpoints((0.0, 0.0), (1.0, 0.0))
    assert hasattr(element, name), MOVED.format(version=schemdraw.__version__,
                                                name=f"Element.{name}")


@pytest.mark.parametrize("name", ["_here", "_theta", "_drawelements", "dwgparams", "elements"])
def test_the_drawing_internals_it_reads_are_there(name):
    drawing = schemdraw.Drawing(canvas="svg", show=False)
    assert hasattr(drawing, name), MOVED.format(version=schemdraw.__version__,
                                                name=f"Drawing.{name}")


def test_it_writes_the_bytes_schemdraw_writes(monkeypatch):
    # Placed afresh, then reused from the process-wide table: both as schemdraw's own writer.
    public = through_the_public_api()
    monkeypatch.setattr(adapter, "PLACED", {})
    assert through_the_adapter() == public, MOVED.format(version=schemdraw.__version__,
                                                         name="the same drawing")
    assert len(adapter.PLACED) == len(elements())
    assert through_the_adapter() == public
