"""Model functions at many states, compiled: the bridge from Python to the model interface.

The model interface (:mod:`jtcheck.thermo.models.interface`) is a set of numba functions chosen per model
family at compile time; Python cannot call them directly.  These loops call them at a list of states
(T [K], P [Pa], composition rows [-]) and fill arrays, so that the Python-level property functions
(:mod:`jtcheck.thermo.states`) work for every model family.
"""
from __future__ import annotations

from numba import njit

from jtcheck.thermo.models.interface import fug_derivs, ln_phi, pip, props

_jit = njit(cache=True, nogil=True)


@_jit
def props_many(prm, T, P, X, phase, out):
    """Fill ``out[k, :]`` with ``props(prm, T[k], P[k], X[k], phase)`` (10 values, see the interface)."""
    for k in range(T.size):
        r = props(prm, T[k], P[k], X[k], phase)
        out[k, 0] = r[0]
        out[k, 1] = r[1]
        out[k, 2] = r[2]
        out[k, 3] = r[3]
        out[k, 4] = r[4]
        out[k, 5] = r[5]
        out[k, 6] = r[6]
        out[k, 7] = r[7]
        out[k, 8] = r[8]
        out[k, 9] = r[9]


@_jit
def ln_phi_many(prm, T, P, X, phase, out, Z):
    """Fill ``out[k, :]`` with ln phi and ``Z[k]`` with the compressibility factor at state k."""
    for k in range(T.size):
        Z[k] = ln_phi(prm, T[k], P[k], X[k], phase, out[k])


@_jit
def fug_derivs_one(prm, T, P, x, phase, lnphi, dn, dT, dP, vbar):
    """ln phi and its derivatives at one state (fills the arrays); returns Z."""
    return fug_derivs(prm, T, P, x, phase, lnphi, dn, dT, dP, vbar)


@_jit
def pip_many(prm, T, P, X, phase, out):
    """Fill ``out[k]`` with the phase identification parameter at state k."""
    for k in range(T.size):
        out[k] = pip(prm, T[k], P[k], X[k], phase)
