"""The symptom table and the page's embedded ranking data."""

import json
from functools import cache

from kitleaf.faults.symptoms import SYMPTOMS, everywhere_faults, page_data, symptom_rows
from kitleaf.site.guide_output import process_guide

from .kits import GUIDES, readings

REPO_THEME = GUIDES.parent / "themes" / "default"


def rows(name: str):
    return {row.name: row for row in symptom_rows(readings(name))}


class TestSymptomRows:
    def test_an_open_led_resistor_shows_as_the_anode_near_zero(self):
        # an open series resistor leaves the LED's anode at 0 V (common practice, no source)
        anode = rows("brookside-boost")["power.led1.anode"]
        near = next(s for s in anode.symptoms if s.kind == "near 0 V")
        assert any(text.startswith("R10 (4.7 kΩ) open") for text in near.faults)

    def test_a_dead_rail_lists_the_wiring_first(self):
        vcc = rows("heron-opamp-boost")["power.vcc"]
        near = next(s for s in vcc.symptoms if s.kind == "near 0 V")
        assert {t.split(" from ")[0] for t in near.faults[:2]} == {
            "the ground wire", "the supply wire"}

    def test_symptoms_keep_their_order_and_lie_outside_the_good_range(self):
        for name in ("brookside-boost", "heron-opamp-boost", "millrace-jfet-boost"):
            for row in rows(name).values():
                kinds = [s.kind for s in row.symptoms]
                assert kinds == sorted(kinds, key=SYMPTOMS.index)
                for s in row.symptoms:
                    assert s.high < row.good_low or s.low > row.good_high

    def test_a_missing_supply_or_ground_wire_reads_near_zero_at_every_point(self):
        # with no supply or no ground nothing on the board is powered (common practice, no
        # source); the table flags such faults so paper lists them once
        table = symptom_rows(readings("heron-opamp-boost"))
        found = everywhere_faults(table)
        assert {"the ground wire", "the supply wire"} <= {
            t.split(" from ")[0] for t in found["near 0 V"]}
        for kind, texts in found.items():  # each is under that reading at every point
            for row in table:
                assert all(any(t in s.faults or s.more for s in row.symptoms if s.kind == kind)
                           for t in texts), (kind, row.name)

    def test_paper_lists_a_point_s_own_likeliest_causes_and_counts_the_rest(self):
        vcc = rows("heron-opamp-boost")["power.vcc"]
        near = next(s for s in vcc.symptoms if s.kind == "near 0 V")
        printed = near.printed(1)
        assert sum(printed) <= 1
        for text, shown, wide in zip(near.faults, printed, near.everywhere, strict=True):
            assert not (shown and wide), text
        assert near.unprinted(1) == near.own - sum(printed)
        assert near.own == sum(not w for w in near.everywhere) + near.more

    def test_a_good_build_reads_inside_its_own_range(self):
        r = readings("brookside-boost")
        for p, row in enumerate(symptom_rows(r)):
            assert row.good_low <= r.centre[0, p, 1] <= row.good_high


@cache
def heron_page() -> str:
    out = process_guide(GUIDES / "heron-opamp-boost.md", [REPO_THEME])
    return dict(out.files)["heron-opamp-boost/index.html"].decode()


class TestOnThePage:
    def test_the_table_is_on_the_page_and_the_form_waits_for_javascript(self):
        html = heron_page()
        assert '<section class="symptoms" id="symptoms">' in html
        assert html.count('<ol class="causes">') >= 7
        assert '<form class="pinpoint" id="pinpoint" hidden>' in html

    def test_faults_of_every_point_are_listed_once_for_paper(self):
        html = heron_page()
        intro = html[html.index('<div class="how print-only everywhere">'):]
        intro = intro[:intro.index("</div>")]
        assert "near 0 V everywhere:" in intro and "the ground wire" in intro
        table = html[html.index('<table class="symptom-table">'):]
        table = table[:table.index("</table>")]
        # in the table each wire fault is still there for the screen, hidden on paper
        assert table.count('<li class="screen-only">the ground wire') == table.count(
            "the ground wire") > 1

    def test_the_embedded_data_is_the_readings_and_nothing_is_fetched(self):
        html = heron_page()
        start = html.index('<script type="application/json" id="pinpoint-data">')
        body = html[html.index(">", start) + 1: html.index("</script>", start)]
        assert json.loads(body) == json.loads(json.dumps(page_data(readings(
            "heron-opamp-boost"))))
        assert "http://" not in html and "https://" not in html
        assert '<script src="../static/pinpoint.js" defer></script>' in html
