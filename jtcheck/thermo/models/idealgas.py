"""Compiled ideal-gas heat capacity, enthalpy and entropy of mixtures (numba, nopython).

The twin of the readable numpy module :mod:`jtcheck.thermo.idealgas`, written as scalar loops so that
a model family's ``props`` kernel can add the ideal-gas part without allocating.  The heat capacity
has the form of Aly and Lee (1981), DIPPR equation 107,

    cp_ig(T) = A + B ((C/T) / sinh(C/T))^2 + D ((E/T) / cosh(E/T))^2,

integrated in closed form for the enthalpy and entropy; hyperbolic functions are evaluated through
exp(-2 C/T) so that nothing overflows at low temperature.

Aly, F. A. and Lee, L. L., Self-consistent equations for calculating the ideal gas heat capacity,
enthalpy, and entropy, Fluid Phase Equilib. 6 (1981) 169-179, doi:10.1016/0378-3812(81)85002-9.

The coefficients of a mixture are arrays of shape (n,): A, B, D [J/(mol K)], C, E [K], and the
antiderivatives at :data:`T_REF` from :func:`ideal_gas_reference` [J/mol], [J/(mol K)].  They are
passed as separate arrays, not as one nested tuple: a model's parameter tuple reaches ``prange``
loops, whose parallel lowering (numba 0.68) rejects tuples nested in tuples.
"""
from __future__ import annotations

import math

import numpy as np
from numba import njit

from jtcheck.thermo.models.conventions import T_REF

LN2 = math.log(2.0)

_jit = njit(cache=True, nogil=True)


@_jit
def _aly_lee_terms(A, B, C, D, E, T):
    """Heat capacity and the enthalpy and entropy antiderivatives of one component (Aly and Lee 1981).

    Parameters
    ----------
    A, B, D : float
        Aly-Lee coefficients [J/(mol K)].
    C, E : float
        Aly-Lee coefficients [K].
    T : float
        Temperature [K].

    Returns
    -------
    cp : float
        Ideal-gas heat capacity [J/(mol K)].
    h : float
        Enthalpy antiderivative A T + B C coth(C/T) - D E tanh(E/T) [J/mol] (no reference subtracted).
    s : float
        Entropy antiderivative of cp/T [J/(mol K)] (no reference subtracted).
    """
    cp = A
    h = A * T
    s = A * math.log(T)
    if B != 0.0:
        if C > 1e-12:
            x = C / T
            e2 = math.exp(-2.0 * x)
            r = 2.0 * x * math.exp(-x) / (1.0 - e2)      # x / sinh(x)
            coth = (1.0 + e2) / (1.0 - e2)
            cp += B * r * r
            h += B * C * coth
            s += B * (x * coth - (x + math.log1p(-e2) - LN2))
        else:
            cp += B
            h += B * T
            s += B * math.log(T)
    if D != 0.0:
        if E > 1e-12:
            y = E / T
            e2 = math.exp(-2.0 * y)
            sech = 2.0 * math.exp(-y) / (1.0 + e2)
            th = (1.0 - e2) / (1.0 + e2)
            cp += D * (y * sech) ** 2
            h -= D * E * th
            s -= D * (y * th - (y + math.log1p(e2) - LN2))
        else:
            pass
    return cp, h, s


@_jit
def ideal_gas_reference(A, B, C, D, E):
    """Enthalpy [J/mol] and entropy [J/(mol K)] antiderivatives of each component at T_REF = 298.15 K.

    Parameters
    ----------
    A, B, C, D, E : numpy.ndarray
        Aly-Lee coefficients of each component, shape (n,): A, B, D [J/(mol K)], C, E [K].

    Returns
    -------
    h_ref, s_ref : numpy.ndarray
        Shape (n,), subtracted by :func:`ideal_gas` so that the ideal gas at 298.15 K has h = 0.
    """
    n = A.size
    h_ref = np.empty(n)
    s_ref = np.empty(n)
    for i in range(n):
        _, h_ref[i], s_ref[i] = _aly_lee_terms(A[i], B[i], C[i], D[i], E[i], T_REF)
    return h_ref, s_ref


@_jit
def ideal_gas(cA, cB, cC, cD, cE, h_ref, s_ref, T, x):
    """Ideal-gas heat capacity, enthalpy and temperature part of the entropy of a mixture.

    Parameters
    ----------
    cA, cB, cD : numpy.ndarray
        Aly-Lee coefficients A, B, D of each component [J/(mol K)], shape (n,).
    cC, cE : numpy.ndarray
        Aly-Lee coefficients C, E of each component [K], shape (n,).
    h_ref, s_ref : numpy.ndarray
        Antiderivatives at T_REF from :func:`ideal_gas_reference` [J/mol], [J/(mol K)], shape (n,).
    T : float
        Temperature [K].
    x : numpy.ndarray
        Mole fractions [-], shape (n,).

    Returns
    -------
    cp : float
        sum x_i cp_i [J/(mol K)].
    h : float
        sum x_i (h_i(T) - h_i(T_REF)) [J/mol].
    s : float
        sum x_i (s_i(T) - s_i(T_REF)) [J/(mol K)]; the pressure and mixing terms are the caller's.
    """
    cp = 0.0
    h = 0.0
    s = 0.0
    for i in range(x.size):
        if x[i] == 0.0:
            continue
        c_, h_, s_ = _aly_lee_terms(cA[i], cB[i], cC[i], cD[i], cE[i], T)
        h0 = h_ref[i]
        s0 = s_ref[i]
        cp += x[i] * c_
        h += x[i] * (h_ - h0)
        s += x[i] * (s_ - s0)
    return cp, h, s
