"""Direct AC solves of a large circuit: the sparse path against the single-circuit solver.

The single-circuit solver (checked against hand analysis and ngspice in test_linear,
test_amplifiers and test_ngspice_oracle) solves each rebuilt sample with LAPACK's dense LU;
the batch's sparse path must reproduce it sample by sample, and Ohm's law where a branch is
opened.
"""

import numpy as np
import pytest

from kitleaf.engine import Circuit, monte_carlo, solve_ac, solve_batch, solve_dc
from kitleaf.engine.sparse_ac import SPARSE_SIZE

FREQS = np.array([20.0, 1000.0, 50e3])
STAGES = 8


def boost_chain(stages: int = STAGES) -> Circuit:
    """Two-times transistor stages in a row, each behind a 0 V meter on its input, as kits meter
    their stages: a circuit past the sparse threshold."""
    c = Circuit("boost chain").vsource("VCC", "vcc", "0", dc=9.0)
    c.vsource("VIN", "out0", "0", ac=1.0)
    for k in range(1, stages + 1):
        c.vsource(f"M{k}", f"out{k - 1}", f"in{k}", dc=0.0)
        c.capacitor(f"C{k}1", f"in{k}", f"b{k}", 100e-9, tol=0.10)
        c.resistor(f"R{k}1", "vcc", f"b{k}", 1e6, tol=0.05)
        c.resistor(f"R{k}2", f"b{k}", "0", 100e3, tol=0.05)
        c.bjt(f"Q{k}", f"c{k}", f"b{k}", f"e{k}", "2N5089")
        c.resistor(f"R{k}3", "vcc", f"c{k}", 10e3, tol=0.05)
        c.resistor(f"R{k}4", f"e{k}", "0", 4.7e3, tol=0.05)
        c.capacitor(f"C{k}2", f"c{k}", f"v{k}", 1e-6, tol=0.10)
        c.resistor(f"R{k}5", f"v{k}", f"out{k}", 1e3, tol=0.05)
        c.resistor(f"R{k}6", f"out{k}", "0", 100e3, tol=0.05)
    return c


def test_the_chain_is_large_enough_to_go_sparse():
    assert solve_batch(boost_chain()).layout.size >= SPARSE_SIZE


def test_every_sample_equals_the_single_circuit_solver(monkeypatch):
    batch = solve_batch(boost_chain(), samples=12, seed=5)
    mc = monte_carlo(boost_chain(), samples=12, seed=5)
    fast = batch.solve_ac(FREQS, batch.excitation("VIN"))
    for i in (0, 7, 11):
        sample = mc.sample(i)
        ac = solve_ac(sample, solve_dc(sample), FREQS, "VIN")
        scale = np.max(np.abs(ac.solution), axis=1, keepdims=True)
        # the operating points agree to Newton's tolerance (1e-9), which eight stages of
        # gain in a row magnify
        np.testing.assert_allclose(np.abs(fast[i] - ac.solution) / scale, 0.0, atol=1e-7)
    # at the very same operating points, the batch's dense solve (LAPACK) agrees closely
    monkeypatch.setattr("kitleaf.engine.batch.SPARSE_SIZE", 10**9)
    dense = batch.solve_ac(FREQS, batch.excitation("VIN"))
    scale = np.max(np.abs(dense), axis=2, keepdims=True)
    np.testing.assert_allclose(np.abs(fast - dense) / scale, 0.0, atol=1e-11)


def test_some_samples_at_their_own_frequencies():
    batch = solve_batch(boost_chain(), samples=12, seed=5)
    rhs = batch.excitation("VIN")
    whole = batch.solve_ac(FREQS, rhs)
    picked = np.array([3, 9])
    freqs = np.array([FREQS, FREQS[::-1]])
    part = batch.solve_ac(freqs, rhs, samples=picked)
    np.testing.assert_allclose(part[0], whole[3], rtol=1e-10)
    np.testing.assert_allclose(part[1], whole[9][::-1], rtol=1e-10)


def test_an_opened_meter_equals_the_dense_solve(monkeypatch):
    # the sparse path answers an opened branch from the closed circuit's factorisation;
    # the dense path replaces the branch's row and solves again (LAPACK)
    batch = solve_batch(boost_chain(), samples=6, seed=2)
    sparse = batch.impedance("out3", [1000.0], opened="M4")
    monkeypatch.setattr("kitleaf.engine.batch.SPARSE_SIZE", 10**9)
    dense = batch.impedance("out3", [1000.0], opened="M4")
    np.testing.assert_allclose(sparse, dense, rtol=1e-9)


def test_ladder_impedance_with_its_meter_closed_and_opened():
    # 22k to ground at node a, and behind a 0 V meter a ladder of 1k series, 10k shunt
    # sections: closed, 22k in parallel with the ladder's input resistance (folded from its
    # far end, R = 1k + 10k || R_next: series and parallel resistors); opened, 22k alone
    sections = 70
    c = Circuit("ladder").vsource("VM", "a", "l0", dc=0.0).resistor("R0", "a", "0", 22e3)
    for k in range(sections):
        c.resistor(f"RS{k}", f"l{k}", f"l{k + 1}", 1e3).resistor(f"RP{k}", f"l{k + 1}", "0", 10e3)
    ladder = 0.0
    for _ in range(sections):
        ladder = 1e3 + (10e3 if ladder == 0.0 else 1.0 / (1.0 / 10e3 + 1.0 / ladder))
    batch = solve_batch(c)
    assert batch.layout.size >= SPARSE_SIZE
    closed = batch.impedance("a", [1000.0])[0, 0]
    opened = batch.impedance("a", [1000.0], opened="VM")[0, 0]
    assert closed.real == pytest.approx(1.0 / (1.0 / 22e3 + 1.0 / ladder), rel=1e-12)
    assert opened.real == pytest.approx(22e3, rel=1e-12)


def test_a_large_circuit_never_forms_its_dense_matrices(monkeypatch):
    # (samples, n, n) arrays are quadratic in the circuit: a forty-stage kit's took 2 GB
    from kitleaf.engine.batch import BatchResult

    batch = solve_batch(boost_chain(), samples=6, seed=2)

    def refuse(self):
        raise AssertionError("dense (samples, n, n) matrices formed")

    monkeypatch.setattr(BatchResult, "matrices", property(refuse))
    batch.solve_ac(FREQS, batch.excitation("VIN"))
    batch.impedance("out3", [1000.0], opened="M4")


def test_a_large_batch_keeps_no_dense_conductance_matrix():
    # G (samples, n, n) is rebuilt from the parts when read, so a solved state does not hold
    # a quadratic array; the rebuilt G is the solve's, and the answers read through it agree
    batch = solve_batch(boost_chain(), samples=40, seed=2)
    assert batch.stored.g is None
    rhs = batch.excitation("VIN")
    direct = batch.solve_ac(FREQS, rhs)[:, :, :len(batch.layout.nodes)]
    fast = batch.response(rhs)(FREQS)
    scale = np.abs(direct).max(axis=2, keepdims=True)
    np.testing.assert_allclose(np.abs(fast - direct) / scale, 0.0, atol=1e-9)
    np.testing.assert_array_equal(batch.problem.g,
                                  batch.system.conductances(batch.factors))


def test_a_single_samples_large_stamp_map_stays_sparse():
    # a dense map holds columns x n^2 values: cubic in the circuit (650 MB at forty stages)
    from kitleaf.engine.compile import compile_circuit
    from kitleaf.engine.stamps import DENSE_SINGLE

    system = compile_circuit(boost_chain(40))
    g_map, _ = system.stamp_maps
    assert g_map.shape[0] * g_map.shape[1] > DENSE_SINGLE
    g = system.conductances()
    assert g_map._dense_t is None
    n = system.layout.size
    assert g.shape == (1, n, n) and np.count_nonzero(g) < 20 * n
