"""Compiled Rachford-Rice solver for the vapour fraction at fixed K-values.

Rachford and Rice (1952), safeguarded Newton inside the window of Leibovici and Neoschil (1992), terms
in the form of Nielsen and Lia (2023); see :mod:`jtcheck.thermo.rachford_rice` for the method and its
references.
"""
from __future__ import annotations

import numpy as np
from numba import njit

_jit = njit(cache=True, nogil=True)


@_jit
def rachford_rice(z, K, x, y):
    """Solve for beta in the Leibovici-Neoschil window; fill x, y. Returns (beta, ok).

    beta = +-inf when every K lies on one side of 1 (no split possible)."""
    n = z.size
    kmax = -1.0
    kmin = 1e300
    for i in range(n):
        kmax = max(kmax, K[i])
        kmin = min(kmin, K[i])
    if kmax <= 1.0:
        for i in range(n):
            x[i] = z[i]
            y[i] = z[i]
        return -np.inf, True
    if kmin >= 1.0:
        for i in range(n):
            x[i] = z[i]
            y[i] = z[i]
        return np.inf, True
    lo = -1e300
    hi = 1e300
    for i in range(n):
        if K[i] > 1.0:
            lo = max(lo, (K[i] * z[i] - 1.0) / (K[i] - 1.0))
        elif K[i] < 1.0:
            hi = min(hi, (1.0 - z[i]) / (1.0 - K[i]))
    beta = 0.5 * (lo + hi)
    ok = False
    for _ in range(200):
        f = 0.0
        df = 0.0
        for i in range(n):
            km1 = K[i] - 1.0
            if km1 == 0.0:
                continue
            den = 1.0 / km1 + beta
            f += z[i] / den
            df -= z[i] / (den * den)
        if f > 0.0:
            lo = beta
        else:
            hi = beta
        new = beta - f / df if df != 0.0 else 0.5 * (lo + hi)
        if not (lo < new < hi):
            new = 0.5 * (lo + hi)
        if abs(new - beta) <= 1e-15 * max(1.0, abs(beta)):
            beta = new
            ok = True
            break
        beta = new
    sx = 0.0
    sy = 0.0
    for i in range(n):
        x[i] = z[i] / (1.0 + beta * (K[i] - 1.0))
        y[i] = K[i] * x[i]
        sx += x[i]
        sy += y[i]
    for i in range(n):
        x[i] /= sx
        y[i] /= sy
    return beta, ok
