"""The batched sparse LU against LAPACK's dense solve on MNA-shaped matrices."""

import numpy as np
import pytest

from kitleaf.engine.batch_lu import solve_many


def mna_like(samples: int, size: int, seed: int) -> np.ndarray:
    """Sparse, diagonally weighted matrices with a zero-diagonal branch row, as MNA has."""
    rng = np.random.default_rng(seed)
    pattern = rng.random((size, size)) < 0.15
    np.fill_diagonal(pattern, True)
    a = np.where(pattern, rng.normal(size=(samples, size, size)), 0.0)
    a[:, range(size), range(size)] += 4.0
    a[:, -1, :] = 0.0  # a voltage-source row: v_0 = value, no diagonal entry
    a[:, -1, 0] = a[:, 0, -1] = 1.0
    a[:, -1, -1] = 0.0
    return a


class TestSolveMany:
    @pytest.mark.parametrize("dtype", [float, complex])
    def test_matches_dense_solve(self, dtype):
        a = mna_like(64, 20, 1).astype(dtype)
        b = np.random.default_rng(2).normal(size=(64, 20, 3)).astype(dtype)
        # LAPACK (numpy.linalg.solve) is the reference
        np.testing.assert_allclose(solve_many(a, b), np.linalg.solve(a, b), rtol=1e-9,
                                   atol=1e-12)

    def test_sample_unsuited_to_the_shared_pivots_is_still_right(self):
        a = mna_like(64, 20, 3)
        a[5] = a[5][[0, 2, 1, *range(3, 20)]]  # rows swapped: sample 0's pivots misfit it
        assert a[5, 1, 1] == 0.0
        b = np.ones((64, 20, 1))
        np.testing.assert_allclose(solve_many(a, b), np.linalg.solve(a, b), rtol=1e-9,
                                   atol=1e-12)


class TestGrowthCheck:
    """The multiplier check (threshold pivoting) against LAPACK's dense solve."""

    def test_many_right_hand_sides_match_dense_solve(self):
        a = mna_like(64, 12, 4)
        b = np.random.default_rng(5).normal(size=(64, 12, 24))
        np.testing.assert_allclose(solve_many(a, b, check="growth"), np.linalg.solve(a, b),
                                   rtol=1e-9, atol=1e-12)

    @pytest.mark.parametrize("pivot", [0.0, 1e-9])
    def test_sample_with_a_tiny_shared_pivot_is_solved_densely(self, pivot):
        a = mna_like(64, 12, 6)
        a[5] = a[5][[0, 2, 1, *range(3, 12)]]  # sample 0's pivot order misfits sample 5
        a[5, 1, 1] = pivot  # zero, or small enough that its multipliers reach 1e9
        b = np.ones((64, 12, 10))
        np.testing.assert_allclose(solve_many(a, b, check="growth"), np.linalg.solve(a, b),
                                   rtol=1e-9, atol=1e-12)
