"""One phase at given pressure and enthalpy or entropy: the bracketed temperature iteration.

At fixed pressure h(T) and s(T) of one phase are monotonic, so Newton steps safeguarded by a
bracket cannot diverge (Michelsen, Fluid Phase Equilib. 33 (1987) 13-27,
doi:10.1016/0378-3812(87)87002-4).  Also the vapour/liquid label of a single phase: a gas far above
its critical temperature, otherwise by the phase identification parameter (Venkatarathnam and
Oellrich 2011); see :func:`single_phase_beta`.
"""
from __future__ import annotations

import math

import numpy as np
from numba import njit

from jtcheck.thermo.kernels.constants import T_MAX, T_MIN
from jtcheck.thermo.models.interface import GIBBS, critical_constants, pip, props

_jit = njit(cache=True, nogil=True)
#: inlined into its callers: a compiled call that passes the parameter tuple costs a reference-count update per
#: array of the tuple
_jit_inline = njit(cache=True, nogil=True, inline="always")


@_jit_inline
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


#: A mixture is labelled gas above this multiple of its pseudo-critical temperature by Kay's rule
#: (Kay, Ind. Eng. Chem. 28 (1936) 1014-1019, T_pc = sum z_i Tc_i).  Kay's rule underestimates the true
#: critical temperature of asymmetric mixtures; the 25 % margin is our choice ("far above"), and keeps
#: the phase identification parameter in charge near the critical region, where it is meaningful.
GAS_ABOVE_KAY_TPC = 1.25


@_jit
def single_phase_beta(prm, T, P, z):
    """Vapour fraction [-] of a single phase at ``T`` [K], ``P`` [Pa]: 1 (gas, vapour-like) or 0 (liquid-like).

    The rule, in order:

    1. a pure component at or above its critical temperature is a gas: it cannot be liquefied by
       compression (above its critical pressure it is also called supercritical);
    2. a mixture at or above 1.25 times its pseudo-critical temperature by Kay's rule
       (:data:`GAS_ABOVE_KAY_TPC`) is a gas;
    3. otherwise the phase identification parameter of Venkatarathnam and Oellrich, Fluid Phase
       Equilib. 301 (2011) 225-233, doi:10.1016/j.fluid.2010.12.001: above 1 liquid-like, below 1
       vapour-like.

    Rules 1 and 2 are needed because the phase identification parameter of a dilute gas tends to
    1 + (B - T dB/dT)/v (second virial coefficient B), which exceeds 1 far above the Boyle
    temperature: alone it calls hydrogen or helium at room temperature and a few bar "liquid".
    """
    tcs, pcs, oms = critical_constants(prm)
    n = z.size
    imax = 0
    tpc = 0.0
    for i in range(n):
        tpc += z[i] * tcs[i]
        if z[i] > z[imax]:
            imax = i
    if n == 1 or z[imax] > 1.0 - 1e-12:
        if T >= tcs[imax]:
            return 1.0
    elif T >= GAS_ABOVE_KAY_TPC * tpc:
        return 1.0
    return 0.0 if pip(prm, T, P, z, GIBBS) > 1.0 else 1.0
