"""Wilson K-values, the starting equilibrium ratios of stability tests and phase splits.

ln K_i = ln(Pc_i/P) + 5.373 (1 + w_i)(1 - Tc_i/T): Wilson, *A modified Redlich-Kwong equation of
state*, 64th AIChE National Meeting (1968).  The critical constants come from the model
(:func:`jtcheck.thermo.models.interface.critical_constants`).
"""
from __future__ import annotations

import math

from numba import njit

from jtcheck.thermo.models.interface import critical_constants

_jit = njit(cache=True, nogil=True)


@_jit
def wilson_k(prm, T, P, K):
    """Fill ``K`` [-], shape (n,), with Wilson K-values at temperature ``T`` [K] and pressure ``P`` [Pa]."""
    tcs, pcs, oms = critical_constants(prm)
    for i in range(tcs.size):
        K[i] = pcs[i] / P * math.exp(5.373 * (1.0 + oms[i]) * (1.0 - tcs[i] / T))
