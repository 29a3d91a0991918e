"""The 1 % and 10 % THD levels (bracketed on the sweep's grid, then solved for) against a
textbook hard clipper's closed form and a dense sweep of a diode clipper, below the sweep
for a drive that clips early, and the tolerance band of the large-signal figures."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.optimize import brentq
from tests.stages.kits import POWER, guide_text, stage_block

from kitleaf.circuit.build import build_circuit
from kitleaf.circuit.chain import OUTPUT, SOURCE
from kitleaf.display import level_text
from kitleaf.engine.periodic import periodic_steady_state
from kitleaf.errors import SpecError
from kitleaf.guide.kit_lines import PLAYING_VOLTS
from kitleaf.guide.parse import parse_guide
from kitleaf.render.environment import make_environment, theme_dirs
from kitleaf.render.plot_specs import drive_picture
from kitleaf.render.specs_text import specs_to_text
from kitleaf.specs import drive_limits
from kitleaf.specs.claims import verify
from kitleaf.specs.derive import SolvedKit, derive_specs
from kitleaf.specs.drive import GRID as LEVELS
from kitleaf.specs.drive_band import BAND_SAMPLES
from kitleaf.specs.drive_limits import first_bracket, refine
from kitleaf.specs.export import specs_to_json
from kitleaf.values import format_value


def hard_clip_thd(level: float, limit: float) -> float:
    """THD of a sine of peak ``level`` clipped at +-``limit``: its fundamental from the
    saturation's describing function, N(A) = (2/pi) (asin(a/A) + (a/A) sqrt(1 - (a/A)^2))
    (Slotine and Li, Applied Nonlinear Control, 1991, section 5.3), the harmonics holding
    the rest of its mean square (Parseval's theorem)."""
    if level <= limit:
        return 0.0
    r, theta = limit / level, math.asin(limit / level)
    b1 = level * (2 / math.pi) * (theta + r * math.sqrt(1 - r * r))
    mean_square = (2 / math.pi) * (level ** 2 * (theta / 2 - math.sin(2 * theta) / 4)
                                   + limit ** 2 * (math.pi / 2 - theta))
    return math.sqrt(max(mean_square - b1 ** 2 / 2, 0.0)) / (b1 / math.sqrt(2))


def crossings(thd_of, levels=LEVELS, thresholds=(0.01, 0.1)) -> tuple[dict, int]:
    """Each threshold's crossing found from the grid ``levels``, and the rounds it took."""
    grid = [thd_of(v) for v in levels]
    rounds = []

    def solve(requests):
        rounds.append(len(requests))
        return [thd_of(level) for _, level in requests]

    firsts = {t: first_bracket(levels, grid, t) for t in thresholds}
    found = refine({t: b for t, b in firsts.items() if isinstance(b, tuple)}, solve)
    return {**{t: b for t, b in firsts.items() if not isinstance(b, tuple)}, **found}, len(
        rounds)


class TestTextbookClipper:
    @pytest.mark.parametrize("limit", [0.05, 0.2, 0.6])
    def test_the_levels_match_the_closed_form(self, limit):
        # the exact levels from the closed form, solved by scipy's own Brent root finder
        found, rounds = crossings(lambda v: hard_clip_thd(v, limit))
        for threshold in (0.01, 0.1):
            exact = brentq(lambda v, t=threshold: hard_clip_thd(v, limit) - t, limit,
                           100 * limit, xtol=1e-12)
            assert found[threshold] == pytest.approx(exact, rel=0.005)
        assert rounds <= drive_limits.MAX_ROUNDS

    def test_the_first_crossing_going_up_is_kept(self):
        # THD that rises past 1 %, falls back and rises again (a stage that clips, then
        # whose clipping a later stage evens out): the first crossing, not a later one
        def bump(v):
            return 0.03 * math.exp(-((math.log(v / 0.2)) ** 2) / 0.05) + 0.02 * (v / 2.0) ** 3

        assert bump(0.3) < 0.01 < bump(2.0)  # the grid sees it fall back and rise again
        found, _ = crossings(bump)
        first = brentq(lambda v: bump(v) - 0.01, 0.1, 0.2, xtol=1e-12)
        assert found[0.01] == pytest.approx(first, rel=0.005)

    def test_a_fuzz_past_100_percent_is_not_capped(self):
        # a THD rising to 300 %: the 10 % crossing is found, and one of 150 % too
        def fuzz(v):
            return 3.0 * (v / 2.0) ** 2

        found, _ = crossings(fuzz, thresholds=(0.1, 1.5))
        assert found[0.1] == pytest.approx(2.0 * math.sqrt(0.1 / 3.0), rel=0.005)
        assert found[1.5] == pytest.approx(2.0 * math.sqrt(0.5), rel=0.005)

    def test_already_there_and_never_there_stay_at_the_grid(self):
        found, rounds = crossings(lambda v: 0.5, thresholds=(0.01, 0.9))
        assert found == {0.01: LEVELS[0], 0.9: None} and rounds == 0

    def test_a_level_that_could_not_be_solved_ends_the_search(self):
        found = refine({"k": first_bracket(LEVELS, [0.001, 0.001, 0.001, 0.02, 0.1, 0.2],
                                           0.01)},
                       lambda requests: [math.nan] * len(requests))
        assert 0.2 <= found["k"] <= 0.3


# A series resistor into two silicon diodes to ground, driven from a low-impedance source:
# the symmetric soft clipper of every drive; invented for these tests.
CLIPPER = guide_text(stage_block("clip", "diode-clipper", "series: R1 4k7",
                                 "clip-positive: D1 1N4148", "clip-negative: D2 1N4148"),
                     source="low-z", lines=("large-signal: yes",))


def assert_dense_sweep_agrees(kit, base, dense: np.ndarray) -> None:
    """The setting's 1 % and 10 % levels against the same periodic solve on the ``dense``
    levels, the first crossing going up read between its neighbours on log scales."""
    batch = SolvedKit(kit).base.nominal.batch.system
    thd = periodic_steady_state([batch], SOURCE, dense, 1000.0,
                                nodes=[OUTPUT]).distortion(OUTPUT).thd[0, :, 0]
    for threshold, level in ((0.01, base.clean_limit), (0.1, base.driven_limit)):
        i = int(np.flatnonzero(thd >= threshold)[0])
        share = math.log(threshold / thd[i - 1]) / math.log(thd[i] / thd[i - 1])
        reference = dense[i - 1] * (dense[i] / dense[i - 1]) ** share
        assert level == pytest.approx(reference, rel=0.005)


@pytest.fixture(scope="module")
def clipper():
    guide = parse_guide("clipper.md", CLIPPER)
    kit = build_circuit(guide)
    return kit, derive_specs(guide, kit)


class TestDiodeClipper:
    def test_the_levels_match_a_dense_sweep(self, clipper):
        # the reference: the same periodic solve on 80 levels a decade from 100 mV to 1 V,
        # the first crossing going up read between its neighbours on log scales
        kit, specs = clipper
        assert_dense_sweep_agrees(kit, specs.drive.base, np.geomspace(0.1, 1.0, 81))

    def test_the_tolerance_band_holds_the_nominal_build(self, clipper):
        # parts drawn evenly either side of their nominal values: where the diodes clip,
        # the nominal build's THD and peak lie inside the 5-95 % spread, and the peak
        # spreads as the diodes' forward drop does (their saturation currents spread,
        # docs/engine.md). Below clipping THD is convex in the spread parts, so the
        # nominal build may sit under most samples there.
        _, specs = clipper
        band, base = specs.drive.band, specs.drive.base
        assert band.samples == BAND_SAMPLES
        clipping = [i for i, thd in enumerate(base.thd) if thd >= 0.01]
        assert clipping == [4, 5]
        for low, high, nominal in ((band.thd_low, band.thd_high, base.thd),
                                   (band.peak_low, band.peak_high, base.peak)):
            assert len(low) == len(high) == len(LEVELS)
            for i in clipping:
                assert low[i] <= nominal[i] <= high[i]
        assert band.peak_high[-1] > 1.02 * band.peak_low[-1]

    def test_the_band_is_in_the_json_and_the_picture(self, clipper):
        _, specs = clipper
        tolerance = specs_to_json(specs)["drive"]["tolerance"]
        assert tolerance["samples"] == BAND_SAMPLES
        assert tolerance["thd_percent"]["low"][-1] == pytest.approx(
            specs.drive.band.thd_low[-1] * 100, rel=1e-3)
        thd, peak = drive_picture(specs).panels
        assert thd.bands == ((specs.drive.band.thd_low, specs.drive.band.thd_high),)
        assert peak.bands == ((specs.drive.band.peak_low, specs.drive.band.peak_high),)


def early_clipper(gain_resistor: str) -> str:
    """An op-amp gain stage of 1 + 100k / ``gain_resistor`` into the diode clipper: a drive
    that clips at the softest levels; invented for these tests."""
    return guide_text(POWER, stage_block(
        "gain", "opamp-non-inverting", "input-cap: C1 100n film", "bias: R1 1M",
        "opamp: U1A TL072", "feedback: R3 100k", f"gain-resistor: R4 {gain_resistor}",
        "gain-cap: C4 100u electrolytic 16V", "output-cap: C2 1u film 63V"),
        stage_block("clip", "diode-clipper", "series: R5 4k7", "clip-positive: D1 1N4148",
                    "clip-negative: D2 1N4148"), source="low-z", lines=("large-signal: yes",))


def solved_specs(text: str):
    guide = parse_guide("early.md", text)
    kit = build_circuit(guide)
    return kit, derive_specs(guide, kit)


class TestBelowTheSweep:
    def test_a_limit_below_the_sweep_is_solved_for(self):
        # a gain of 101 before the diodes: THD is past 10 % at the sweep's lowest level, so
        # both marks are searched for below it; the reference is a dense sweep of the same
        # periodic solve, 60 levels from 1 mV to 30 mV
        kit, specs = solved_specs(early_clipper("1k"))
        base = specs.drive.base
        assert base.thd[0] > 0.1 and base.clean_below is None and base.driven_below is None
        assert_dense_sweep_agrees(kit, base, np.geomspace(0.001, 0.03, 60))
        assert level_text(base.clean_limit, specs.drive.levels) == format_value(
            base.clean_limit, "voltage")  # its own value, not the sweep's lowest level

    def test_a_limit_below_the_softest_level_says_so(self):
        # a gain of 1001: the diodes clip even at a 1 mV pickup peak, the softest level
        # a guide may play; both limits lie below it, and page, terminal and JSON say so
        kit, specs = solved_specs(early_clipper("100R"))
        base = specs.drive.base
        assert base.clean_limit is None and base.driven_limit is None
        assert base.clean_below == base.driven_below == PLAYING_VOLTS[0]
        batch = SolvedKit(kit).base.nominal.batch.system
        at_floor = periodic_steady_state([batch], SOURCE, [PLAYING_VOLTS[0]], 1000.0,
                                         nodes=[OUTPUT]).distortion(OUTPUT).thd[0, 0, 0]
        assert at_floor >= 0.1
        setting = specs_to_json(specs)["drive"]["settings"][0]
        assert setting["clean_limit_v_peak"] is None
        assert setting["clean_limit_below_v_peak"] == setting[
            "driven_limit_below_v_peak"] == PLAYING_VOLTS[0]
        text = specs_to_text(specs)
        assert "clean up to        below 1 mV pickup peak" in text
        assert "driven from        below 1 mV pickup peak" in text
        guide = parse_guide("early.md", early_clipper("100R").replace(
            "large-signal: yes", "large-signal: yes\nclaim: clean-limit above 1 mV"))
        with pytest.raises(SpecError, match="does not reach its mark within the levels solved"):
            verify(guide, kit, specs)
        rows = make_environment(theme_dirs(None)).get_template("_drive_rows.html")
        page = rows.render(sp=specs)
        assert "THD reaches 1 %)</th><td>below 1 mV pickup peak" in page
        assert "THD reaches 10 %)</th><td>below 1 mV pickup peak" in page
