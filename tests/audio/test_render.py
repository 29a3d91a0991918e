"""Clips played through a kit: the settings the specs solved are reused, a clip is the output
jack's voltage, a kit's THD is the large-signal figures', and a failed solve names its stage."""

from __future__ import annotations

import math
from functools import cache
from pathlib import Path

import numpy as np
import pytest

from kitleaf.audio import render
from kitleaf.audio.clips import clip_plan
from kitleaf.audio.encode import RATE
from kitleaf.audio.oversampling import PROBE_HZ, folded_db, oversampling
from kitleaf.audio.phrase import PHRASE_PEAK_V
from kitleaf.audio.render import render_clips, stage_of, state_at
from kitleaf.circuit.build import build_circuit
from kitleaf.circuit.chain import OUTPUT, SOURCE
from kitleaf.engine import transient
from kitleaf.guide import parse_guide
from kitleaf.specs.derive import derive_specs, solve_kit

GUIDES = Path(__file__).resolve().parents[2] / "guides"


@cache
def solved(name: str):
    guide = parse_guide(GUIDES / f"{name}.md")
    kit = build_circuit(guide)
    return guide, kit, solve_kit(guide, kit)


def tone(level: float, seconds: float, freq: float = 1000.0) -> np.ndarray:
    return level * np.sin(2 * np.pi * freq * np.arange(int(round(seconds * RATE))) / RATE)


def plan_of(kit):
    return clip_plan([(k.name, k.designator) for k in kit.knobs])


def test_every_clip_setting_is_a_state_the_specs_already_solved():
    _, kit, kit_solved = solved("alder-drive")
    known = [kit_solved.base, *(s for sweep in kit_solved.sweeps.values() for s in sweep)]
    for setting in plan_of(kit).settings:
        state = state_at(kit_solved, setting.position_map)
        assert any(state is s for s in known)
        assert all(state.positions[d] == p for d, p in setting.positions)


def test_a_clip_is_the_output_jacks_voltage_at_its_setting():
    # the level knob at 0 % turns the output down to its end leg's resistance, at 100 % up:
    # the clips keep that difference (a potentiometer divider, common practice, no source)
    _, kit, kit_solved = solved("brookside-boost")
    rendered = render_clips(kit_solved, plan_of(kit).settings, tone(0.01, 0.004))
    assert [r.setting.name for r in rendered] == ["all-half", "level-0", "level-100"]
    peaks = {r.setting.name: float(np.max(np.abs(r.volts))) for r in rendered}
    assert peaks["level-0"] < 0.01 * peaks["level-100"]
    assert peaks["level-0"] < peaks["all-half"] < peaks["level-100"]


def test_a_failed_solve_gives_no_clip_and_names_its_stage_and_time(monkeypatch):
    # one Newton iteration a step cannot follow a moving junction (see the engine's own test)
    monkeypatch.setattr(transient, "_compiled", lambda mem: None)
    monkeypatch.setattr("kitleaf.engine.reduced_steps.MAX_NEWTON", 1)
    monkeypatch.setattr("kitleaf.engine.reduced_steps.RETRY_NEWTON", 1)
    _, kit, kit_solved = solved("brookside-boost")
    rendered = render_clips(kit_solved, plan_of(kit).settings[:1], tone(0.3, 0.002))
    assert rendered[0].volts is None
    assert rendered[0].stage in {s.id for s in kit.stages}
    assert rendered[0].reason.startswith(f"the time-domain solve of stage '{rendered[0].stage}' "
                                         "did not settle 0.00 s into the phrase (at node ")


def test_an_engine_error_gives_every_setting_the_reason(monkeypatch):
    def refuse(*args, **kwargs):
        raise render.KitleafError("the circuit cannot be rendered")

    monkeypatch.setattr(render, "transient_response", refuse)
    _, kit, kit_solved = solved("brookside-boost")
    rendered = render_clips(kit_solved, plan_of(kit).settings, tone(0.3, 0.001))
    assert {r.reason for r in rendered} == {"the circuit cannot be rendered"}


def test_what_is_not_a_harmonic_is_summed_against_the_fundamental():
    # a pure tone has nothing else (the window's side lobes sit at -92 dB: Harris, Proc.
    # IEEE 66(1), 1978); a tone 50 dB down between two harmonics is found at -50 dB, and a
    # harmonic of any size is not counted
    t = np.arange(int(0.1 * RATE)) / RATE
    pure = np.sin(2 * np.pi * PROBE_HZ * t)
    assert folded_db(pure, PROBE_HZ) < -85.0
    between = pure + 10 ** (-50 / 20) * np.sin(2 * np.pi * 2.5 * PROBE_HZ * t)
    assert folded_db(between, PROBE_HZ) == pytest.approx(-50.0, abs=0.2)
    harmonic = pure + 0.3 * np.sin(2 * np.pi * 3 * PROBE_HZ * t)
    assert folded_db(harmonic, PROBE_HZ) < -85.0


def test_a_node_belongs_to_the_stage_its_name_starts_with():
    _, kit, _ = solved("alder-drive")
    signal = [s.id for s in kit.signal_stages]
    assert stage_of(kit, "input") == signal[0] and stage_of(kit, OUTPUT) == signal[-1]
    assert stage_of(kit, f"{signal[1]}.out") == signal[1]
    transistor = next(p.designator for p in kit.signal_stages[0].all_parts()
                      if p.designator.startswith("Q"))
    assert stage_of(kit, f"{transistor}:c") == signal[0]
    assert stage_of(kit, "src.l") == "" and stage_of(kit, "vcc") == ""


@pytest.mark.slow
def test_a_sine_through_the_kit_has_the_large_signal_thd():
    # the large-signal figures come from the periodic solve (checked against ngspice in
    # tests/engine/test_ngspice_tran.py); a 1 kHz sine rendered through the preview path
    # at each of the three playing levels (one variant each), once settled, has their THD
    # within 5 % (the output's 48 kHz rate keeps harmonics up to the 23rd; the rest are far
    # below)
    guide, kit, kit_solved = solved("alder-drive")
    points = derive_specs(guide, kit, kit_solved).drive.settings[0].points
    batch = kit_solved.base.nominal.batch.system
    signals = np.stack([tone(p.level, 0.25) for p in points])
    [factor] = oversampling([batch], SOURCE, OUTPUT)
    result = transient.transient_response([batch] * len(points), SOURCE, signals, RATE,
                                          factor, [OUTPUT])
    assert result.converged.all()
    for point, wave in zip(points, result.wave(OUTPUT), strict=True):
        spectrum = np.abs(np.fft.rfft(wave[-48 * 4:]))  # four periods of 48 samples
        harmonics = spectrum[4:4 * 24:4]
        thd = math.sqrt(np.sum(harmonics[1:] ** 2)) / harmonics[0]
        assert thd == pytest.approx(point.thd, rel=0.05), point.level


@pytest.mark.slow
def test_each_setting_is_stepped_finely_enough_to_fold_back_less_than_60_db():
    # the limit: what the steps fold back into the band stays 60 dB below the
    # output. The hardest-clipping demo setting, at the factor the probe chose for it, played
    # a 997 Hz sine at the phrase's peak five times as long as the probe (finer bins)
    _, kit, kit_solved = solved("alder-drive")
    batch = state_at(kit_solved, {kit.knobs[0].designator: 1.0}).nominal.batch.system
    [factor] = oversampling([batch], SOURCE, OUTPUT)
    assert factor == 8  # a hard diode clipper; the boosts pass at two (below)
    wave = transient.transient_response([batch], SOURCE, tone(PHRASE_PEAK_V, 0.5, PROBE_HZ),
                                        RATE, factor, [OUTPUT]).wave(OUTPUT)[0]
    assert folded_db(wave, PROBE_HZ) < -60.0
    _, boost, boost_solved = solved("brookside-boost")
    assert oversampling([boost_solved.base.nominal.batch.system], SOURCE, OUTPUT) == [2]
