"""The per-sample check of the pole-residue form: a spoiled diagonalisation is caught by the
residual of its port system and answered by the direct port solve.

The reference is the direct batched solve of the whole MNA system (`BatchResult.solve_ac`),
which test_batch.py checks against the single-circuit solvers (themselves checked against
hand analysis and ngspice).
"""

import numpy as np

from kitleaf.engine import monte_carlo, ports, solve_batch
from kitleaf.engine.ports import backward_error

from . import reference_circuits as rc

FREQS = np.array([20.0, 1000.0, 50e3])
SPOILED = [3, 7]


def spoil(monkeypatch) -> None:
    """From now on, eig_split moves the poles of samples SPOILED by one part in 1e5."""
    real = ports.eig_split

    def spoiled(a):
        values, vecs, inv = real(a)
        values = values.copy()
        values[SPOILED] *= 1.0 + 1e-5
        return values, vecs, inv

    monkeypatch.setattr(ports, "eig_split", spoiled)


def test_spoiled_samples_are_flagged_and_solved_directly(monkeypatch):
    spoil(monkeypatch)
    batch = solve_batch(rc.boost(), samples=12, seed=6)
    rhs = batch.excitation("VIN")
    form = batch.response(rhs, list(range(batch.layout.size)))
    assert form.bad.tolist() == SPOILED
    np.testing.assert_allclose(form(FREQS), batch.solve_ac(FREQS, rhs), rtol=1e-9, atol=1e-12)



def test_monte_carlo_gains_equal_the_unspoiled_run(monkeypatch):
    clean = monte_carlo(rc.boost(), samples=12, seed=6, freqs=FREQS, source="VIN",
                        outputs=["out"])
    spoil(monkeypatch)
    again = monte_carlo(rc.boost(), samples=12, seed=6, freqs=FREQS, source="VIN",
                        outputs=["out"])
    for f in FREQS:
        np.testing.assert_allclose(again.response.gain_db[("out", f)],
                                   clean.response.gain_db[("out", f)], atol=1e-9)


def test_backward_error_of_an_exact_decomposition_is_rounding():
    # LAPACK's eigendecomposition is backward stable (Golub & Van Loan, Matrix Computations,
    # 7.5.6): its modal solution's backward error is a small multiple of eps
    rng = np.random.default_rng(1)
    dm = rng.uniform(1e-6, 1e-3, (5, 4, 4))
    z = rng.standard_normal((5, 4))
    values, vecs = np.linalg.eig(dm)
    weights = np.linalg.solve(vecs, z[..., None].astype(vecs.dtype))[..., 0]
    s = 2j * np.pi * np.array([10.0, 1e4])
    modes = weights[:, :, None] / (1.0 + s * values[:, :, None])
    assert np.all(backward_error(dm, z, vecs, modes, s) < 1e-13)
    for k in range(s.size):  # a spoiled answer at either frequency is seen
        spoiled = modes.copy()
        spoiled[:, :, k] *= 1 + 1e-6
        assert np.all(backward_error(dm, z, vecs, spoiled, s) > 1e-8)
