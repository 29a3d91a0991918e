"""A sampled signal driven through a circuit by fixed time steps: the small-signal limit, silence,
a steady clipped sine beside the periodic solve, and a step that does not settle."""

import math

import numpy as np
import pytest

from kitleaf.engine import gain_db_at, solve_ac, solve_batch, solve_dc, transient_response
from kitleaf.engine import transient as transient_module
from kitleaf.engine.periodic import periodic_steady_state
from kitleaf.errors import SolveError

from . import large_signal_circuits as ls

RATE = 48_000.0
OVERSAMPLE = 4


def tone(level: float, seconds: float, freq: float = 1000.0) -> np.ndarray:
    t = np.arange(int(round(seconds * RATE))) / RATE
    return level * np.sin(2 * np.pi * freq * t)


def amplitude_at(wave: np.ndarray, freq: float, periods: int = 2) -> float:
    """The sine amplitude at ``freq`` over the last ``periods`` periods, fitted beside an
    offset and a ramp (what is left of the start's slow settling)."""
    n = int(round(periods * RATE / freq))
    t = np.arange(n) / RATE
    basis = np.stack([np.sin(2 * np.pi * freq * t), np.cos(2 * np.pi * freq * t),
                      np.ones(n), t], axis=1)
    coef = np.linalg.lstsq(basis, wave[-n:], rcond=None)[0]
    return float(math.hypot(coef[0], coef[1]))


class TestSmallSignalLimit:
    def test_a_tiny_1khz_sine_comes_out_at_the_ac_gain(self):
        # at a vanishing level a circuit is its linearisation, so the sine's gain is the AC
        # analysis' (the definition of small-signal analysis); the AC gain itself is checked
        # against ngspice in test_ngspice_oracle.py
        c = ls.common_emitter()
        ac_db = gain_db_at(solve_ac(c, solve_dc(c), [1000.0], "VIN"), "out", 1000.0)
        level = 1e-3
        res = transient_response([solve_batch(c)], "VIN", tone(level, 0.012), RATE, OVERSAMPLE,
                                 ["out"])
        assert res.converged.all()
        gain_db = 20 * math.log10(amplitude_at(res.wave("out")[0], 1000.0) / level)
        assert gain_db == pytest.approx(ac_db, abs=0.1)

    def test_silence_in_gives_silence_out(self):
        # the steps start at the DC operating point, which they hold while the input is zero:
        # the output stays below -90 dB of what a firmly picked note gives (the page's full
        # scale sits at the loudest clip's peak)
        c = ls.common_emitter()
        batch = solve_batch(c)
        loud = transient_response([batch], "VIN", tone(0.3, 0.004), RATE, OVERSAMPLE, ["out"])
        quiet = transient_response([batch], "VIN", np.zeros(192), RATE, OVERSAMPLE, ["out"])
        full_scale = np.max(np.abs(loud.wave("out")))
        assert np.max(np.abs(quiet.wave("out"))) < full_scale * 10 ** (-90 / 20)
        assert full_scale > 0.1  # the loud case really played


def test_every_tolerance_sample_is_a_member_stepped_as_if_alone():
    # a batch's samples are members, in order, each from its own operating point with its own
    # parts: played together or one by one, the same waves (common practice, no source)
    batch = solve_batch(ls.common_emitter(), samples=3)
    signal = tone(0.3, 0.002)
    together = transient_response([batch], "VIN", signal, RATE, 2, ["out"]).wave("out")
    assert together.shape == (3, signal.size)
    for i in range(3):
        alone = transient_response([batch.take(np.array([i]))], "VIN", signal, RATE, 2, ["out"])
        np.testing.assert_allclose(together[i], alone.wave("out")[0], rtol=0, atol=1e-12)
    assert np.ptp(together[:, -1]) > 1e-4  # the samples really differ


@pytest.mark.slow
def test_a_steady_clipped_sine_has_the_periodic_solves_thd():
    # the periodic solve (shooting, checked against ngspice in test_periodic.py) and the
    # rendering path step the same equations; once the start has settled the rendered
    # period's THD matches within 5 % (the limit; the output resampling's filter
    # keeps harmonics up to 20 kHz)
    c = ls.diodes_to_ground()
    batch = solve_batch(c)
    periodic = periodic_steady_state([batch], "VIN", [1.0], 1000.0, nodes=["out"])
    expected = float(periodic.distortion("out").thd[0, 0, 0])
    res = transient_response([batch], "VIN", tone(1.0, ls.SETTLE_S), RATE, OVERSAMPLE, ["out"])
    period = res.wave("out")[0, -48:]
    spectrum = np.abs(np.fft.rfft(period))
    thd = math.sqrt(np.sum(spectrum[2:21] ** 2)) / spectrum[1]
    assert expected > 0.05  # clipped hard
    assert thd == pytest.approx(expected, rel=0.05)


class TestFailure:
    def test_a_step_that_does_not_settle_cuts_the_wave_and_names_its_node(self, monkeypatch):
        # one Newton iteration a step cannot settle a moving junction: the variant fails at
        # the first step that moves (the upsampling filter starts the tone a few tenths of
        # a millisecond early), its wave stops there, and the node that moved most in that
        # step is named
        monkeypatch.setattr(transient_module, "_compiled", lambda mem: None)
        monkeypatch.setattr("kitleaf.engine.reduced_steps.MAX_NEWTON", 1)
        monkeypatch.setattr("kitleaf.engine.reduced_steps.RETRY_NEWTON", 1)
        c = ls.diodes_to_ground()
        signal = np.concatenate([np.zeros(48), tone(1.0, 0.001)])
        res = transient_response([solve_batch(c)], "VIN", signal, RATE, OVERSAMPLE, ["out"])
        assert not res.converged[0]
        assert 0.0005 <= res.failed_at[0] <= 0.0011
        assert res.where[0] in {"in", "a", "b", "out"}
        assert np.isnan(res.wave("out")[0, -10:]).all()

    def test_once_every_member_failed_the_steps_stop(self, monkeypatch):
        # the failed members' waves are cut at their failure: stepping on would waste time
        monkeypatch.setattr(transient_module, "_compiled", lambda mem: None)
        monkeypatch.setattr("kitleaf.engine.reduced_steps.MAX_NEWTON", 1)
        monkeypatch.setattr("kitleaf.engine.reduced_steps.RETRY_NEWTON", 1)
        steps = []
        real_step = transient_module.step
        monkeypatch.setattr(transient_module, "step",
                            lambda *args, **kwargs: steps.append(1) or real_step(*args, **kwargs))
        signal = np.concatenate([np.zeros(48), tone(1.0, 1.0)])
        res = transient_response([solve_batch(ls.diodes_to_ground())], "VIN", signal, RATE,
                                 OVERSAMPLE, ["out"])
        assert not res.converged[0] and res.failed_at[0] < 0.002
        assert np.isnan(res.wave("out")[0, -10:]).all()
        assert len(steps) < 0.01 * signal.size * OVERSAMPLE  # not the second of signal

    def test_a_signal_that_is_not_finite_is_refused(self):
        with pytest.raises(SolveError, match="finite"):
            transient_response([solve_batch(ls.diodes_to_ground())], "VIN",
                               np.array([0.0, math.nan]), RATE, OVERSAMPLE, ["out"])
