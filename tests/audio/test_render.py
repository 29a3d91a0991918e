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
    result = transient.transient_response([batch] * len(points), SOURCE, signals, RATE,
                                          render.OVERSAMPLE, [OUTPUT])
    assert result.converged.all()
    for point, wave in zip(points, result.wave(OUTPUT), strict=True):
        spectrum = np.abs(np.fft.rfft(wave[-48 * 4:]))  # four periods of 48 samples
        harmonics = spectrum[4:4 * 24:4]
        thd = math.sqrt(np.sum(harmonics[1:] ** 2)) / harmonics[0]
        assert thd == pytest.approx(point.thd, rel=0.05), point.level


@pytest.mark.slow
def test_clipping_folds_back_less_than_60_db_at_the_phrases_level():
    # the limit: what the steps fold back into the band stays 60 dB below the
    # output. A 997 Hz sine at the phrase's peak (its harmonics and their folds fall on
    # different frequencies) through the hardest-clipping demo setting; everything in the
    # band that is not a harmonic, summed, against the fundamental (Blackman-Harris window,
    # its side lobes at -92 dB: Harris, Proc. IEEE 66(1), 1978)
    from scipy.signal.windows import blackmanharris

    _, kit, kit_solved = solved("alder-drive")
    state = state_at(kit_solved, {kit.knobs[0].designator: 1.0})
    freq, seconds = 997.0, 0.5
    result = transient.transient_response([state.nominal.batch.system], SOURCE,
                                          tone(PHRASE_PEAK_V, seconds, freq), RATE,
                                          render.OVERSAMPLE, [OUTPUT])
    settled = result.wave(OUTPUT)[0, int(RATE * seconds / 2):]
    spectrum = np.abs(np.fft.rfft(settled * blackmanharris(settled.size)))
    freqs = np.fft.rfftfreq(settled.size, 1.0 / RATE)
    harmonic = np.zeros(freqs.size, bool)
    for k in range(1, int(RATE / 2 / freq) + 1):
        harmonic |= np.abs(freqs - k * freq) < 25.0
    band = (freqs > 20.0) & (freqs < 20_000.0)
    fundamental = spectrum[np.argmin(np.abs(freqs - freq))]
    folded = math.sqrt(np.sum(spectrum[band & ~harmonic] ** 2))
    assert spectrum[np.argmin(np.abs(freqs - 3 * freq))] > 0.1 * fundamental  # clipping hard
    assert 20 * math.log10(folded / fundamental) < -60.0
