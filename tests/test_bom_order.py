"""Batch orders, CSV and text output, and rating warnings of the bill of materials."""

from __future__ import annotations

import csv
import io

import pytest

from bom_kits import MILLRACE, TIDEWATER, by_designator, capacitor, resistor
from kitleaf.bom import batch_order, bom_csv, bom_lines, bom_text, order_csv, rating_warnings
from kitleaf.errors import KitleafError
from kitleaf.specs.ratings import Stress


def order_by_value(order):
    return {(line.type, line.value_text, line.attributes): line for line in order}


def test_batch_merges_the_same_part_across_guides():
    order = order_by_value(batch_order([bom_lines(TIDEWATER), bom_lines(MILLRACE)], kits=3))
    r4k7 = order[("resistor", "4k7", ("5%",))]
    assert (r4k7.per_kit, r4k7.needed, r4k7.spares, r4k7.quantity) == (3, 9, 0, 9)
    jacks = order[("hardware", "6.35 mm mono jack", ())]
    assert jacks.needed == 12
    q = order[("bjt", "2N5088", ())]
    assert q.needed == 6


def test_batch_keeps_different_parts_apart():
    order = order_by_value(batch_order([bom_lines(TIDEWATER), bom_lines(MILLRACE)], kits=1))
    assert order[("resistor", "10k", ("1%",))].needed == 1
    assert order[("resistor", "100k", ("5%",))].needed == 1


@pytest.mark.parametrize(
    ("needed_per_kit", "kits", "spares", "expected_spares"),
    [
        (1, 1, 0.10, 1),  # rounded up per line
        (2, 5, 0.10, 1),  # 10 % of 10 is exactly 1
        (1, 30, 0.10, 3),
        (1, 3, 0.10, 1),  # 0.3 of a part is one spare
        (3, 100, 0.07, 21),  # not 22: 300 x 0.07 is 21.000000000000004 in floats
        (4, 2, 0.0, 0),
    ],
)
def test_spares_round_up_per_line(needed_per_kit, kits, spares, expected_spares):
    parts = [resistor(f"R{i}", 4700.0) for i in range(1, needed_per_kit + 1)]
    (line,) = batch_order([bom_lines(parts)], kits=kits, spares=spares)
    assert line.spares == expected_spares
    assert line.quantity == needed_per_kit * kits + expected_spares


@pytest.mark.parametrize(("kits", "spares"), [(0, 0.1), (-2, 0.1), (1.5, 0.1), (2, -0.1)])
def test_batch_refuses_bad_counts(kits, spares):
    with pytest.raises(KitleafError):
        batch_order([bom_lines(MILLRACE)], kits=kits, spares=spares)


def test_batch_order_is_in_build_order_and_deterministic():
    boms = [bom_lines(TIDEWATER), bom_lines(MILLRACE)]
    order = batch_order(boms, kits=2, spares=0.1)
    ranks = [line.rank for line in order]
    assert ranks == sorted(ranks)
    assert order == batch_order(list(reversed(boms)), kits=2, spares=0.1)
    resistors = [line.value_text for line in order if line.type == "resistor"]
    assert resistors == ["4k7", "10k", "100k", "1M"]  # by value within a group


def test_bom_csv_rows():
    rows = list(csv.reader(io.StringIO(bom_csv(bom_lines(TIDEWATER)))))
    assert rows[0] == ["designators", "quantity", "value", "value_si", "type", "attributes",
                       "marking"]
    by_first = {row[0].split()[0]: row for row in rows[1:]}
    assert by_first["R2"] == ["R2 R10", "2", "4k7", "4.7 kΩ", "resistor", "5%",
                              "yellow violet red gold"]
    assert by_first["C1"] == ["C1", "1", "100n", "100 nF", "capacitor", "film; 5%", "104"]
    assert by_first["D1"][6] == "DO-35, band = cathode"
    assert by_first["J3"][2] == "2.1 mm DC jack, centre negative"  # quoted, comma kept
    assert len(rows) == 1 + len(bom_lines(TIDEWATER))


def test_outputs_are_byte_identical_for_the_same_parts():
    first = bom_lines(TIDEWATER)
    again = bom_lines(list(reversed(TIDEWATER)))
    assert bom_csv(first) == bom_csv(again)
    assert bom_text(first) == bom_text(again)
    assert "\r" not in bom_csv(first)
    order = batch_order([first], kits=2, spares=0.1)
    assert order_csv(order).splitlines()[0].startswith("quantity,needed,spares,per_kit")


def test_bom_text_has_a_heading_per_group():
    text = bom_text(bom_lines(TIDEWATER))
    headings = [line for line in text.splitlines() if line and not line.startswith(" ")]
    assert headings[:3] == ["Resistors", "Diodes", "IC sockets"]


def stressed(stresses, parts=MILLRACE):
    stresses = {designator: Stress(value) for designator, value in stresses.items()}
    lines = rating_warnings(bom_lines(parts), stresses)
    return {w.designator: w for line in lines for w in line.warnings}


def test_capacitor_over_80_percent_of_its_rating_warns():
    # 25 V part: 20 V is exactly 80 % and passes, 20.5 V does not (common practice, no source).
    assert stressed({"C2": 20.0}) == {}
    warning = stressed({"C2": 20.5})["C2"]
    assert "over 80% of its 25 V rating" in warning.message
    assert "use 35 V or more" in warning.message
    assert warning.span.path.endswith("fernbrook-tidewater-boost.md")


def test_resistor_over_half_its_power_rating_warns():
    # R2 of another value: a 100 R unrated would share R1's line, bought at R1's 1/4 W.
    parts = [resistor("R1", 100.0, rating=0.25), resistor("R2", 220.0)]
    assert stressed({"R1": 0.125}, parts) == {}
    found = stressed({"R1": 0.2, "R2": 0.2}, parts)
    assert "over 50% of its 1/4 W rating; use 1/2 W or more" in found["R1"].message
    assert "assumed" in found["R2"].message  # no rating stated: checked against 1/4 W


def test_negative_stress_counts_by_magnitude_and_unknown_designators_are_ignored():
    assert "C2" in stressed({"C2": -24.0, "RLOAD": 5.0})


def test_polarised_capacitor_without_rating_is_flagged():
    parts = [capacitor("C1", 10e-6, "electrolytic"), capacitor("C2", 100e-9)]
    found = stressed({"C1": 4.5, "C2": 4.5}, parts)
    assert set(found) == {"C1"}
    assert "states no rating; use 6.3 V or more" in found["C1"].message


def test_rating_warnings_is_pure():
    lines = bom_lines(MILLRACE)
    rating_warnings(lines, {"C2": Stress(24.0)})
    assert all(line.warnings == () for line in lines)
    assert str(stressed({"C2": 24.0})["C2"]).count("warning: C2 sees 24 V") == 1


def test_warnings_reach_the_text_output():
    lines = rating_warnings(bom_lines(MILLRACE), {"C2": Stress(24.0, "knobs at half way")})
    assert "warning: C2 sees 24 V (knobs at half way)" in bom_text(lines)
    assert by_designator(lines)["C2"].warnings[0].designator == "C2"


def test_a_usual_rating_written_out_is_the_same_part_to_buy():
    # "100p c0g 5%" in one kit, "100p c0g 5% 50 V" in another: 50 V is what an unrated small
    # ceramic is bought at, and 1/4 W what an unrated resistor is (common practice, no source).
    plain = [capacitor("C1", 100e-12, "c0g"), resistor("R1", 4700.0)]
    written = [capacitor("C7", 100e-12, "c0g", rating=50.0), resistor("R7", 4700.0, rating=0.25)]
    order = batch_order([bom_lines(plain), bom_lines(written)], kits=2)
    assert len(order) == 2
    assert {line.needed for line in order} == {4}
    cap = next(line for line in order if line.type == "capacitor")
    assert cap.attributes == ("c0g", "5%", "50 V")  # the line that says what is bought
    (one_guide,) = [line for line in bom_lines(plain[:1] + written[:1])]
    assert one_guide.designators == ("C1", "C7")


def test_another_rating_stays_its_own_line():
    plain = [capacitor("C1", 100e-12, "c0g"), resistor("R1", 4700.0)]
    other = [capacitor("C7", 100e-12, "c0g", rating=100.0), resistor("R7", 4700.0, rating=0.5)]
    assert len(batch_order([bom_lines(plain), bom_lines(other)], kits=1)) == 4
