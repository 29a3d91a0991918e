"""DC operating points of a large circuit's tolerance samples: the sparse Newton against the
dense one.

A large circuit's samples are solved on sparse matrices (never (samples, n, n)); the dense
batched Newton (whose single-circuit form is checked against hand analysis and ngspice in
test_amplifiers and test_ngspice_oracle) must give the same operating points, to Newton's
tolerance (1e-9 relative), with the same fallbacks.
"""

import numpy as np
import pytest
from tests.engine.test_sparse_ac import boost_chain

from kitleaf.engine import monte_carlo, solve_batch, solve_dc
from kitleaf.engine.compile import System, compile_circuit
from kitleaf.engine.montecarlo import draw_problem
from kitleaf.engine.newton import initial_state, newton
from kitleaf.engine.sparse_stack import SparseStack


def dense_batch(monkeypatch, *args, **kwargs):
    """The same batch solved with the dense Newton."""
    with monkeypatch.context() as m:
        m.setattr("kitleaf.engine.dc.SPARSE_SIZE", 10**9)
        return solve_batch(*args, **kwargs)


def test_the_samples_operating_points_equal_the_dense_solve(monkeypatch):
    sparse = solve_batch(boost_chain(), samples=40, seed=3)
    dense = dense_batch(monkeypatch, boost_chain(), samples=40, seed=3)
    np.testing.assert_allclose(sparse.x, dense.x, rtol=1e-8, atol=1e-12)


def test_samples_started_from_their_nominal_equal_the_dense_solve(monkeypatch):
    circuit = boost_chain()
    nominal = solve_batch(circuit)
    sparse = solve_batch(circuit, samples=40, seed=4, nominal=nominal)
    dense = dense_batch(monkeypatch, circuit, samples=40, seed=4, nominal=nominal)
    np.testing.assert_allclose(sparse.x, dense.x, rtol=1e-8, atol=1e-12)


def test_each_sample_equals_the_single_circuit_solver():
    # solve_dc solves each rebuilt sample alone, densely
    mc = monte_carlo(boost_chain(), samples=12, seed=5, nodes=["c3", "e7", "b8"])
    for i in (0, 6, 11):
        op = solve_dc(mc.sample(i))
        for node in ("c3", "e7", "b8"):
            assert mc.dc[node][i] == pytest.approx(op.voltage(node), rel=1e-8, abs=1e-12)


def test_a_large_batch_never_forms_dense_conductances(monkeypatch):
    # (samples, n, n) is quadratic in the circuit: a forty-stage kit's took 260 MB a state
    def refuse(self, factors=None):
        if factors is not None and factors.shape[0] > 1:
            raise AssertionError("dense (samples, n, n) conductances formed")
        return original(self, factors)

    original = System.conductances
    monkeypatch.setattr(System, "conductances", refuse)
    batch = solve_batch(boost_chain(), samples=20, seed=2)
    assert np.isfinite(batch.x).all()


def test_gmin_steps_agree_with_the_dense_newton():
    # the fallback's shunted steps, from the same start, on both forms of one problem
    system = compile_circuit(boost_chain())
    problem, factors, _ = draw_problem(system, 16, 7, "uniform")
    assert isinstance(problem.g, SparseStack)
    dense = type(problem)(system.conductances(factors), problem.b, problem.devices,
                          problem.node_count)
    states = [initial_state(p, 16) for p in (problem, dense)]
    for p, state in zip((problem, dense), states, strict=True):
        assert newton(p, state, gshunt=1e-4).all()
    np.testing.assert_allclose(states[0].x, states[1].x, rtol=1e-8, atol=1e-12)


def test_the_sparse_matrices_equal_the_dense_ones():
    system = compile_circuit(boost_chain(3))
    factors = 1.0 + 0.05 * np.random.default_rng(1).uniform(-1, 1, (4, len(system.elements)))
    g = system.sparse_conductances(factors)
    np.testing.assert_allclose(g.dense(), system.conductances(factors), rtol=1e-15)
    x = np.random.default_rng(2).normal(size=(4, system.layout.size))
    np.testing.assert_allclose(g.times(x), np.einsum("sij,sj->si", g.dense(), x), rtol=1e-12)
    rhs = np.random.default_rng(3).normal(size=(4, system.layout.size))
    np.testing.assert_allclose(g.solve(rhs), np.linalg.solve(g.dense(), rhs[..., None])[..., 0],
                               rtol=1e-9)
