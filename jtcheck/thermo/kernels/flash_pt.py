"""Compiled isothermal flash at given T and P: stability test, then the phase split.

Michelsen, Fluid Phase Equilib. 9 (1982) 1-19 and 21-40 (Parts I and II); see :mod:`jtcheck.thermo.flash`.
"""
from __future__ import annotations

import numpy as np
from numba import njit

from jtcheck.thermo.kernels.constants import ST_FAIL_SPLIT, ST_SINGLE, ST_TWO
from jtcheck.thermo.kernels.single_phase import single_phase_beta
from jtcheck.thermo.kernels.split import split, two_phase_state
from jtcheck.thermo.kernels.stability import stability
from jtcheck.thermo.kernels.wilson import wilson_k
from jtcheck.thermo.models.interface import GIBBS, props

_jit = njit(cache=True, nogil=True)


@_jit
def flash_pt(prm, T, P, z, x, y, t_skip):
    """PT flash.  Returns (status, beta, h, s, tpd_min, iterations); fills x, y.

    Above ``t_skip`` [K] (the fluid's cricondentherm plus a margin, or +inf) the feed is known to be
    single-phase and the stability test is skipped."""
    n = z.size
    imax = 0
    for i in range(n):
        if z[i] > z[imax]:
            imax = i
    if n == 1 or z[imax] > 1.0 - 1e-12:
        for i in range(n):
            x[i] = z[i]
            y[i] = z[i]
        p = props(prm, T, P, z, GIBBS)
        return ST_SINGLE, single_phase_beta(prm, T, P, z), p[2], p[3], 0.0, 0
    W = np.empty(n)
    if T > t_skip:
        stable, tpd, lighter = True, 0.0, False
    else:
        stable, tpd, lighter, sconv = stability(prm, T, P, z, W)
    if stable:
        for i in range(n):
            x[i] = z[i]
            y[i] = z[i]
        p = props(prm, T, P, z, GIBBS)
        return ST_SINGLE, single_phase_beta(prm, T, P, z), p[2], p[3], tpd, 0
    K = np.empty(n)
    for attempt in range(2):
        if attempt == 0:
            for i in range(n):
                K[i] = W[i] / z[i] if lighter else z[i] / W[i]
        else:
            wilson_k(prm, T, P, K)
        status, beta, its = split(prm, T, P, z, K, x, y)
        if status == 1:
            h, s, _ = two_phase_state(prm, T, P, beta, x, y)
            return ST_TWO, beta, h, s, tpd, its
    for i in range(n):
        x[i] = z[i]
        y[i] = z[i]
    p = props(prm, T, P, z, GIBBS)
    return ST_FAIL_SPLIT, single_phase_beta(prm, T, P, z), p[2], p[3], tpd, 0
