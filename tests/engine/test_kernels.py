"""The compiled kernels against the numpy device models and steps they are compiled from,
and the transient they step for a sampled signal.

The numpy code (engine/devices, engine/reduced_steps.py) is the reference: every device
family's currents, slopes, limited voltages and capacitances over random junction voltages
in every region, and whole periodic solves of the large-signal circuits, must agree to
rounding (the same equations evaluated in another order; the libraries' exp, log and tanh
may differ in the last bit)."""

import numpy as np
import pytest
from tests.engine import large_signal_circuits as ls

from kitleaf.engine import Circuit, DeviceModel, solve_batch
from kitleaf.engine.compile import compile_circuit
from kitleaf.engine.kernels import bjt, diode, jfet, opamp
from kitleaf.engine.reduce import partition
from kitleaf.engine.reduced_shooting import members, shoot, start_at
from kitleaf.engine.transient import transient_response
from kitleaf.errors import SolveError

GP = DeviceModel("test-gp", "npn", {"IS": 1e-14, "BF": 200.0, "VAF": 60.0, "VAR": 20.0,
                                    "IKF": 0.05, "IKR": 0.01, "ISE": 1e-13, "ISC": 1e-13,
                                    "TF": 4e-10, "CJE": 4e-12, "CJC": 3e-12})
BROKEN = DeviceModel("test-bv", "npn", {**GP.params, "BVEBO": 5.0})
JF = DeviceModel("test-jf", "njf", {"VTO": -2.0, "BETA": 1e-3, "LAMBDA": 0.02,
                                    "CGS": 3e-12, "CGD": 2e-12})
RAIL = DeviceModel("test-rail", "opamp", {"SWING_HI": 0.5, "SWING_LO": 2.0, "ILIM": 5e-3})
SAMPLES = 300


def bank_of(place) -> object:
    """The one device bank of a small circuit with the parts ``place`` adds."""
    c = Circuit().vsource("V1", "a", "0", dc=1.0).resistor("R1", "a", "b", 1e3)
    c.resistor("R2", "b", "c", 1e3).resistor("R3", "c", "d", 1e3).resistor("R4", "d", "e", 1e3)
    c.resistor("R5", "e", "0", 1e3)
    place(c)
    return compile_circuit(c).families[0]


def diodes(c):
    for i, model in enumerate(("1N4148", "1N4001", "GE-SIGNAL", "LED-RED", "1N5817")):
        c.diode(f"D{i}", "b", "c", model)


def transistors(c):
    for i, model in enumerate((GP, BROKEN, "2N3904", "2N3906", "AC128")):
        c.bjt(f"Q{i}", "b", "c", "d", model)


def jfets(c):
    for i, model in enumerate((JF, "J201", "2N5457", "2N5460")):
        c.jfet(f"J{i}", "b", "c", "d", model)


def opamps(c):
    for i, model in enumerate(("TL072", "LM358", "NE5532", RAIL)):
        c.opamp(f"U{i}", "b", "c", "d", "a", "e", model)


# Each family: its bank's parts, its kernel module and the span of each junction's voltage
# (forward, reverse, breakdown; an op-amp's gain node, rails, output and input difference)
FAMILIES = {
    "diode": (diodes, diode, [(-80.0, 1.3)]),
    "bjt": (transistors, bjt, [(-7.0, 1.1), (-30.0, 1.0)]),
    "jfet": (jfets, jfet, [(-6.0, 1.0), (-20.0, 1.0)]),
    "opamp": (opamps, opamp, [(-40.0, 40.0), (-2.0, 20.0), (-5.0, 5.0), (-15.0, 15.0),
                              (-0.05, 0.05)]),
}


def random_junctions(spans, devices: int, seed: int) -> np.ndarray:
    rng = np.random.default_rng(seed)
    return np.stack([rng.uniform(lo, hi, (SAMPLES, devices)) for lo, hi in spans], axis=1)


def params(bank, module) -> np.ndarray:
    return np.ascontiguousarray(np.stack([bank.p(k) for k in module.KEYS], axis=1)[0])


def agree(ours: np.ndarray, ref: np.ndarray) -> None:
    """Equal to rounding: relative 1e-11, or 1e-11 of the array's largest value."""
    np.testing.assert_allclose(ours, ref, rtol=1e-11, atol=1e-11 * np.max(np.abs(ref)))


@pytest.mark.parametrize("family", sorted(FAMILIES))
class TestDevices:
    def setup(self, family):
        place, module, spans = FAMILIES[family]
        bank = bank_of(place)
        return bank, module, params(bank, module), random_junctions(spans, bank.jp.shape[1], 7)

    def test_currents_and_slopes(self, family):
        bank, module, p, v = self.setup(family)
        current, slope = bank.evaluate(v)
        ours_i, ours_g = np.zeros_like(current), np.zeros_like(slope)
        for s in range(SAMPLES):
            module.evaluate(v[s], p, ours_i[s], ours_g[s])
        for term in range(current.shape[1]):  # each term at its own scale
            agree(ours_i[:, term], current[:, term])
            for j in range(v.shape[1]):
                agree(ours_g[:, term, j], slope[:, term, j])

    def test_limited_steps(self, family):
        bank, module, p, vold = self.setup(family)
        spans = FAMILIES[family][2]
        vnew = random_junctions(spans, bank.jp.shape[1], 8)
        near = vold + 0.01 * (vnew - vold)  # small steps too, which pass unlimited
        for target in (vnew, near):
            ref = bank.limit(target, vold)
            ours = np.zeros_like(ref)
            for s in range(SAMPLES):
                module.limit(target[s], vold[s], p, ours[s])
            np.testing.assert_allclose(ours, ref, rtol=1e-12, atol=1e-12)

    def test_capacitances(self, family):
        bank, module, p, v = self.setup(family)
        ref = np.broadcast_to(bank.capacitances(v), (SAMPLES, *bank.cap_a.shape))
        ours = np.zeros((SAMPLES, bank.src.shape[0], bank.jp.shape[1]))
        for s in range(SAMPLES):
            module.capacitances(v[s], p, ours[s])
        if ref.shape[1]:
            agree(ours[:, :ref.shape[1]], ref)


def test_every_family_has_a_kernel():
    from kitleaf.engine.devices import FAMILIES as ENGINE_FAMILIES
    assert sorted(f.name for f in ENGINE_FAMILIES) == sorted(FAMILIES)


def shots(circuit: Circuit, levels: tuple[float, ...], compiled: bool,
          tolerance: tuple[float, float] = (1e-9, 3e-4)):
    batches = [solve_batch(circuit)]
    omega, steps = 2.0 * np.pi * 1000.0, 96
    mem, history = members(batches, "VIN", np.array(levels), omega, [batches[0].row("out")],
                           steps)
    start = start_at(history, batches[0].system.cap_columns()[0],
                     partition(batches[0].system).keep)
    with np.errstate(invalid="ignore", over="ignore", divide="ignore"):
        return shoot(mem, start, 1, steps, tolerance, compiled=compiled)


@pytest.mark.parametrize("build", [ls.diodes_to_ground, ls.feedback_diodes, ls.led_clipper,
                                   ls.common_emitter, ls.jfet_common_source,
                                   ls.direct_coupled_fuzz, ls.opamp_rail_clip,
                                   ls.emitter_follower])
def test_periodic_solves_agree(build):
    levels = (0.01, 0.3, 1.0, 3.0)
    ref, ours = shots(build(), levels, False), shots(build(), levels, True)
    assert ours.done.tolist() == ref.done.tolist()
    assert ours.done.any()
    done = ref.done
    peak = np.max(np.abs(ref.waves[done]))
    # the Newton iterations stop at their tolerance a step apart: far below the figures'
    np.testing.assert_allclose(ours.waves[done], ref.waves[done], rtol=0, atol=1e-6 * peak)


class TestTransient:
    """A sampled signal through the same steps: a sine played long enough settles onto the
    periodic solve's period (the same fixed-step formula), silence stays at rest."""

    @pytest.mark.parametrize("build", [ls.diodes_to_ground, ls.common_emitter,
                                       ls.opamp_rail_clip])
    def test_a_long_sine_settles_onto_the_periodic_state(self, build):
        points, periods, level = 96, 60, 1.0
        k = np.arange(1, points * periods + 1)
        signal = level * np.sin(2.0 * np.pi * k / points)
        batch = solve_batch(build())
        played = transient_response([batch], "VIN", signal, 1000.0 * points, 1, ["out"])
        # the shooting held to far tighter than the figures need, so its period is exact
        steady = shots(build(), (level,), True, (1e-12, 1e-9))
        assert steady.done.all()
        peak = np.max(np.abs(steady.waves))
        rest = batch.x[0, batch.row("out")]  # the played waves are less their DC value
        np.testing.assert_allclose(played.wave("out")[0, -points:] + rest, steady.waves[0, 0],
                                   atol=1e-5 * peak)

    def test_silence_stays_at_rest_and_two_runs_give_the_same_bytes(self):
        batch = solve_batch(ls.feedback_diodes())
        quiet = transient_response([batch], "VIN", np.zeros(2000), 96e3, 1, ["o"])
        assert np.max(np.abs(quiet.wave("o"))) < 1e-9
        signal = 0.5 * np.sin(np.arange(3000) * 0.05)
        once, again = (transient_response([batch], "VIN", signal, 96e3, 1, ["out"])
                       .wave("out").tobytes() for _ in range(2))
        assert once == again

    @pytest.mark.parametrize("rate, signal", [(0.0, [0.1]), (float("nan"), [0.1]),
                                              (48e3, [0.1, float("inf")])])
    def test_a_rate_or_signal_that_cannot_be_played_is_refused(self, rate, signal):
        with pytest.raises(SolveError, match="cannot be simulated|not a finite number"):
            transient_response([solve_batch(ls.common_emitter())], "VIN", np.array(signal), rate,
                               1, ["out"])
