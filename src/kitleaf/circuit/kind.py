"""What a stage kind is: its roles, options, wiring into the engine, test points and drawing."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, ClassVar

from kitleaf.circuit.drawing import Sheet
from kitleaf.circuit.parts import Part
from kitleaf.errors import SourceSpan
from kitleaf.guide.model import Entry
from kitleaf.guide.slug import slug_for

if TYPE_CHECKING:  # the wiring context lives in chain.py, which imports this module
    from kitleaf.circuit.chain import Wiring


@dataclass(frozen=True)
class Role:
    """A job a part does in a stage kind, e.g. the collector resistor."""

    name: str
    part_types: tuple[str, ...]
    required: bool = True
    many: bool = False
    help: str = ""
    # True when each part line also names the nodes it joins after an '@' (the custom kind).
    nodes: bool = False


@dataclass(frozen=True)
class Option:
    """A named choice a stage block can make, e.g. ``bypass: full``."""

    name: str
    choices: tuple[str, ...]
    default: str
    help: str = ""
    # (choice, roles it leaves no place for): a stage making that choice gives none of them.
    excludes: tuple[tuple[str, tuple[str, ...]], ...] = ()

    def excluded(self, choice: str) -> tuple[str, ...]:
        """The roles ``choice`` leaves no place for."""
        return dict(self.excludes).get(choice, ())


@dataclass(frozen=True)
class TestPoint:
    """A node a builder measures with a meter: its label, local node, device and pin."""

    __test__ = False  # not a pytest class

    label: str
    node: str
    device: str = ""
    pin: str = ""


def point_name(device: str, pin: str, node: str) -> str:
    """A test point's name in claims, prose and ``trim:`` lines (after its stage id):
    ``DEVICE.PIN`` for a device's pin, else the stage's own name for the node."""
    if not device:
        return slug_for(node)
    pin = f"pin{pin}" if pin.isdigit() else slug_for(pin)
    return f"{device.lower()}.{pin}"


@dataclass(frozen=True)
class Stage:
    """A stage block resolved against its kind: parts by role and the chosen options."""

    id: str
    kind: str
    title: str
    parts: Mapping[str, tuple[Part, ...]]
    options: Mapping[str, str]
    span: SourceSpan
    # Lines under the kind's own keys (``extra_keys``), kept whole so errors can name the line.
    extra: Mapping[str, tuple[Entry, ...]] = field(default_factory=dict)
    # ``claim:`` and ``allow:`` lines, which every kind takes (kitleaf.specs.claims and .rules).
    claims: tuple[Entry, ...] = ()
    allows: tuple[Entry, ...] = ()
    # The supply rails the stage runs on (kitleaf.circuit.rails.RAILS), and the line saying so.
    rails: str = "main"
    rails_entry: Entry | None = None
    # ``trim:`` lines: a trimmer and the test-point voltage it is set to (circuit/trim.py).
    trims: tuple[Entry, ...] = ()

    def part(self, role: str) -> Part | None:
        """The single part playing ``role``, or None if the optional role is empty."""
        found = self.parts.get(role, ())
        return found[0] if found else None

    def all_parts(self) -> tuple[Part, ...]:
        return tuple(p for group in self.parts.values() for p in group)


class StageKind:
    """Base of every stage kind; subclasses live one per module in ``kitleaf/circuit/stages``.

    A kind is stateless: the methods receive the resolved :class:`Stage`.
    Local node names ``in``, ``out``, ``vcc``, ``vref`` and ``0`` are the stage's connections
    to the chain; every other local node name is private to the stage.
    """

    name: ClassVar[str] = ""
    summary: ClassVar[str] = ""
    roles: ClassVar[tuple[Role, ...]] = ()
    options: ClassVar[tuple[Option, ...]] = ()
    # Free-form keys the kind reads itself (the custom kind's netlist lines); kept in Stage.extra.
    extra_keys: ClassVar[tuple[str, ...]] = ()
    # False for stages off the signal path, such as the power section.
    signal: ClassVar[bool] = True
    # True for a passive tone control, whose corners move with its knob by design: the rules
    # on a stage's corners (coupling-corner, treble-corner) leave it alone.
    shapes_response: ClassVar[bool] = False
    # False for a tone control with no flat band (a tone stack, a blend): its −3 dB points
    # only mark where a hump falls off, so the page and the terminal show its mid scoop, not
    # corners.
    passband: ClassVar[bool] = True
    # True for the stage that provides the supply rail and the mid-rail reference.
    provides_power: ClassVar[bool] = False
    needs_reference: ClassVar[bool] = False
    # True for a stage that clips by design (diodes in or after it, a fuzz pair): its gain is
    # a small-signal figure, true only below the clipping knee, and is shown as such.
    clips: ClassVar[bool] = False
    # A kind built in variants: the role whose part picks the variant, and for each part type
    # that role takes, the roles only that variant has (a stage fills only its own variant's).
    variant_role: ClassVar[str] = ""
    variant_roles: ClassVar[Mapping[str, tuple[str, ...]]] = {}

    def needs_reference_for(self, stage: Stage) -> bool:
        """Whether this stage joins the mid-rail reference (a kind whose variants differ
        answers per stage)."""
        return self.needs_reference

    def build(self, stage: Stage, wiring: Wiring) -> None:
        """Add the stage's elements to the engine circuit through ``wiring``."""
        raise NotImplementedError

    def test_points(self, stage: Stage) -> tuple[TestPoint, ...]:
        """The nodes a builder measures, pin by pin."""
        return ()

    def draw(self, stage: Stage, sheet: Sheet) -> None:
        """Draw the stage on ``sheet`` (the drawing protocol of :mod:`kitleaf.circuit.drawing`)."""
        raise NotImplementedError

    def check(self, stage: Stage) -> None:
        """Extra validation beyond roles and options; raise CircuitError naming the line."""
