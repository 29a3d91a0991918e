"""Small dense solves for the kernels: LU with partial pivoting, in place."""

from __future__ import annotations

import math

from kitleaf.engine.kernels import kernel


@kernel
def lu_factor(a, piv):
    """Factors ``a`` in place (row swaps in ``piv``); False when a pivot is zero or not a
    number (a singular or broken matrix: its solves give NaN, as reduced_steps.solve_each)."""
    n = a.shape[0]
    for k in range(n):
        best, row = abs(a[k, k]), k
        for i in range(k + 1, n):
            if abs(a[i, k]) > best:
                best, row = abs(a[i, k]), i
        piv[k] = row
        if not best > 0.0:
            return False
        if row != k:
            for j in range(n):
                a[k, j], a[row, j] = a[row, j], a[k, j]
        inv = 1.0 / a[k, k]
        for i in range(k + 1, n):
            factor = a[i, k] * inv
            a[i, k] = factor
            if factor != 0.0:
                for j in range(k + 1, n):
                    a[i, j] -= factor * a[k, j]
    return True


@kernel
def lu_solve(a, piv, ok, b):
    """Solves in place for the vector ``b`` with ``lu_factor``'s answer."""
    n = a.shape[0]
    if not ok:
        b[:] = math.nan
        return
    for k in range(n):
        if piv[k] != k:
            b[k], b[piv[k]] = b[piv[k]], b[k]
    for i in range(n):
        for j in range(i):
            b[i] -= a[i, j] * b[j]
    for i in range(n - 1, -1, -1):
        for j in range(i + 1, n):
            b[i] -= a[i, j] * b[j]
        b[i] /= a[i, i]


@kernel
def matvec(a, x, out):
    """out = a x."""
    for i in range(a.shape[0]):
        acc = 0.0
        for j in range(a.shape[1]):
            acc += a[i, j] * x[j]
        out[i] = acc


# Array assignments written out: ``a[...] = b`` brings in numba's runtime for the copy it
# makes when the two overlap, and the kernels run without it


@kernel
def copy_into(src, dst):
    """dst[:] = src, vectors."""
    for i in range(src.shape[0]):
        dst[i] = src[i]


@kernel
def copy_matrix(src, dst):
    """dst[:, :] = src, matrices."""
    for i in range(src.shape[0]):
        for j in range(src.shape[1]):
            dst[i, j] = src[i, j]
