"""Large-signal figures in the specs: the Alder Drive demo kit (a diode clipper by design),
its JSON, claim names and the design rules that read the figures."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from tests.stages.kits import POWER, gain_at, guide_text, stage_block

from kitleaf.circuit.build import build_circuit
from kitleaf.circuit.chain import OUTPUT, SOURCE
from kitleaf.engine import reduced_steps, stepper
from kitleaf.engine.periodic import periodic_steady_state
from kitleaf.errors import GuideError, SpecError
from kitleaf.guide.parse import parse_guide
from kitleaf.render.plot_drive import BAND_OPACITY, render_drive_svg
from kitleaf.render.plot_specs import drive_picture, wave_picture
from kitleaf.specs.claims import verify
from kitleaf.specs.derive import SolvedKit, derive_specs
from kitleaf.specs.drive_band import BAND_SAMPLES, SETTING_SAMPLES
from kitleaf.specs.export import specs_to_json
from kitleaf.specs.lookup import computed_values
from rules_kits import GUIDE

ALDER = Path(__file__).resolve().parents[1] / "guides" / "alder-drive.md"
ASKING = GUIDE.replace("supply: 9 V\n", "supply: 9 V\nlarge-signal: yes\n", 1)


def solved(text: str, path: str = "alder.md"):
    guide = parse_guide(path, text)
    kit = build_circuit(guide)
    return guide, kit, derive_specs(guide, kit)


def verify_claim(alder, line: str):
    """The Alder Drive's own claim line replaced by ``line``, checked on its solved specs
    (a claim does not change the circuit)."""
    _, _, specs = alder
    guide = parse_guide("alder.md", ALDER.read_text().replace("claim: thd.300mv above 10 %",
                                                               line))
    return verify(guide, build_circuit(guide), specs)


@pytest.fixture(scope="module")
def alder():
    return solved(ALDER.read_text())


class TestAlderDrive:
    def test_every_knob_setting_is_computed(self, alder):
        _, kit, specs = alder
        settings = specs.drive.settings
        assert len(settings) == 1 + 5 * len(kit.knobs)  # knobs at half, then each knob swept
        assert all(not s.error for s in settings)

    def test_the_diodes_hold_the_output_within_a_forward_drop(self, alder):
        # two silicon diodes to ground clip each half of the wave near their forward drop,
        # 0.55 to 0.8 V at these currents (common practice, no source)
        _, _, specs = alder
        base = specs.stage("clipper").drive.base
        (up, up_part), (down, down_part) = base.swing_up, base.swing_down
        assert 0.45 <= up <= 0.8 and 0.45 <= down <= 0.8
        assert "conducts" in up_part and "conducts" in down_part

    def test_a_drive_is_clean_only_below_a_playing_level(self, alder):
        # the guide claims above 10 % THD at 300 mV; the 1 % limit must then lie below it
        _, _, specs = alder
        base = specs.drive.base
        assert base.clean_limit < base.driven_limit <= 0.3
        thd = {p.level: p.thd for p in base.points}
        assert thd[0.1] < thd[0.3] < thd[1.0]

    def test_the_json_carries_the_drive_object(self, alder):
        guide, kit, specs = alder
        data = specs_to_json(specs)
        assert data["schema"] == "kitleaf-specs/1"  # keys only added: drive beside the headroom
        drive = data["drive"]
        assert drive["freq_hz"] == 1000.0 and len(drive["settings"]) == len(specs.drive.settings)
        first = drive["settings"][0]
        assert first["computed"] and first["knobs"] == {}
        assert [p["level_v_peak"] for p in first["at_levels"]] == [0.1, 0.3, 1.0]
        assert len(first["at_levels"][0]["harmonics_v_peak"]) == 5


# An op-amp drive whose Clip switch picks silicon diodes, nothing (the op-amp's own rails)
# or red LEDs across its feedback; invented for these tests.
SWITCHED = guide_text(POWER, stage_block(
    "drive", "opamp-soft-clip", "input-cap: C1 100n film", "bias: R1 1M", "opamp: U1A TL072",
    "feedback: R2 4k7", "gain: VR1 A500k", "clip-positive: D1 1N4148",
    "clip-negative: D2 1N4148", "clip-switch: S1 SPDT on-off-on", "alt-positive: LED1 red",
    "alt-negative: LED2 red", "gain-resistor: R3 4k7", "gain-cap: C2 4u7 electrolytic 25V",
    "output-cap: C3 1u film", "pulldown: R4 1M"), source="pickup",
    lines=("large-signal: yes", "knob: Gain = VR1", "switch: Clip = S1: silicon, open, LEDs"))


@pytest.fixture(scope="module")
def switched():
    return solved(SWITCHED, "switched.md")


class TestBands:
    def test_every_setting_has_the_band_of_its_own_builds(self, alder):
        # each setting's band is the 5th to 95th percentile of its own first tolerance
        # builds (numpy's percentile), solved again here one setting at a time
        guide, kit, specs = alder
        settings = specs.drive.settings
        assert settings[0].band.samples == BAND_SAMPLES
        for s in settings[1:]:  # a knob at half way is the kit at half way
            at_half = s.positions[0][1] == 0.5
            assert s.band.samples == (BAND_SAMPLES if at_half else SETTING_SAMPLES)
        solved = SolvedKit(kit)
        state = solved.sweeps["VR1"][-1]  # Drive at 100 %, the last of its sweep
        shown = next(s for s in settings if s.positions == (("Drive", 1.0),))
        batch = state.samples.batch.system.take(np.arange(SETTING_SAMPLES))
        d = periodic_steady_state([batch], SOURCE, specs.drive.levels, specs.drive.freq,
                                  nodes=[OUTPUT]).distortion(OUTPUT)
        for own, low, high in ((d.thd, shown.band.thd_low, shown.band.thd_high),
                               (d.peak, shown.band.peak_low, shown.band.peak_high)):
            edges = np.percentile(own[0], [5.0, 95.0], axis=1)
            assert np.allclose(edges, [low, high], rtol=1e-6)

    def test_each_line_is_drawn_with_its_band(self, alder):
        _, _, specs = alder
        picture = drive_picture(specs)
        for panel in picture.panels:
            assert len(panel.bands) == len(panel.lines) and all(panel.bands)
        svg = render_drive_svg(picture)
        lines = sum(len(p.lines) for p in picture.panels)
        assert svg.count(f"fill-opacity: {BAND_OPACITY}") == lines
        settings = specs_to_json(specs)["drive"]["settings"]
        assert [s["tolerance"]["samples"] for s in settings] == [
            s.band.samples for s in specs.drive.settings]


class TestSwitches:
    def test_every_switch_position_is_swept(self, switched):
        _, _, specs = switched
        settings = {s.positions: s for s in specs.drive.settings}
        assert len(settings) == 1 + 5 + 3  # at rest, the knob's five steps, each position
        for position in ("silicon", "open", "LEDs"):
            assert not settings[(("Clip", position),)].error

    def test_each_position_clips_on_its_own_parts(self, switched):
        # a red LED drops well over twice a silicon diode's forward voltage (about 1.6-1.8 V
        # against 0.6-0.7 V; common practice, no source): the LEDs let more through before
        # THD reaches 1 %; with nothing across the feedback the op-amp clips at its rails
        _, _, specs = switched
        at = {s.positions: s for s in specs.drive.settings}
        silicon, open_, leds = (at[(("Clip", p),)] for p in ("silicon", "open", "LEDs"))
        assert leds.clean_limit > 1.5 * silicon.clean_limit
        assert "conducts" in silicon.swing_up[1]
        assert "U1A output" in open_.swing_up[1] and "U1A output" in open_.swing_down[1]

    def test_the_json_names_and_picture_carry_the_positions(self, switched):
        guide, kit, specs = switched
        settings = specs_to_json(specs)["drive"]["settings"]
        assert [s["knobs"] for s in settings[-3:]] == [
            {"Clip": "silicon"}, {"Clip": "open"}, {"Clip": "LEDs"}]
        values = computed_values(specs, kit)
        assert {"kit.thd.300mv.clip-leds", "drive.clean-limit.clip-open"} <= set(values)
        panels = drive_picture(specs).panels
        clip = [p for p in panels if p.title.startswith("THD, Clip switch set")]
        assert [label for label, _ in clip[0].lines] == ["Clip: silicon", "Clip: open",
                                                         "Clip: LEDs"]

    def test_a_rule_names_the_switch_setting(self, switched):
        # with nothing across its feedback the op-amp's output meets its rails at a 1 V
        # pickup peak (gain about 50: far past a 9 V supply's swing)
        guide, kit, specs = switched
        found = [f.message for f in verify(guide, kit, specs).findings if f.rule == "opamp-rail"]
        assert len(found) == 1 and "with Clip set to open" in found[0]


class TestClaims:
    def test_a_thd_claim_is_read_as_a_percentage(self, alder):
        guide, kit, specs = alder
        checks = verify(guide, kit, specs)
        assert "kit.thd.300mv" in checks.values
        assert "kit.thd.300mv.drive-100" in checks.values
        assert checks.claims[0].claim.name == "kit.thd.300mv"

    def test_a_clean_claim_on_a_drive_is_broken(self, alder):
        with pytest.raises(SpecError, match="thd.300mv"):
            verify_claim(alder, "claim: thd.300mv below 1 %")

    def test_a_percentage_must_be_written_as_one(self, alder):
        with pytest.raises(SpecError, match="percentage") as caught:
            verify_claim(alder, "claim: thd.300mv above 10 percent")
        assert caught.value.span.line == ALDER.read_text().splitlines().index(
            "claim: thd.300mv above 10 %") + 1


class TestRules:
    def test_a_drive_called_clean_is_found(self, alder):
        _, _, specs = alder
        text = ALDER.read_text().replace("title: Alder Drive", "title: Alder Clean Drive")
        guide = parse_guide("alder.md", text)
        kit = build_circuit(guide)
        found = [f for f in verify(guide, kit, specs).findings if f.rule == "clips-when-clean"]
        assert found and "300 mV" in found[0].message

    def test_a_kit_whose_periodic_solve_fails_says_where(self, monkeypatch):
        # Newton allowed a single iteration settles no clipping step: the figures are not
        # computed, and one finding names the stage, the knob setting and the level
        for module, name in ((stepper, "MAX_NEWTON"), (reduced_steps, "MAX_NEWTON"),
                             (reduced_steps, "RETRY_NEWTON")):
            monkeypatch.setattr(module, name, 1)
        guide, kit, specs = solved(ASKING, "boost.md")
        assert specs.drive.base.error
        found = [f for f in verify(guide, kit, specs).findings if f.rule == "large-signal"]
        assert len(found) == 1
        message = found[0].message
        assert "stage 'boost'" in message and "mV pickup peak" in message
        assert "knobs at half way" in message or "Level at" in message


# The test boost with a small input capacitor, played softly at a tone near the high-pass
# corner it sets
PLAYED = ASKING.replace("large-signal: yes\n", "large-signal: yes\nplaying-levels: 10 mV, 50 mV"
                        "\ntest-tone: 40 Hz\n", 1).replace("input-cap: C1 1u film",
                                                           "input-cap: C1 22n film", 1)


@pytest.fixture(scope="module")
def played():
    return solved(PLAYED, "played.md")


class TestPlayingLevels:
    def test_the_kit_is_played_at_its_own_levels_and_tone(self, played):
        _, kit, specs = played
        drive = specs.drive
        assert drive.freq == 40.0 and [p.level for p in drive.base.points] == [0.01, 0.05]
        assert {0.01, 0.05, 0.3, 1.0} <= set(drive.levels)  # the rules' own levels stay
        # at a small level the fundamental's gain is the AC gain at that tone (the
        # definition of small-signal analysis), the coupling corners' fall included
        ac = abs(gain_at(kit, 40.0, OUTPUT))
        assert abs(gain_at(kit, 1000.0, OUTPUT)) > 1.2 * ac
        assert drive.base.points[0].harmonics[0] / 0.01 == pytest.approx(ac, rel=0.01)

    def test_names_pictures_and_json_follow(self, played):
        guide, kit, specs = played
        values = computed_values(specs, kit)
        assert {"kit.thd.10mv", "kit.peak.50mv"} <= set(values)
        assert specs_to_json(specs)["drive"]["freq_hz"] == 40.0
        svg = render_drive_svg(wave_picture(specs))
        assert "50 ms" in svg and "10 mV pickup peak" in svg  # two periods of 40 Hz

    def test_a_claim_at_a_level_not_played_says_so(self, played):
        guide, kit, specs = played
        text = PLAYED.replace("large-signal: yes", "large-signal: yes\nclaim: thd.300mv below "
                              "1 %", 1)
        with pytest.raises(SpecError, match="300mv is not one of the kit's playing levels"):
            verify(parse_guide("played.md", text), kit, specs)


class TestAsking:
    def test_a_kit_that_does_not_ask_keeps_its_dc_headroom(self):
        _, _, specs = solved(GUIDE, "boost.md")
        assert specs.drive is None and specs.headroom is not None
        data = specs_to_json(specs)
        assert data["drive"] is None and data["headroom_v_peak"] is not None

    def test_a_value_other_than_yes_or_no_is_located(self):
        text = ASKING.replace("large-signal: yes", "large-signal: maybe")
        with pytest.raises(GuideError, match="neither yes nor no") as caught:
            parse_guide("boost.md", text)
        assert caught.value.span.line == text.splitlines().index("large-signal: maybe") + 1
