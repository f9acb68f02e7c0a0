"""Saturation temperature of a pure component at given pressure, from the model itself.

Equal fugacities of the liquid and vapour roots, ln phi^L(T) = ln phi^V(T), solved by Newton steps
d(ln phi^L - ln phi^V)/dT = (h_res^V - h_res^L)/(R T^2), safeguarded by bisection, from the Wilson
estimate T = Tc / (1 - ln(P/Pc) / (5.373 (1 + w))).
"""
from __future__ import annotations

import math

import numpy as np
from numba import njit

from jtcheck.thermo.kernels.constants import T_MIN
from jtcheck.thermo.models.interface import GIBBS, LIQUID, VAPOUR, R, critical_constants, ln_phi, pip, props

_jit = njit(cache=True, nogil=True)


@_jit
def pure_saturation_T(prm, P, z, i):
    """Saturation temperature of pure component i from the EOS [K]; nan above its critical point."""
    tcs, pcs, oms = critical_constants(prm)
    tc, pc, w = tcs[i], pcs[i], oms[i]
    if P >= pc:
        return np.nan
    T = tc / (1.0 - math.log(P / pc) / (5.373 * (1.0 + w)))
    T = min(T, 0.999 * tc)
    lo = T_MIN
    hi = 1.2 * tc
    n = z.size
    lL = np.empty(n)
    lV = np.empty(n)
    for _ in range(200):
        ZL = ln_phi(prm, T, P, z, LIQUID, lL)
        ZV = ln_phi(prm, T, P, z, VAPOUR, lV)
        if abs(ZV - ZL) < 1e-9:
            if pip(prm, T, P, z, GIBBS) > 1.0:
                lo = T
            else:
                hi = T
            Tn = 0.5 * (lo + hi)
        else:
            F = lL[i] - lV[i]
            if abs(F) < 1e-13:
                return T
            if F > 0.0:
                hi = T
            else:
                lo = T
            hL = props(prm, T, P, z, LIQUID)[8]
            hV = props(prm, T, P, z, VAPOUR)[8]
            dF = (hV - hL) / (R * T * T)
            Tn = T - F / dF if dF != 0.0 else 0.5 * (lo + hi)
            if not (lo < Tn < hi):
                Tn = 0.5 * (lo + hi)
        if hi - lo < 1e-11 * T:
            return np.nan
        T = Tn
    return np.nan
