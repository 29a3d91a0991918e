"""Each device family's slopes against central differences of its own currents.

Newton's step is only as good as the Jacobian the families return; a derivative equals the
limit of its difference quotient (calculus; common practice, no source), so every slope is
checked against a central difference at operating points in each region."""

import numpy as np
import pytest

from kitleaf.engine import Circuit, DeviceModel
from kitleaf.engine.compile import compile_circuit
from kitleaf.engine.devices.opamp import _window

GP = DeviceModel("test-gp", "npn", {"IS": 1e-14, "BF": 200.0, "VAF": 60.0, "VAR": 20.0,
                                    "IKF": 0.05, "IKR": 0.01, "ISE": 1e-13, "ISC": 1e-13})
JF = DeviceModel("test-jf", "njf", {"VTO": -2.0, "BETA": 1e-3, "LAMBDA": 0.02})
OA = DeviceModel("test-oa", "opamp", {})


def bank_of(build):
    c = Circuit().vsource("V1", "a", "0", dc=1.0).resistor("R1", "a", "b", 1e3)
    c.resistor("R2", "b", "c", 1e3).resistor("R3", "c", "0", 1e3)
    return compile_circuit(build(c)).families[0]


def check_slopes(bank, v: np.ndarray, atol: float = 1e-12) -> None:
    _, slope = bank.evaluate(v)
    for k in range(v.shape[1]):
        h = np.zeros_like(v)
        h[:, k] = 1e-6
        up, _ = bank.evaluate(v + h)
        down, _ = bank.evaluate(v - h)
        np.testing.assert_allclose(slope[:, :, k], (up - down) / 2e-6, rtol=1e-5,
                                   atol=atol)


class TestSlopes:
    def test_gummel_poon_forward_reverse_and_saturated(self):
        bank = bank_of(lambda c: c.bjt("Q1", "a", "b", "c", GP))
        v = np.array([[0.65, -4.0], [-3.0, 0.62], [0.72, 0.55], [0.2, 0.1]])[:, :, None]
        check_slopes(bank, v)

    def test_gummel_poon_with_emitter_base_breakdown(self):
        broken = DeviceModel("test-bv", "npn", {**GP.params, "BVEBO": 5.0})
        bank = bank_of(lambda c: c.bjt("Q1", "a", "b", "c", broken))
        check_slopes(bank, np.array([[-5.1, -3.0], [-4.9, 0.2], [0.65, -4.0]])[:, :, None])

    @pytest.mark.parametrize("vpos, vneg", [(9.0, 0.0), (3.0, 0.0), (1.0, 0.2), (0.1, 0.0),
                                            (0.0, 0.4), (0.0, 0.7), (0.0, 9.0)])
    def test_opamp_on_working_collapsed_and_reversed_supplies(self, vpos, vneg):
        bank = bank_of(lambda c: c.opamp("U1", "a", "b", "c", "a", "0", OA))
        out = (vpos + vneg) / 2 - 0.05
        for x in (vneg - 0.3, (vpos + vneg) / 2 + 0.01, vpos + 0.3):
            # output currents near 10 mA: the differences' rounding is about 1e-11
            check_slopes(bank, np.array([[[x], [vpos], [vneg], [out], [2e-5]]]), atol=1e-10)

    @pytest.mark.parametrize("vpos, vneg", [(9.0, 0.0), (3.0, 0.0), (1.0, 0.2)])
    def test_opamp_clamp_input_stage_and_current_limit(self, vpos, vneg):
        # x past either clamp, the input stage deep in its tanh, the output near its limit
        bank = bank_of(lambda c: c.opamp("U1", "a", "b", "c", "a", "0", OA))
        vmid, h = (float(np.ravel(a)[0]) for a in _window(vpos, vneg, bank.p)[:2])
        for x, vd, out in ((vmid + 4.02 * h, 0.5, vneg), (vmid - 4.02 * h, -0.5, vpos),
                           (vmid + 3.9 * h, 0.02, vmid - 1.0)):
            check_slopes(bank, np.array([[[x], [vpos], [vneg], [out], [vd]]]), atol=1e-8)

    @pytest.mark.parametrize("vgs, vgd", [(-1.0, -7.0), (-1.0, -1.4), (-1.4, -1.0),
                                          (-7.0, -1.0), (0.3, 0.1)])
    def test_jfet_in_every_region_and_with_drain_and_source_swapped(self, vgs, vgd):
        bank = bank_of(lambda c: c.jfet("Q1", "a", "b", "c", JF))
        check_slopes(bank, np.array([[[vgs], [vgd]]]))

    def test_jfet_with_drain_below_source_mirrors_the_channel(self):
        bank = bank_of(lambda c: c.jfet("Q1", "a", "b", "c", JF))
        normal, _ = bank.evaluate(np.array([[[-0.6], [-1.0]]]))  # vds = 0.4
        swapped, _ = bank.evaluate(np.array([[[-1.0], [-0.6]]]))  # vds = -0.4
        # Shichman-Hodges is symmetric in drain and source (SPICE JFET level 1)
        assert swapped[0, 2, 0] == pytest.approx(-normal[0, 2, 0], rel=1e-12)
        assert normal[0, 2, 0] == pytest.approx(1e-3 * 0.4 * (2 * 1.4 - 0.4) * 1.008)


class TestOpAmpLimit:
    def bank(self):
        return bank_of(lambda c: c.opamp("U1", "a", "b", "c", "a", "0", OA))

    def test_linear_steps_pass_unchanged(self):
        bank = self.bank()
        old = np.array([[[0.5], [1.0], [0.0]]])
        new = np.array([[[0.52], [1.0], [0.0]]])
        np.testing.assert_array_equal(bank.limit(new, old), new)

    def test_a_step_onto_the_flat_moves_one_unit_of_the_swing(self):
        bank = self.bank()
        vmid, h = (np.asarray(a).ravel()[0] for a in _window_of(bank, 1.0, 0.0)[:2])
        old = np.array([[[vmid + 1.5 * h], [1.0], [0.0]]])
        new = np.array([[[vmid + 9.0 * h], [1.0], [0.0]]])
        got = bank.limit(new, old)
        # the documented rule (docs/engine.md, op-amp limiting): one unit of u per step
        assert got[0, 0, 0] == pytest.approx(vmid + 2.5 * h)


def _window_of(bank, vpos, vneg):
    return _window(np.array([[vpos]]), np.array([[vneg]]), bank.p)
