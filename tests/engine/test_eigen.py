"""Batched eigendecompositions refined from a reference sample, against LAPACK (numpy.linalg.eig).

Each check rebuilds A from the returned eigenpairs (A V = V diag(lambda), W V = I), so the
comparison does not depend on the order or scaling of the eigenvectors.
"""

import numpy as np

from kitleaf.engine import eigen


def graded_batch(samples: int, spread: float, seed: int = 7, reverse: bool = False
                 ) -> np.ndarray:
    """Matrices D M shaped like the port system's (each row scaled by a capacitance, D over
    nine decades, real eigenvalues), every entry of D and M moved by up to ``spread``."""
    rng = np.random.default_rng(seed)
    m = 9
    base = np.eye(m) * 2.0 + 0.5 * rng.uniform(-1, 1, (m, m))
    mats = base * (1 + spread * rng.uniform(-1, 1, (samples, m, m)))
    d = np.geomspace(1e-10, 1e-1, m)[::-1 if reverse else 1]
    return (d * (1 + spread * rng.uniform(-1, 1, (samples, m))))[:, :, None] * mats


def assert_decomposes(a: np.ndarray, values, vecs, inv, rtol: float) -> None:
    scale = np.abs(a).max(axis=(1, 2))[:, None, None]
    np.testing.assert_allclose((vecs @ (values[:, :, None] * inv)) / scale, a / scale,
                               atol=rtol)
    np.testing.assert_allclose(inv @ vecs, np.broadcast_to(np.eye(a.shape[-1]), a.shape),
                               atol=1e-7)


class TestEigBatch:
    def test_eigenvalues_equal_lapack(self):
        a = graded_batch(300, 0.2)
        values, vecs, inv = eigen.eig_batch(a)
        reference = np.sort(np.linalg.eigvals(a).real, axis=1)
        # both are exact to rounding relative to the largest eigenvalue (backward stable)
        np.testing.assert_allclose(np.sort(values.real, axis=1), reference, rtol=1e-9,
                                   atol=1e-13 * reference.max())
        assert_decomposes(a, values, vecs, inv, 1e-11)

    def test_most_samples_are_refined_not_re_solved(self):
        a = graded_batch(300, 0.2)
        vecs0 = np.linalg.eig(a[eigen._central(a)])[1]
        *_, settled = eigen._refine(a, vecs0, np.linalg.inv(vecs0))
        assert settled.mean() > 0.95

    def test_far_samples_fall_back_to_lapack(self):
        # a third of the batch graded the other way round: its eigenvectors are far from
        # the reference's, so those samples cannot settle and LAPACK answers them
        a = graded_batch(300, 0.05)
        a[::3] = graded_batch(100, 0.05, seed=8, reverse=True)
        vecs0 = np.linalg.eig(a[eigen._central(a)])[1]
        *_, settled = eigen._refine(a, vecs0, np.linalg.inv(vecs0))
        assert 0 < settled.sum() < settled.size
        values, vecs, inv = eigen.eig_batch(a)
        assert_decomposes(a, values, vecs, inv, 1e-11)

    def test_complex_eigenvalues(self):
        # a rotation in the two slowest rows: complex pairs, answered by LAPACK
        a = graded_batch(100, 0.1)
        a[:, -1, -2] = 0.5 * np.abs(a[:, -1, -1])
        a[:, -2, -1] = -0.5 * np.abs(a[:, -1, -1])
        values, vecs, inv = eigen.eig_batch(a)
        assert np.iscomplexobj(values)
        assert_decomposes(a, values, vecs, inv, 1e-11)

    def test_small_batches_use_lapack(self):
        a = graded_batch(eigen.MIN_BATCH - 1, 0.2)
        values, _, _ = eigen.eig_batch(a)
        np.testing.assert_array_equal(values, np.linalg.eig(a)[0])


def test_store_after_an_odd_number_of_sweeps():
    # V moves between two buffers every sweep: after one sweep the caller's arrays must
    # still receive the latest V, whose inverse is the latest W
    a = graded_batch(80, 0.05)
    vecs0 = np.linalg.eig(a[eigen._central(a)])[1]
    vecs = np.broadcast_to(vecs0, a.shape).copy()
    inv = np.broadcast_to(np.linalg.inv(vecs0), a.shape).copy()
    work = eigen._Work(a, vecs, inv)
    _, values = work.off_diagonal()
    work.sweep(values)
    work.store(vecs, inv, np.arange(a.shape[0]))
    np.testing.assert_array_equal(vecs, work.vecs)
    np.testing.assert_array_equal(inv, work.inv)
    # one sweep from 5 % away leaves W V within about 1e-6 of I; a V one sweep old is off
    # by the step itself (about 1e-2)
    np.testing.assert_allclose(inv @ vecs, np.broadcast_to(np.eye(a.shape[-1]), a.shape),
                               atol=1e-4)


def test_a_batch_in_any_memory_layout(monkeypatch):
    # the same matrices laid out row-major across the batch (a row of every sample, then
    # the next row), as a gather along the rows leaves them: the refinement must settle
    # them as it does a C-ordered batch, not leave them all to LAPACK
    a = graded_batch(300, 0.2)
    strided = np.moveaxis(np.ascontiguousarray(np.moveaxis(a, 1, 0)), 0, 1)
    assert not strided.flags["C_CONTIGUOUS"]
    to_lapack = []
    real_lapack = eigen._lapack
    monkeypatch.setattr(eigen, "_lapack", lambda x: to_lapack.append(x.shape[0]) or real_lapack(x))
    values, vecs, inv = eigen.eig_batch(strided)
    assert sum(to_lapack) < 0.05 * a.shape[0]
    assert_decomposes(a, values, vecs, inv, 1e-11)
