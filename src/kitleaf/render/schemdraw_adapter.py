"""The one module that uses schemdraw's private internals: a drawing whose elements are placed,
measured and written once per process, for every later sheet.

The same kind draws the same wires and symbols in every guide, so an element asked for again at
the same place is taken from :data:`PLACED` with its boxes and its SVG text instead of being
placed and drawn anew. Nothing here changes a byte of what schemdraw would write: the tests
compare a sheet written here with the same elements written through schemdraw's public
``Drawing.add`` and ``get_imagedata``, and fail loudly when a schemdraw release moves an
internal this module reads (underscored attributes of ``Drawing``, ``Element`` and the SVG
figure). :mod:`kitleaf.render.schematic` uses schemdraw's public elements and this drawing.
"""

from __future__ import annotations

import math
import xml.etree.ElementTree as ET
from collections import ChainMap
from collections.abc import Callable
from dataclasses import dataclass, field

import schemdraw
import schemdraw.elements as elm
from schemdraw.segments import SegmentText
from schemdraw.transform import Transform
from schemdraw.types import BBox
from schemdraw.util import Point as SdPoint

from kitleaf.render.schematic_text import Box, normalise_svg, tidy_svg

NOTHING: Box = (float("inf"), float("inf"), float("-inf"), float("-inf"))  # the box of nothing


@dataclass(frozen=True)
class Placed:
    """A placed element, its boxes in sheet coordinates (without and with its text), and what
    it writes into the SVG, (z-order, tidied text) pairs, once it has been drawn."""

    element: object  # a schemdraw element
    bare: Box
    whole: Box
    drawn: list = field(default_factory=list)


_FLAT_DEFAULTS: dict[type, dict] = {}  # per element class, read once per process
# Placed elements with their boxes (without, with text) by what they were asked to be, kept for
# the life of the process: the same kind draws the same wires and symbols in every guide.
PLACED: dict[str, Placed] = {}
PLACED_LIMIT = 1536  # about 6 kB each, placed and drawn: at most some 9 MB a process


def placed_once(element, place: Callable[[object], Placed]) -> Placed:
    """``element`` placed by ``place``, or an equal element placed earlier in this process."""
    key = placement_key(element)
    placed = PLACED.get(key) if key else None
    if placed is None:
        placed = place(element)
        if key and len(PLACED) < PLACED_LIMIT:
            PLACED[key] = placed
    return placed


def placement_key(element) -> str | None:
    """What fixes an element's placed geometry: its class, the parameters and labels it was
    given, and the sheet's drawing settings (the same for every sheet). None when it would be
    placed relative to the previous element, or when a value has no faithful text form."""
    given = element._userparams
    if "at" not in given and "endpts" not in given:
        return None
    key = repr((type(element).__module__, type(element).__qualname__, sorted(given.items()),
                element._userlabels))
    return None if " at 0x" in key else key


def flatten_defaults(element) -> None:
    """Look the class defaults up in one dict instead of a chain with a link per base class.

    The element's own maps stay live in the chain, so placing it reads the same values.
    """
    flat = _FLAT_DEFAULTS.get(type(element))
    if flat is None:
        flat = _FLAT_DEFAULTS[type(element)] = dict(type(element).defaults)
    element.params = ChainMap(element._userparams, element.elmparams, flat, element._dwgparams)


def settle(element) -> None:
    """Freeze a placed element for the writer: its parameters as one flat dict (schemdraw looks
    them up through a deep chain for every segment) and its transform as a
    :class:`FastTransform`, the same arithmetic without per-step objects. Neither changes once
    the element is placed; the output is the same."""
    element.params = dict(element.params)
    element.transform = FastTransform(element.transform)


def measured(element) -> tuple[Box, Box]:
    """A placed element's box in sheet coordinates without and with its text, in one pass:
    the same numbers as schemdraw's ``get_bbox(transform=True)``."""
    bare = whole = NOTHING
    for segment in element.segments:
        b = segment.xform(element.transform).get_bbox()
        whole = union(whole, b)
        if not isinstance(segment, SegmentText):
            bare = union(bare, b)
    return bare, whole


def union(a: Box, b) -> Box:
    return (min(a[0], b[0]), min(a[1], b[1]), max(a[2], b[2]), max(a[3], b[3]))


def drawn_once(placed: Placed, fig) -> list[tuple[int, str]]:
    """What the element writes on schemdraw's SVG figure ``fig``, as (z-order, tidied SVG
    text), drawn once per process: the writer's output for an element depends on the element
    alone (no clipping, gradients or hatching here), so later sheets reuse it."""
    if placed.drawn:
        return placed.drawn
    extras = _extras(fig)
    start = len(fig.svgelements)
    placed.element._draw(fig)
    if _extras(fig) != extras:
        raise RuntimeError(f"{type(placed.element).__name__}: a sheet draws no clipped, "
                           "gradient or hatched elements (they write shared definitions)")
    placed.drawn.extend((z, tidy_svg(ET.tostring(xml, encoding="unicode")))
                        for z, xml in fig.svgelements[start:])
    del fig.svgelements[start:]
    return placed.drawn


def _extras(fig) -> tuple[int, int, int]:
    """What an element may add to a figure outside its own elements."""
    return len(fig.svgdefs), len(fig.gradients), len(fig.clips)


def svg_document(head: str, parts: list[tuple[int, str]], title: str) -> str:
    """schemdraw's SVG root ``head`` around each element's own tidied text, in z-order as
    schemdraw orders them: the same document schemdraw writes."""
    body = "".join(text for _, text in sorted(parts, key=lambda part: part[0]))
    if not body:
        return normalise_svg(head, title)
    if not head.endswith(" />"):  # the root alone, as an empty element
        raise RuntimeError("schemdraw wrote more than the SVG root around the elements")
    return normalise_svg(f"{head[:-3]}>{body}</svg>", title, tidy=(0, len(head) - 3))


class SheetDrawing(schemdraw.Drawing):
    """A drawing that measures each element once, when placed, and draws each placed element
    once per process (see :func:`placed_once`, :func:`drawn_once`)."""

    _known: Box = NOTHING  # schemdraw's box of nothing

    def __init__(self, **kwargs) -> None:
        super().__init__(**kwargs)
        self._placed: list[Placed] = []

    def place(self, element: elm.Element) -> Placed:
        """``element`` placed as :meth:`add` would, but not added."""
        flatten_defaults(element)
        self._here, self._theta = element._place(self._here, self._theta, **self.dwgparams)
        settle(element)
        return Placed(element, *measured(element))

    def put(self, placed: Placed) -> None:
        self.elements.append(placed.element)
        self._placed.append(placed)
        self._known = union(self._known, placed.whole)

    def get_bbox(self) -> BBox:
        return BBox(*self._known)

    def document(self, title: str) -> str:
        """The sheet's SVG, the same document schemdraw writes."""
        head = self.draw(show=False).getimage("svg").decode("utf-8")
        return svg_document(head, self._parts, title)

    def _drawelements(self) -> None:
        self._parts = [part for placed in self._placed
                       for part in drawn_once(placed, self.fig)]


class FastTransform(Transform):
    """schemdraw's transform with the same float operations in the same order, minus the
    per-step point objects: scale about the local shift, rotate, then shift."""

    def __init__(self, of: Transform) -> None:
        super().__init__(of.theta, of.shift, of.localshift, of.zoom)
        radians = math.radians(of.theta)
        self._cos, self._sin = math.cos(radians), math.sin(radians)

    def transform(self, pt) -> SdPoint:
        x = (pt[0] + self.localshift[0]) * self.zoom[0]
        y = (pt[1] + self.localshift[1]) * self.zoom[1]
        co, so = self._cos, self._sin
        return SdPoint((0 + x * co + y * -so + 0 + self.shift[0],
                        0 + x * so + y * co + 0 + self.shift[1]))
