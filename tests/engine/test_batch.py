"""The public batch API: each sample equals the single-circuit solvers on the rebuilt sample.

The single-circuit solvers are the ones checked against hand analysis and ngspice
(test_linear, test_amplifiers, test_ngspice_oracle); here the batch must reproduce them
sample by sample, including what Monte Carlo does not report (branch currents, complex
responses of every unknown, impedances with a source taken out).
"""

import numpy as np
import pytest

from kitleaf.engine import Circuit, monte_carlo, solve_ac, solve_batch, solve_dc
from kitleaf.engine.elements import upper_leg_columns
from kitleaf.errors import SolveError

from . import reference_circuits as rc

FREQS = np.array([20.0, 1000.0, 50e3])
BUILDS = [rc.boost, rc.jfet_common_source, rc.non_inverting, rc.inverting]


def metered_chain() -> Circuit:
    """0 V meters in series with a stage's supply and input, as kits measure currents: a
    loop of sources through the device nodes that the reduction must keep."""
    c = rc.non_inverting()
    c.vsource("VLINK", "vcc_in", "vcc", dc=0.0).vsource("IMETER", "vcc", "vcc_stage", dc=0.0)
    c.resistor("RFEED", "vcc_stage", "0", 47e3).diode("D1", "vcc_in", "vcc_stage", "1N4148")
    return c


class TestSamplesMatchSingleSolves:
    @pytest.mark.parametrize("build", [*BUILDS, metered_chain])
    def test_dc_unknowns_and_branch_currents(self, build):
        batch = solve_batch(build(), samples=24, seed=3)
        mc = monte_carlo(build(), samples=24, seed=3)
        for i in (0, 11, 23):
            op = solve_dc(mc.sample(i))
            for node, volts in op.voltages.items():
                assert batch.voltage(node)[i] == pytest.approx(volts, abs=1e-9)
            for name in batch.layout.branches:
                assert batch.current(name)[i] == pytest.approx(op.current(name), rel=1e-7,
                                                                abs=1e-12)

    @pytest.mark.parametrize("build", [*BUILDS, metered_chain])
    def test_pole_residue_response_of_every_unknown(self, build):
        batch = solve_batch(build(), samples=16, seed=4)
        form = batch.response(batch.excitation("VIN"), list(range(batch.layout.size)))
        fast = form(FREQS)
        mc = monte_carlo(build(), samples=16, seed=4)
        for i in (0, 15):
            sample = mc.sample(i)
            ac = solve_ac(sample, solve_dc(sample), FREQS, "VIN")
            scale = np.max(np.abs(ac.solution), axis=1)
            np.testing.assert_allclose(np.abs(fast[i] - ac.solution).max(axis=1) / scale, 0.0,
                                       atol=1e-9)

    def test_complex_poles_of_a_resonant_circuit(self):
        # a series RLC driven from the source (Q about 10) rings: complex poles take the
        # complex evaluation path, the real poles of the other circuits the real one; both
        # must equal solve_ac
        c = rc.boost()
        c.resistor("RR", "in", "rl", 100.0).inductor("LT", "rl", "ring", 0.1, tol=0.1)
        c.capacitor("CTR", "ring", "0", 100e-9)
        batch = solve_batch(c, samples=8, seed=5)
        form = batch.response(batch.excitation("VIN"), [batch.layout.row("ring")])
        assert np.iscomplexobj(form.lambdas)
        mc = monte_carlo(c, samples=8, seed=5)
        freqs = np.geomspace(100.0, 10e3, 7)
        for i in (0, 7):
            sample = mc.sample(i)
            ac = solve_ac(sample, solve_dc(sample), freqs, "VIN")
            np.testing.assert_allclose(form(freqs)[i, :, 0], ac.voltage("ring"), rtol=1e-9)

    def test_direct_solve_agrees_with_the_pole_residue_form(self):
        batch = solve_batch(rc.boost(), samples=32, seed=9)
        rhs = batch.excitation("VIN")
        direct = batch.solve_ac(FREQS, rhs)
        fast = batch.response(rhs, list(range(batch.layout.size)))(FREQS)
        np.testing.assert_allclose(fast, direct, rtol=1e-9, atol=1e-12)

    @pytest.mark.parametrize("build", BUILDS)
    def test_node_response_in_the_reduced_frame_equals_the_direct_solve(self, build):
        # the default rows (every node) are answered on the device rows of the DC
        # reduction, which a sample batch keeps from its Newton solve and a nominal one
        # makes on first use; either way equal to the direct solve (a linear identity)
        for batch in (solve_batch(build(), samples=40, seed=7), solve_batch(build())):
            assert batch._reduction is not None
            rhs = batch.excitation("VIN")
            nodes = len(batch.layout.nodes)
            direct = batch.solve_ac(FREQS, rhs)[:, :, :nodes]
            scale = np.abs(direct).max(axis=2, keepdims=True)
            fast = batch.response(rhs)(FREQS)
            np.testing.assert_allclose(np.abs(fast - direct) / scale, 0.0, atol=1e-9)

    def test_residues_only_for_the_rows_read(self):
        batch = solve_batch(rc.boost(), samples=16, seed=8)
        form = batch.response(batch.excitation("VIN"))
        row = batch.layout.row("out")
        one = form.take([row])
        assert "residues" not in form.__dict__  # the whole form's were never formed
        assert one.residues.shape[1] == 1
        # through the modes (no residues) the same response, to rounding
        np.testing.assert_allclose(form.through_modes(FREQS)[:, :, row], one(FREQS)[:, :, 0],
                                   rtol=1e-12)
        assert "residues" not in form.__dict__

    @pytest.mark.parametrize("build", [rc.boost, rc.jfet_common_source, rc.non_inverting])
    def test_device_reports_and_part_factors(self, build):
        circuit = build()
        part = next(e.name for e in circuit.elements if hasattr(e, "tol"))
        circuit = circuit.replaced(part, tol=0.05)
        batch = solve_batch(circuit, samples=12, seed=6)
        mc = monte_carlo(circuit, samples=12, seed=6)
        device = next(e.name for e in mc.circuit.elements if hasattr(e, "model"))
        reports = batch.reports(device)
        for i in (0, 5, 11):
            single = solve_dc(mc.sample(i)).device(device)
            assert reports[i].keys() == single.keys()
            for key, value in single.items():
                assert reports[i][key] == (value if isinstance(value, str)
                                           else pytest.approx(value, rel=1e-6, abs=1e-12))
        np.testing.assert_array_equal(batch.factor(part), mc.factor(part))
        np.testing.assert_array_equal(solve_batch(circuit).factor(part), [1.0])

    def test_the_same_draws_as_monte_carlo(self):
        batch = solve_batch(rc.boost(), samples=50, seed=2)
        mc = monte_carlo(rc.boost(), samples=50, seed=2, nodes=["c"])
        np.testing.assert_allclose(batch.voltage("c"), mc.dc["c"], atol=1e-9)
        np.testing.assert_array_equal(batch.factors, mc.factors)
        np.testing.assert_array_equal(batch.params["Q1"]["BF"], mc.draws["Q1"]["BF"])


class TestNominalAndImpedances:
    def test_nominal_batch_is_the_operating_point(self):
        op = solve_dc(rc.non_inverting())
        batch = solve_batch(rc.non_inverting())
        assert batch.size == 1 and batch.factors is None
        assert batch.voltage("o")[0] == pytest.approx(op.voltage("o"), abs=1e-12)
        assert batch.current("VCC")[0] == pytest.approx(op.current("VCC"), rel=1e-9)

    def test_input_impedance_of_a_resistor_is_its_value(self):
        # a bare resistor across the source: Z = R at every frequency (Ohm's law)
        c = Circuit().vsource("VIN", "in", "0", ac=1.0).resistor("R1", "in", "0", 4.7e3)
        batch = solve_batch(c, samples=4)
        form = batch.response(batch.excitation("VIN"), [batch.layout.branch("VIN")])
        np.testing.assert_allclose(-1.0 / form(FREQS)[..., 0], 4.7e3, rtol=1e-12)

    def test_opened_source_leaves_the_rest(self):
        # 10k to ground behind a meter, 22k straight to ground: with the meter opened the
        # node sees 22k alone, with it closed 10k || 22k (Ohm's law)
        c = Circuit().vsource("VM", "a", "b", dc=0.0).resistor("R1", "b", "0", 10e3)
        c.resistor("R2", "a", "0", 22e3)
        batch = solve_batch(c)
        closed = batch.impedance("a", [1000.0])[0, 0]
        opened = batch.impedance("a", [1000.0], opened="VM")[0, 0]
        assert closed.real == pytest.approx(1 / (1 / 10e3 + 1 / 22e3), rel=1e-12)
        assert opened.real == pytest.approx(22e3, rel=1e-12)


class TestBadRequests:
    def test_unknown_names(self):
        batch = solve_batch(rc.boost())
        with pytest.raises(SolveError, match="no node"):
            batch.voltage("nowhere")
        with pytest.raises(SolveError, match="not a voltage source"):
            batch.current("R1")
        with pytest.raises(SolveError, match="not a source"):
            batch.excitation("R1")

    def test_bad_sample_count(self):
        with pytest.raises(SolveError, match="samples"):
            solve_batch(rc.boost(), samples=0)


class TestScaledSamples:
    def divider(self):
        c = Circuit().vsource("V1", "a", "0", dc=9.0)
        return c.resistor("R1", "a", "m", 10e3, tol=0.05).resistor("R2", "m", "0", 10e3, tol=0.05)

    def test_scale_multiplies_each_samples_drawn_values(self):
        c = self.divider()
        scale = np.ones((3, 3))
        scale[1, 1] = 2.0  # R1 doubled in sample 1
        batch = solve_batch(c, samples=3, seed=4, scale=scale)
        r1, r2 = 10e3 * batch.factors[:, 1], 10e3 * batch.factors[:, 2]
        assert batch.factors[1, 1] > 1.9
        # voltage divider V R2 / (R1 + R2) (textbook)
        np.testing.assert_allclose(batch.voltage("m"), 9.0 * r2 / (r1 + r2), rtol=1e-9)

    def test_without_spread_only_the_scale_changes_parts(self):
        scale = np.array([[1.0, 1.0, 1.0], [1.0, 3.0, 1.0]])
        batch = solve_batch(self.divider(), samples=2, scale=scale, spread=False)
        # divider: 9 V x 10k / 20k and 9 V x 10k / 40k (textbook)
        np.testing.assert_allclose(batch.voltage("m"), [4.5, 2.25], rtol=1e-9)

    def test_dc_resistance_is_what_an_ohmmeter_sees_with_the_source_at_rest(self):
        batch = solve_batch(self.divider(), samples=2, scale=np.ones((2, 3)), spread=False)
        ohms = batch.dc_resistance([("m", "0"), ("a", "m")], np.array([0, 1]))
        # 10k || 10k = 5k to ground; across R1 with the source shorted: 10k || 10k (Ohm's law)
        np.testing.assert_allclose(ohms, [[5e3, 5e3], [5e3, 5e3]], rtol=1e-9)

    def test_a_pots_legs_scaled_apart_move_its_wiper(self):
        # a 20k linear pot at 1/4 (5k below the wiper, 15k above): scaling the lower leg
        # by 3 and the upper by 1/3 puts 15k below and 5k above, the wiper at 3/4
        c = Circuit().vsource("V1", "a", "0", dc=8.0)
        c.pot("P1", "0", "w", "a", 20e3, position=0.25, tol=0.2)
        upper = upper_leg_columns(c.elements)["P1"]
        assert upper == len(c.elements)  # one column past the elements per pot
        scale = np.ones((2, upper + 1))
        scale[1, 1], scale[1, upper] = 3.0, 1.0 / 3.0
        batch = solve_batch(c, samples=2, scale=scale, spread=False)
        # unloaded divider: 8 V x lower / (lower + upper) (textbook)
        np.testing.assert_allclose(batch.voltage("w"), [2.0, 6.0], rtol=1e-9)
        drawn = solve_batch(c, samples=50, seed=3)
        # drawn alike, the legs scale the whole track and the wiper stays
        np.testing.assert_array_equal(drawn.factors[:, 1], drawn.factors[:, upper])
        np.testing.assert_allclose(drawn.voltage("w"), 2.0, rtol=1e-9)

    def test_a_scale_of_the_wrong_shape_is_refused(self):
        with pytest.raises(SolveError):
            solve_batch(self.divider(), samples=2, scale=np.ones((3, 3)))
