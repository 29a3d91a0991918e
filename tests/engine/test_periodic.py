"""The periodic steady state under a sine drive: textbook waveforms, the small-signal limit,
the op-amp's large-signal limits, and bad drives."""

import math

import numpy as np
import pytest

from kitleaf.engine import (
    Circuit,
    gain_db_at,
    periodic,
    reduced_steps,
    solve_ac,
    solve_batch,
    solve_dc,
    stepper,
)
from kitleaf.engine.harmonics import distortion
from kitleaf.engine.periodic import ROUGH, periodic_steady_state, roughness
from kitleaf.errors import SolveError

from . import large_signal_circuits as ls
from . import reference_circuits as rc


def clipped_sine(points: int, amplitude: float, limit: float) -> np.ndarray:
    t = np.arange(points) / points
    return np.clip(amplitude * np.sin(2 * np.pi * t), -limit, limit)


class TestHarmonics:
    def test_hard_clipped_sine_matches_its_fourier_series(self):
        # A sine of amplitude A clipped at +-a: its fundamental is A N(A), with the
        # saturation's describing function N(A) = (2/pi) (asin(a/A) + (a/A) sqrt(1 - (a/A)^2))
        # (Slotine and Li, Applied Nonlinear Control, 1991, section 5.3, saturation); the
        # harmonics hold the rest of its mean square (Parseval's theorem), which over a
        # quarter period is (2/pi) (A^2 (t/2 - sin(2t)/4) + a^2 (pi/2 - t)), t = asin(a/A).
        amplitude, limit = 1.0, 0.5
        r, theta = limit / amplitude, math.asin(limit / amplitude)
        b1 = amplitude * (2 / math.pi) * (theta + r * math.sqrt(1 - r * r))
        mean_square = (2 / math.pi) * (amplitude ** 2 * (theta / 2 - math.sin(2 * theta) / 4)
                                       + limit ** 2 * (math.pi / 2 - theta))
        thd = math.sqrt(mean_square - b1 ** 2 / 2) / (b1 / math.sqrt(2))
        d = distortion(clipped_sine(65536, amplitude, limit))
        assert float(d.amplitudes[0]) == pytest.approx(b1, rel=1e-6)
        # the sum stops below the grid's Nyquist harmonic; the tail beyond is ~1e-5 of it
        assert float(d.thd) == pytest.approx(thd, rel=1e-4)
        assert float(d.peak_pos) == pytest.approx(limit) and float(d.peak_neg) == pytest.approx(
            limit)
        # a symmetric clip has no even harmonics (half-wave symmetry, Fourier series)
        assert float(d.amplitudes[1]) < 1e-9 and float(d.amplitudes[3]) < 1e-9

    def test_thd_is_not_capped(self):
        # a square wave's THD is sqrt(pi^2/8 - 1) = 48.3 % and a fuzz's exceeds 100 %:
        # a pulse train of 10 % duty has most of its power in harmonics (Fourier series of
        # a rectangular pulse, any signals textbook)
        square = np.sign(np.sin(2 * np.pi * (np.arange(4096) + 0.5) / 4096))
        assert float(distortion(square).thd) == pytest.approx(math.sqrt(math.pi ** 2 / 8 - 1),
                                                              rel=1e-3)
        pulse = (np.arange(4096) < 410).astype(float)
        assert float(distortion(pulse).thd) > 1.0


class TestSmallSignalLimit:
    def test_tiny_level_gain_equals_the_ac_solution(self):
        # at a vanishing level a stage is its linearisation: the fundamental's gain equals
        # the AC analysis (the definition of small-signal analysis) and THD tends to zero,
        # the second harmonic of an exponential device falling in proportion to the level
        # (Taylor series of the transfer curve)
        c = rc.boost()
        op = solve_dc(c)
        ac_db = gain_db_at(solve_ac(c, op, [1000.0], "VIN"), "out", 1000.0)
        levels = [1e-4, 1e-3]
        res = periodic_steady_state([solve_batch(c)], "VIN", levels, 1000.0, nodes=["out"])
        assert res.converged.all()
        d = res.distortion("out")
        gain_db = 20 * np.log10(d.amplitudes[0, :, 0, 0] / levels)
        assert gain_db == pytest.approx([ac_db, ac_db], abs=0.01)
        assert d.thd[0, 1, 0] < 1e-3
        assert d.thd[0, 0, 0] == pytest.approx(d.thd[0, 1, 0] / 10, rel=0.25)

    def test_variants_and_levels_are_laid_out_in_order(self):
        base = rc.boost()
        louder = base.replaced("RE", value=200.0)
        res = periodic_steady_state([solve_batch(base), solve_batch(louder)], "VIN",
                                    [0.01, 0.02], 1000.0, nodes=["out", "c"])
        assert res.wave("out").shape == (2, 2, 1, periodic.POINTS)
        amp = res.distortion("out").amplitudes[..., 0, 0]
        # less emitter resistance, more gain; twice the level, about twice the output
        assert amp[1, 0] > amp[0, 0]
        assert amp[0, 1] == pytest.approx(2 * amp[0, 0], rel=0.02)


    def test_each_variant_takes_its_own_levels(self):
        # a variant repeated at its own levels gives what one shared sweep of it gives
        # (the same equations, member for member)
        batch = solve_batch(rc.boost())
        shared = periodic_steady_state([batch], "VIN", [0.02, 0.05, 0.2], 1000.0,
                                       nodes=["out"]).wave("out")[0, :, 0]
        own = periodic_steady_state([batch, batch], "VIN", [[0.2], [0.05]], 1000.0,
                                    nodes=["out"])
        assert own.levels.shape == (2, 1)
        assert own.wave("out")[:, 0, 0] == pytest.approx(shared[[2, 1]], abs=1e-6)
        with pytest.raises(SolveError, match="levels per variant"):
            periodic_steady_state([batch, batch], "VIN", [[0.2, 0.1]], 1000.0)

    def test_some_samples_alone_take_the_same_periods(self):
        # a batch narrowed to some of its samples is those samples' own equations
        batch = solve_batch(rc.boost(), samples=6)
        whole = periodic_steady_state([batch], "VIN", [0.2], 1000.0, nodes=["out"])
        some = periodic_steady_state([batch.take(np.array([4, 1]))], "VIN", [0.2], 1000.0,
                                     nodes=["out"])
        assert some.wave("out")[0, 0] == pytest.approx(whole.wave("out")[0, 0, [4, 1]],
                                                       abs=1e-6)


class TestOpAmpLargeSignal:
    @staticmethod
    def follower(model: str, load: float = 1e6) -> Circuit:
        c = Circuit().vsource("VCC", "vcc", "0", dc=9.0).vsource("VREF", "r", "0", dc=4.5)
        c.vsource("VIN", "p", "r", ac=1.0)
        c.opamp("U1", "p", "o", "o", "vcc", "0", model)
        return c.resistor("RL", "o", "r", load)

    def test_slew_rate_limits_the_output(self):
        # a unity follower asked for 2 pi f A = 0.38 V/us (20 kHz, 3 V peak) from an LM358
        # (slew rate 0.3 V/us, from memory) slews at its slew rate (the datasheet definition)
        res = periodic_steady_state([solve_batch(self.follower("LM358"))], "VIN", [3.0],
                                    20e3, nodes=["o"], points=512)
        wave = res.wave("o")[0, 0, 0]
        slope = np.max(np.abs(np.diff(wave))) * 512 * 20e3
        assert slope == pytest.approx(0.3e6, rel=0.05)

    def test_output_current_is_limited(self):
        # a follower on +-15 V asked for 10 V into 10 ohm would source 1 A; the TL072
        # limits its output to its short-circuit current, about 40 mA (from memory)
        c = Circuit().vsource("VP", "vp", "0", dc=15.0).vsource("VN", "vn", "0", dc=-15.0)
        c.vsource("VIN", "p", "0", dc=10.0).opamp("U1", "p", "o", "o", "vp", "vn", "TL072")
        op = solve_dc(c.resistor("RL", "o", "0", 10.0))
        assert op.voltage("o") / 10.0 == pytest.approx(40e-3, rel=0.01)

    def test_recovers_from_clipping_within_microseconds(self):
        # 1 V into a gain of 21: the TL072's output clips at its swing limits, and its
        # internal node stays within reach of them, so the output leaves the rail when the
        # input comes back (the recovery of a real part is a few microseconds, from memory),
        # not hundreds of microseconds later: the clipped flat is as long as the ideal
        # clip's, within 2 % of the period
        c = rc.non_inverting("TL072", 20e3, 1e3)
        res = periodic_steady_state([solve_batch(c)], "VIN", [1.0], 1000.0, nodes=["o"],
                                    points=512)
        wave = res.wave("o")[0, 0, 0]
        top = wave.max()
        flat = np.mean(wave > top - 0.05)
        ideal = 0.5 - math.asin((top - 4.5) / 21.0) / math.pi  # the clipped share of a period
        assert flat == pytest.approx(ideal, abs=0.02)


class TestBadDrives:
    @pytest.mark.parametrize("level", [0.0, -0.1, math.inf, math.nan, 1e4])
    def test_level_that_cannot_be_simulated(self, level):
        with pytest.raises(SolveError, match="drive level"):
            periodic_steady_state([solve_batch(rc.boost())], "VIN", [level])

    @pytest.mark.parametrize("freq", [0.0, -1000.0, math.inf, 1e9])
    def test_frequency_that_cannot_be_simulated(self, freq):
        with pytest.raises(SolveError, match="drive frequency"):
            periodic_steady_state([solve_batch(rc.boost())], "VIN", [0.1], freq)

    def test_a_member_that_does_not_converge_is_reported(self, monkeypatch):
        # Newton allowed a single iteration cannot settle a clipping diode's steps: the
        # member is flagged with its reason, never returned as a figure
        monkeypatch.setattr(stepper, "MAX_NEWTON", 1)
        monkeypatch.setattr(reduced_steps, "MAX_NEWTON", 1)
        monkeypatch.setattr(reduced_steps, "RETRY_NEWTON", 1)
        c = Circuit().vsource("VIN", "in", "0", ac=1.0).resistor("R1", "in", "b", 1e3)
        c.diode("D1", "b", "0", "1N4148").capacitor("C1", "b", "0", 1e-9)
        res = periodic_steady_state([solve_batch(c)], "VIN", [2.0], 1000.0, nodes=["b"],
                                    points=16)
        assert not res.converged.any()
        assert "did not converge" in res.reasons[0, 0, 0]


class TestRefinedMembers:
    def test_a_hard_clipped_member_is_solved_again_on_a_finer_grid(self):
        # the direct-coupled fuzz squares a 1 V drive: its edges are too sharp for 96 steps,
        # and its harmonics are read from the 192-step period, whose samples at the 96
        # instants are the wave; the gentle 3 mV member is solved once
        res = periodic_steady_state([solve_batch(ls.direct_coupled_fuzz())], "VIN",
                                    [0.003, 1.0], 1000.0, nodes=["out"], points=96)
        assert res.converged.all() and res.refined.tolist() == [1]
        fine = res.fine["out"][0]
        assert fine.shape == (192,)
        np.testing.assert_array_equal(res.wave("out")[0, 1, 0], fine[::2])
        d = res.distortion("out")
        np.testing.assert_allclose(d.amplitudes[0, 1, 0], distortion(fine).amplitudes)
        np.testing.assert_allclose(d.amplitudes[0, 0, 0],
                                   distortion(res.wave("out")[0, 0, 0]).amplitudes)

    def test_roughness_tells_a_sine_from_its_clipped_self(self):
        # a sine's third difference over 96 steps is (2 pi / 96)^3 of its amplitude; a
        # square's edge is a jump of its whole swing (finite differences, common practice)
        t = np.arange(96) / 96
        sine, square = np.sin(2 * np.pi * t), np.sign(np.sin(2 * np.pi * (t + 0.5 / 96)))
        rough = roughness(np.stack([sine, square])[:, None])
        assert rough[0] == pytest.approx((2 * np.pi / 96) ** 3, rel=0.01)
        assert rough[1] > ROUGH


def test_a_spike_narrower_than_a_step_keeps_its_top():
    # A clipped edge through a treble path leaves a spike about a step wide: at 96 steps its
    # samples miss its top by a fifth at 1 V; stepped again around it, the top agrees with
    # a solve at 32 times the steps (the steps' own convergence, common practice, no
    # source; ngspice's transient agrees in tests/engine/test_ngspice_tran.py's kind of check)
    batch = solve_batch(ls.clipped_edge_treble())
    coarse = periodic_steady_state([batch], "VIN", [0.3, 1.0], 1000.0, nodes=["out"])
    fine = periodic_steady_state([batch], "VIN", [0.3, 1.0], 1000.0, nodes=["out"],
                                 points=32 * periodic.POINTS)
    wave, dense = coarse.wave("out")[0, :, 0], fine.wave("out")[0, :, 0]
    top = dense.max(axis=-1) - dense.mean(axis=-1)
    assert wave[1].max() - wave[1].mean() < 0.85 * top[1]  # the samples miss it
    assert coarse.distortion("out").peak_pos[0, :, 0] == pytest.approx(top, rel=0.01)
    assert coarse.converged.all()
