"""Compiled two-phase split at given T and P (Michelsen 1982, Part II).

Successive substitution on the K-values with the Rachford-Rice solver, finished by Newton steps on
the vapour mole numbers with the analytic Hessian of the Gibbs energy (Michelsen, Fluid Phase
Equilib. 9 (1982) 21-40, doi:10.1016/0378-3812(82)85002-4); and the enthalpy, entropy and dh/dT of a
converged split.
"""
from __future__ import annotations

import math

import numpy as np
from numba import njit

from jtcheck.thermo.kernels.linalg import lu_solve
from jtcheck.thermo.kernels.rachford_rice import rachford_rice
from jtcheck.thermo.models.interface import GIBBS, R, fug_derivs, ln_phi, props

_jit = njit(cache=True, nogil=True)


@_jit
def split(prm, T, P, z, K, x, y, warm=False, max_ss=300, tol=1e-10):
    """Two-phase split from K-values (updated in place); fills x, y.

    With ``warm`` (K from a converged split nearby) the substitution stage is skipped and Newton
    starts at once; if that fails the full path is taken.

    Returns (status, beta, iterations): status 1 converged two-phase, 0 no split (trivial or
    beta outside (0, 1)), -1 not converged."""
    n = z.size
    lnphiL = np.empty(n)
    lnphiV = np.empty(n)
    it = 0
    beta = 0.5
    if warm:
        K0 = K.copy()
        beta, ok = rachford_rice(z, K, x, y)
        if 0.0 < beta < 1.0:
            st, beta, its = _split_newton(prm, T, P, z, K, x, y, beta, tol)
            if st == 1:
                return 1, beta, its
        for i in range(n):
            K[i] = K0[i]
    for it in range(1, max_ss + 1):
        beta, ok = rachford_rice(z, K, x, y)
        if not math.isfinite(beta):
            return 0, beta, it
        ln_phi(prm, T, P, x, GIBBS, lnphiL)
        ln_phi(prm, T, P, y, GIBBS, lnphiV)
        err = 0.0
        triv = 0.0
        for i in range(n):
            lk = lnphiL[i] - lnphiV[i]
            err = max(err, abs(lk - math.log(K[i])))
            K[i] = math.exp(lk)
            triv += lk * lk
        if triv < 1e-8 * n:
            return 0, beta, it
        if err < 1e-5 and 0.0 < beta < 1.0:
            break
        if err < tol:
            break
    beta, ok = rachford_rice(z, K, x, y)
    if not (0.0 < beta < 1.0):
        return 0, beta, it
    st, beta, its = _split_newton(prm, T, P, z, K, x, y, beta, tol)
    return st, beta, it + its


@_jit
def two_phase_work(n):
    """Work arrays for the fugacity derivatives of a vapour and a liquid of ``n`` components:
    (ln phi V, ln phi L, d/dn V, d/dn L, d/dT V, d/dT L, d/dP, partial molar volumes)."""
    return (np.empty(n), np.empty(n), np.empty((n, n)), np.empty((n, n)), np.empty(n), np.empty(n), np.empty(n),
            np.empty(n))


@_jit
def gibbs_hessian(dnV, dnL, x, y, V, L, H):
    """Fill H[:n, :n] with the Hessian of the Gibbs energy in the vapour mole numbers,
    (delta_ij / y_i - 1 + n d ln phi_i/d n_j)^V / V + (same)^L / L (Michelsen 1982, Part II)."""
    n = x.size
    for i in range(n):
        for j in range(n):
            H[i, j] = (dnV[i, j] - 1.0) / V + (dnL[i, j] - 1.0) / L
        H[i, i] += 1.0 / (y[i] * V) + 1.0 / (x[i] * L)


@_jit
def apply_step(z, v, l_, dv, lam):
    """v += lam dv, l = z - v, updating each component through its smaller share (no cancellation)."""
    for i in range(z.size):
        if v[i] <= l_[i]:
            v[i] += lam * dv[i]
            l_[i] = z[i] - v[i]
        else:
            l_[i] -= lam * dv[i]
            v[i] = z[i] - l_[i]


@_jit
def _split_newton(prm, T, P, z, K, x, y, beta, tol):
    """Newton on the vapour mole numbers from (beta, x, y) (Michelsen 1982, Part II).

    Each component's smaller share (in vapour or in liquid) is the one updated, the other follows as
    z_i minus it (:func:`apply_step`), so that a phase of a millionth of the feed just inside a dew
    or bubble line, and a trace component in either phase, keep their precision.
    Returns (status, beta, iterations), status 1 converged, 0 trivial or beta outside (0, 1),
    -1 failed; K, x, y updated."""
    n = z.size
    it = 0
    v = np.empty(n)
    l_ = np.empty(n)
    for i in range(n):
        v[i] = beta * y[i]
        l_[i] = (1.0 - beta) * x[i]
    fdV_ln = np.empty(n)
    fdL_ln = np.empty(n)
    dnV = np.empty((n, n))
    dnL = np.empty((n, n))
    dT_ = np.empty(n)
    dP_ = np.empty(n)
    vb = np.empty(n)
    g = np.empty(n)
    H = np.empty((n, n))
    dv = np.empty(n)
    converged = False
    V = beta
    for _k in range(40):
        it += 1
        V = v.sum()
        L = l_.sum()
        for i in range(n):
            y[i] = v[i] / V
            x[i] = l_[i] / L
        fug_derivs(prm, T, P, y, GIBBS, fdV_ln, dnV, dT_, dP_, vb)
        fug_derivs(prm, T, P, x, GIBBS, fdL_ln, dnL, dT_, dP_, vb)
        gmax = 0.0
        for i in range(n):
            g[i] = math.log(y[i]) + fdV_ln[i] - math.log(x[i]) - fdL_ln[i]
            gmax = max(gmax, abs(g[i]))
        if gmax < tol:
            converged = True
            break
        gibbs_hessian(dnV, dnL, x, y, V, L, H)
        if not lu_solve(H, -g, dv):
            break
        lam = 1.0
        for i in range(n):
            if dv[i] < 0.0:
                lam = min(lam, 0.9 * v[i] / -dv[i])
            elif dv[i] > 0.0:
                lam = min(lam, 0.9 * l_[i] / dv[i])
        apply_step(z, v, l_, dv, lam)
    triv = 0.0
    for i in range(n):
        K[i] = y[i] / x[i]
        triv += math.log(K[i]) ** 2
    beta = V
    if triv < 1e-8 * n:
        return 0, beta, it
    if not converged:
        return -1, beta, it
    if not (0.0 < beta < 1.0):
        return 0, beta, it
    return 1, beta, it


@_jit
def two_phase_state(prm, T, P, beta, x, y):
    """Total h [J/mol], s [J/mol/K] and dh/dT [J/mol/K] of a converged split."""
    n = x.size
    pV = props(prm, T, P, y, GIBBS)
    pL = props(prm, T, P, x, GIBBS)
    V = beta
    L = 1.0 - beta
    h = V * pV[2] + L * pL[2]
    s = V * pV[3] + L * pL[3]
    lnV, lnL, dnV, dnL, dTV, dTL, dP_, vb = two_phase_work(n)
    fug_derivs(prm, T, P, y, GIBBS, lnV, dnV, dTV, dP_, vb)
    fug_derivs(prm, T, P, x, GIBBS, lnL, dnL, dTL, dP_, vb)
    H = np.empty((n, n))
    dg = np.empty(n)
    gibbs_hessian(dnV, dnL, x, y, V, L, H)
    for i in range(n):
        dg[i] = dTV[i] - dTL[i]
    dv = np.zeros(n)
    if not lu_solve(H, -dg, dv):
        return h, s, np.nan
    dh = V * pV[4] + L * pL[4]
    for i in range(n):
        dh += -R * T * T * dg[i] * dv[i]
    return h, s, dh
