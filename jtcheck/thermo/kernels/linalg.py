"""Small dense linear algebra that reports failure instead of raising (safe inside ``prange``).

Gaussian elimination with partial pivoting and the Cholesky factorisation (Golub and Van Loan,
*Matrix Computations*, 4th ed., 2013, algorithms 3.4.1 and 4.2.1), for the n x n systems of the
Newton steps (n the number of components).
"""
from __future__ import annotations

import math

import numpy as np
from numba import njit

_jit = njit(cache=True, nogil=True)


@_jit
def lu_solve(A, b, out):
    """Solve A out = b by Gaussian elimination with partial pivoting; A, b are not modified.

    Returns False when A is singular to working precision."""
    n = b.size
    M = A.copy()
    r = b.copy()
    for k in range(n):
        p = k
        big = abs(M[k, k])
        for i in range(k + 1, n):
            if abs(M[i, k]) > big:
                big = abs(M[i, k])
                p = i
        if not big > 1e-300:
            return False
        if p != k:
            for j in range(n):
                tmp = M[k, j]
                M[k, j] = M[p, j]
                M[p, j] = tmp
            tmp = r[k]
            r[k] = r[p]
            r[p] = tmp
        for i in range(k + 1, n):
            f = M[i, k] / M[k, k]
            if f != 0.0:
                for j in range(k, n):
                    M[i, j] -= f * M[k, j]
                r[i] -= f * r[k]
    for i in range(n - 1, -1, -1):
        acc = r[i]
        for j in range(i + 1, n):
            acc -= M[i, j] * out[j]
        out[i] = acc / M[i, i]
        if not math.isfinite(out[i]):
            return False
    return True


@_jit
def cholesky_solve(A, b, out):
    """Solve A out = b for symmetric A by Cholesky; returns False unless A is positive definite."""
    n = b.size
    L = np.zeros((n, n))
    for i in range(n):
        for j in range(i + 1):
            acc = A[i, j]
            for k in range(j):
                acc -= L[i, k] * L[j, k]
            if i == j:
                if not acc > 0.0:
                    return False
                L[i, i] = math.sqrt(acc)
            else:
                L[i, j] = acc / L[j, j]
    tmp = np.empty(n)
    for i in range(n):
        acc = b[i]
        for k in range(i):
            acc -= L[i, k] * tmp[k]
        tmp[i] = acc / L[i, i]
    for i in range(n - 1, -1, -1):
        acc = tmp[i]
        for k in range(i + 1, n):
            acc -= L[k, i] * out[k]
        out[i] = acc / L[i, i]
    return True
