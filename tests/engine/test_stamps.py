"""Stamp maps: a stacked map equals its two parts applied apart (block-diagonal product;
common practice, no source)."""

import numpy as np
import pytest

from kitleaf.engine.stamps import DENSE_ENTRIES, Pattern, VectorPattern, stacked


def maps(size: int):
    vector, matrix = VectorPattern(size), Pattern(size)
    for col in range(size):
        vector.entry(col, col, 1.0)
        vector.entry(col, (col + 1) % (size + 1), -1.0)  # index ``size`` is ground: dropped
        matrix.transconductance(col, col, size, (col + 2) % size, size)
    return vector.matrix(size), matrix.matrix(size)


@pytest.mark.parametrize("size, samples", [(4, 1), (4, 50), (70, 50)])
def test_stacked_map_equals_its_parts(size, samples):
    top, bottom = maps(size)
    both = stacked(top, bottom)
    assert (both.shape[0] * both.shape[1] > DENSE_ENTRIES) == (size == 70)  # both paths
    rng = np.random.default_rng(size + samples)
    first, second = rng.normal(size=(samples, size)), rng.normal(size=(samples, size))
    got = both.apply(np.concatenate([first, second], axis=1))
    np.testing.assert_allclose(got, np.concatenate([top.apply(first), bottom.apply(second)],
                                                   axis=1), rtol=1e-14, atol=1e-14)
