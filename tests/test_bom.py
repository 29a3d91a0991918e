"""Bill of materials lines: grouping, designator order, build order and the finding aids."""

from __future__ import annotations

import pytest

from bom_kits import GUIDE, TIDEWATER, by_designator, capacitor, device, part, resistor
from kitleaf.bom import PINOUTS, bom_lines, natural_key, pinout_for
from kitleaf.bom.order import BUILD_ORDER
from kitleaf.errors import SourceSpan


def test_same_value_groups_into_one_line_with_natural_designator_order():
    lines = by_designator(bom_lines(TIDEWATER))
    assert lines["R2"].designators == ("R2", "R10")  # R2 before R10
    assert lines["R2"].quantity == 2
    assert lines["R2"].spans == (SourceSpan(GUIDE, 5), SourceSpan(GUIDE, 12))


def test_buying_attributes_split_lines():
    parts = [resistor("R1", 10e3), resistor("R2", 10e3, tol=0.01),
             resistor("R3", 10e3, rating=0.5), resistor("R4", 10e3),
             capacitor("C1", 1e-6), capacitor("C2", 1e-6, "electrolytic"),
             part("VR1", "pot", "A100k", value=1e5, attrs={"taper": "log"}),
             part("VR2", "pot", "B100k", value=1e5, attrs={"taper": "lin"})]
    groups = sorted(line.designators for line in bom_lines(parts))
    assert groups == [("C1",), ("C2",), ("R1", "R4"), ("R2",), ("R3",), ("VR1",), ("VR2",)]


def test_other_attributes_do_not_split_lines():
    parts = [resistor("R1", 10e3, attrs={"note": "near the jack"}), resistor("R2", 10e3)]
    assert [line.designators for line in bom_lines(parts)] == [("R1", "R2")]


def test_hardware_groups_by_description():
    lines = by_designator(bom_lines(TIDEWATER))
    assert lines["J1"].designators == ("J1", "J2")
    assert lines["J3"].value_text == "2.1 mm DC jack, centre negative"


def test_build_order_lowest_parts_first():
    # Resistors, diodes, sockets, small capacitors, transistors and chips, electrolytics,
    # LEDs, pots, jacks, switches, hardware (common practice, no source).
    order = [line.designators[0] for line in bom_lines(TIDEWATER)]
    assert order == ["R1", "R2", "R3", "D1", "U1", "C1", "C2", "Q1", "U1", "C3", "LED1",
                     "VR1", "J1", "J3", "SW1", "MP1"]
    groups = [line.group for line in bom_lines(TIDEWATER)]
    assert groups == sorted(groups, key=[g for g, _ in BUILD_ORDER].index)


def test_build_order_does_not_depend_on_input_order():
    assert bom_lines(TIDEWATER) == bom_lines(reversed(TIDEWATER))


def test_natural_key():
    names = ["R10", "R2", "C1", "R1", "LED1", "R2A", "IC1"]
    assert sorted(names, key=natural_key) == ["C1", "IC1", "LED1", "R1", "R2", "R2A", "R10"]


def test_values_written_the_trade_way():
    lines = by_designator(bom_lines(TIDEWATER))
    shown = {d: (lines[d].value_text, lines[d].value_display) for d in ("R2", "R1", "C1", "C3")}
    assert shown == {
        "R2": ("4k7", "4.7 kΩ"),
        "R1": ("1M", "1 MΩ"),
        "C1": ("100n", "100 nF"),
        "C3": ("100u", "100 µF"),
    }
    assert lines["VR1"].value_text == "100k log"
    assert lines["Q1"].value_text == "2N5088"


def test_resistor_colour_bands():
    # IEC 60062 colour code, from memory: 4.7 kΩ 5 % is yellow violet red gold; 10 kΩ 1 % is
    # brown black black red brown.
    lines = by_designator(bom_lines(TIDEWATER))
    assert [b.colour for b in lines["R2"].bands] == ["yellow", "violet", "red", "gold"]
    assert [b.colour for b in lines["R3"].bands] == ["brown", "black", "black", "red", "brown"]


def test_resistor_without_a_colour_code_gets_a_note_not_an_error():
    (line,) = bom_lines([resistor("R1", 4990.0)])
    assert line.bands == ()
    assert "no colour code" in line.notes[0]


def test_capacitor_code_type_and_rating():
    # IEC 60062 marking code, from memory: 100 nF is 104, 47 nF is 473.
    lines = by_designator(bom_lines(TIDEWATER))
    assert (lines["C1"].code, lines["C2"].code) == ("104", "473")
    assert lines["C1"].attributes == ("film", "5%")
    assert lines["C3"].attributes == ("electrolytic", "20%", "25 V")
    assert lines["C3"].code is None  # electrolytics are printed in plain figures
    assert "printed 100 µF, 25 V" in lines["C3"].notes


def test_polarity_notes():
    lines = by_designator(bom_lines(TIDEWATER))
    assert "negative" in lines["C3"].polarity
    assert "cathode" in lines["D1"].polarity
    assert "anode" in lines["LED1"].polarity
    assert lines["C1"].polarity is None
    assert lines["R1"].polarity is None


def test_pinouts_by_package():
    # TO-92 flat face toward you, leads down: 2N5088 is E B C, BC549C is C B E; TL072 is the
    # usual dual op-amp DIP-8 with V- on pin 4 and V+ on pin 8 (from memory of the data sheets).
    lines = by_designator(bom_lines(TIDEWATER))
    assert lines["Q1"].pinout.pins == ("E", "B", "C")
    assert pinout_for("BC549C").pins == ("C", "B", "E")
    tl072 = [line for line in bom_lines(TIDEWATER) if line.type == "opamp"][0]
    assert tl072.pinout.package == "DIP-8"
    assert (tl072.pinout.pins[3], tl072.pinout.pins[7]) == ("V-", "V+")
    assert any("data sheet" in note for note in tl072.notes)


def test_every_pinout_row_states_its_provenance():
    assert {row.provenance for row in PINOUTS.values()} <= {"datasheet", "from memory"}
    for name in ("2N3904", "2N3906", "2N5088", "2N5089", "BC549C", "2N5457", "J201", "2N5460",
                 "TL072", "NE5532", "LM358", "1N4148"):
        assert name in PINOUTS


def test_maker_suffix_is_ignored_and_unknown_models_get_a_note():
    assert pinout_for("TL072CP") == PINOUTS["TL072"]
    (line,) = bom_lines([device("Q1", "bjt", "XQ77")])
    assert line.pinout is None
    assert "not in kitleaf's pinout table" in line.notes[0]


def test_dip_chips_get_a_socket_line():
    parts = [device("U1", "opamp", "TL072"), device("U2", "opamp", "NE5532"),
             device("U3", "opamp", "XQ77")]
    sockets = [line for line in bom_lines(parts) if line.type == "socket"]
    assert [(s.value_text, s.designators) for s in sockets] == [("DIP-8 socket", ("U1", "U2"))]


@pytest.mark.parametrize("empty", [[], ()])
def test_no_parts_no_lines(empty):
    assert bom_lines(empty) == ()


class TestOpAmpPackages:
    # Common practice, no source: the sections A and B of a dual op-amp are one chip on the BOM.
    def test_two_sections_are_one_chip_and_one_socket(self):
        from kitleaf.bom import bom_lines
        from kitleaf.circuit.parts import Part
        from kitleaf.errors import SourceSpan

        span = SourceSpan("guides/x.md", 3)
        parts = [Part("U1A", "opamp", "TL072", span, model="TL072"),
                 Part("U1B", "opamp", "TL072", span, model="TL072")]
        lines = bom_lines(parts)
        chips = [line for line in lines if line.type == "opamp"]
        sockets = [line for line in lines if line.type == "socket"]
        assert [c.designators for c in chips] == [("U1",)]
        assert [s.designators for s in sockets] == [("U1",)]
