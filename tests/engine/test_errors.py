"""Bad input: impossible values, unknown models, floating nodes, no convergence."""

import numpy as np
import pytest

from kitleaf.engine import Circuit, DeviceModel, monte_carlo, solve_ac, solve_dc
from kitleaf.engine import newton as newton_module
from kitleaf.errors import ModelError, SolveError

from . import reference_circuits as rc


class TestBadValues:
    @pytest.mark.parametrize("value", [0.0, -10e3, float("nan"), float("inf")])
    def test_impossible_resistance_names_the_part(self, value):
        with pytest.raises(ModelError, match="R7"):
            Circuit().resistor("R7", "a", "b", value)

    def test_zero_capacitance(self):
        with pytest.raises(ModelError, match="C3"):
            Circuit().capacitor("C3", "a", "b", 0.0)

    def test_pot_position_outside_travel(self):
        with pytest.raises(ModelError, match="VR1.*outside 0..1"):
            Circuit().pot("VR1", "a", "w", "b", 100e3, position=1.2)

    def test_unknown_taper(self):
        with pytest.raises(ModelError, match="VR2.*taper"):
            Circuit().pot("VR2", "a", "w", "b", 100e3, taper="S-curve")

    def test_tolerance_must_be_a_fraction(self):
        with pytest.raises(ModelError, match="R1.*tolerance"):
            Circuit().resistor("R1", "a", "b", 1e3, tol=5)

    def test_duplicate_name(self):
        c = Circuit().resistor("R1", "a", "b", 1e3)
        with pytest.raises(ModelError, match="R1.*already"):
            c.resistor("R1", "b", "0", 1e3)

    def test_replaced_part_is_revalidated(self):
        c = Circuit().pot("VR1", "a", "w", "0", 100e3)
        with pytest.raises(ModelError, match="VR1"):
            c.replaced("VR1", position=-0.1)


class TestBadModels:
    def test_unknown_model_names_the_part(self):
        with pytest.raises(ModelError, match="Q9.*unknown device model 'BC999'"):
            Circuit().bjt("Q9", "c", "b", "e", "BC999")

    def test_model_of_the_wrong_kind(self):
        with pytest.raises(ModelError, match="Q1.*TL072.*opamp"):
            Circuit().bjt("Q1", "c", "b", "e", "TL072")

    def test_unknown_parameter(self):
        with pytest.raises(ModelError, match="'HFE' is not a npn parameter"):
            DeviceModel("mine", "npn", {"HFE": 300.0})

    def test_negative_saturation_current(self):
        with pytest.raises(ModelError, match="IS must be positive"):
            DeviceModel("mine", "diode", {"IS": -1e-14})

    # The depletion capacitance CJO / (1 - V/VJ)^M is continued linearly above FC VJ with a
    # factor 1 / (1 - FC): FC must stay below one (SPICE's junction model, from memory); a
    # saturation current cannot be infinite; a junction's emission coefficient of a million
    # and a current gain of a billion describe no part (real ones: N 1 to 4, BF up to a few
    # thousand, from memory).
    @pytest.mark.parametrize("kind, key, value", [
        ("diode", "FC", 1.0), ("diode", "M", 1.5), ("npn", "MJE", 2.0),
        ("diode", "IS", float("inf")), ("diode", "N", 1e6), ("npn", "BF", 1e9),
        ("pnp", "NF", 0.0), ("opamp", "GBW", float("inf")),
    ])
    def test_parameter_out_of_range_is_named(self, kind, key, value):
        with pytest.raises(ModelError, match=f"'mine': {key}"):
            DeviceModel("mine", kind, {key: value})

    def test_infinite_early_voltage_means_no_early_effect(self):
        assert DeviceModel("mine", "npn", {"VAF": float("inf")}).get("VAF") == float("inf")


class TestUnsolvable:
    def test_node_reached_only_through_a_capacitor(self):
        c = Circuit().vsource("V1", "a", "0", dc=1.0).capacitor("C1", "a", "island", 1e-6)
        c.capacitor("C2", "island", "0", 1e-6)
        with pytest.raises(SolveError, match="'island'.*no DC path"):
            solve_dc(c)

    def test_parallel_voltage_sources(self):
        c = Circuit().vsource("V1", "a", "0", dc=1.0).vsource("V2", "a", "0", dc=2.0)
        with pytest.raises(SolveError, match="V2 closes a loop"):
            solve_dc(c)

    def test_no_convergence_raises_instead_of_returning(self, monkeypatch):
        monkeypatch.setattr(newton_module, "MAX_ITER", 2)
        with pytest.raises(SolveError, match="did not converge"):
            solve_dc(rc.boost("2N5089"))

    def test_monte_carlo_no_convergence_raises(self, monkeypatch):
        monkeypatch.setattr(newton_module, "MAX_ITER", 1)
        monkeypatch.setattr(newton_module, "GMIN_STEPS", ())
        with pytest.raises(SolveError, match="did not converge"):
            monte_carlo(rc.boost("2N5089"), samples=50, nodes=["c"])


class TestBadRequests:
    def test_unknown_node(self):
        op = solve_dc(rc.rc_high_pass())
        with pytest.raises(SolveError, match="'nowhere'"):
            op.voltage("nowhere")

    def test_ac_source_must_be_a_source(self):
        c = rc.rc_high_pass()
        with pytest.raises(SolveError, match="'R1' is not a voltage or current source"):
            solve_ac(c, solve_dc(c), [1000.0], "R1")

    @pytest.mark.parametrize("freqs", [[], [0.0], [-5.0], [float("nan")]])
    def test_frequencies_must_be_positive(self, freqs):
        c = rc.rc_high_pass()
        with pytest.raises(SolveError, match="frequencies"):
            solve_ac(c, solve_dc(c), np.array(freqs), "VIN")

    def test_operating_point_of_another_circuit(self):
        op = solve_dc(rc.rc_high_pass())
        with pytest.raises(SolveError, match="different circuit"):
            solve_ac(rc.boost(), op, [1000.0], "VIN")
