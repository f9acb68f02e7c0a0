"""One phase at given pressure and enthalpy or entropy: the bracketed temperature iteration.

At fixed pressure h(T) and s(T) of one phase are monotonic, so Newton steps safeguarded by a
bracket cannot diverge (Michelsen, Fluid Phase Equilib. 33 (1987) 13-27,
doi:10.1016/0378-3812(87)87002-4).  Also the vapour/liquid label of a single phase by the phase
identification parameter (Venkatarathnam and Oellrich 2011).
"""
from __future__ import annotations

import math

import numpy as np
from numba import njit

from jtcheck.thermo.kernels.constants import T_MAX, T_MIN
from jtcheck.thermo.models.interface import GIBBS, pip, props

_jit = njit(cache=True, nogil=True)


@_jit
def spec_value(prm, T, P, z, spec, phase):
    """(value, d value/dT) for spec 0 = enthalpy [J/mol], 1 = entropy [J/mol/K]."""
    p = props(prm, T, P, z, phase)
    if spec == 0:
        return p[2], p[4]
    return p[3], p[4] / T


@_jit
def spec_tol(spec, target):
    """Tolerance on the residual of a specification: 1e-9 relative for enthalpy [J/mol], 1e-12 for entropy."""
    return (1e-9 if spec == 0 else 1e-12) * max(1.0, abs(target))


@_jit
def solve_single(prm, P, target, z, T0, spec, phase, T_lo, T_hi, max_iter=100):
    """Bracketed Newton on T for one phase.  Returns (T, converged, jump, iterations, residual)."""
    T = min(max(T0, T_MIN), T_MAX)
    tol = spec_tol(spec, target)
    lo = T_lo
    hi = T_hi
    have_lo = T_lo > T_MIN
    have_hi = T_hi < T_MAX
    r = np.inf
    for it in range(1, max_iter + 1):
        val, dval = spec_value(prm, T, P, z, spec, phase)
        r = val - target
        if abs(r) <= tol:
            return T, True, False, it, r
        if r > 0.0:
            hi = T
            have_hi = True
        else:
            lo = T
            have_lo = True
        Tn = T - r / dval if (dval > 0.0 and math.isfinite(dval)) else np.nan
        if math.isfinite(Tn):
            Tn = min(max(Tn, 0.5 * T), 1.5 * T)
        if not math.isfinite(Tn) or not (lo < Tn < hi):
            if have_lo and have_hi:
                Tn = 0.5 * (lo + hi)
            elif not have_hi:
                Tn = min(1.5 * T, T_MAX)
            else:
                Tn = max(0.5 * T, T_MIN)
        if have_lo and have_hi and (hi - lo) < 1e-9 * hi:
            return 0.5 * (lo + hi), False, True, it, r
        if abs(Tn - T) < 1e-13 * T:
            return Tn, abs(r) <= 1e3 * tol, False, it, r
        T = Tn
    return T, False, False, max_iter, r


@_jit
def single_phase_beta(prm, T, P, z):
    """Vapour fraction [-] of a single phase, 1 (vapour-like) or 0 (liquid-like), by the phase identification
    parameter at ``T`` [K], ``P`` [Pa]."""
    return 0.0 if pip(prm, T, P, z, GIBBS) > 1.0 else 1.0
