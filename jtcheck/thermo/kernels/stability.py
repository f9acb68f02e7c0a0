"""Compiled tangent-plane stability test (Michelsen 1982, Part I).

Successive substitution from several trial phases, finished by Newton steps in alpha = 2 sqrt(W)
(Michelsen and Mollerup 2007, ch. 10); see :mod:`jtcheck.thermo.stability` for the method and its
references.
"""
from __future__ import annotations

import math

import numpy as np
from numba import njit

from jtcheck.thermo.kernels.linalg import cholesky_solve
from jtcheck.thermo.kernels.wilson import wilson_k
from jtcheck.thermo.models.interface import GIBBS, critical_constants, fug_derivs, ln_phi, polar_flags

_jit = njit(cache=True, nogil=True)


@_jit
def _tpd_newton(prm, T, P, d, W, max_iter):
    """Newton minimisation of tm in alpha = 2 sqrt(W) (Michelsen and Mollerup 2007, ch. 10)."""
    n = d.size
    lnphi = np.empty(n)
    dn = np.empty((n, n))
    dT = np.empty(n)
    dP = np.empty(n)
    vb = np.empty(n)
    w = np.empty(n)
    g = np.empty(n)
    grad = np.empty(n)
    hess = np.empty((n, n))
    tm = 0.0
    for _ in range(max_iter):
        Wt = W.sum()
        for i in range(n):
            w[i] = W[i] / Wt
        fug_derivs(prm, T, P, w, GIBBS, lnphi, dn, dT, dP, vb)
        tm = 1.0
        gmax = 0.0
        for i in range(n):
            g[i] = math.log(W[i]) + lnphi[i] - d[i]
            tm += W[i] * (g[i] - 1.0)
            grad[i] = math.sqrt(W[i]) * g[i]
            gmax = max(gmax, abs(grad[i]))
        if gmax < 1e-10:
            return tm, True
        for i in range(n):
            for j in range(n):
                hess[i, j] = math.sqrt(W[i] * W[j]) * dn[i, j] / Wt
            hess[i, i] += 1.0 + 0.5 * g[i]
        shift = 0.0
        step = np.zeros(n)
        rhs = -grad
        solved = False
        Hs = hess.copy()
        for _k in range(12):
            for i in range(n):
                Hs[i, i] = hess[i, i] + shift
            if cholesky_solve(Hs, rhs, step):
                solved = True
                break
            shift = max(4.0 * shift, 1e-3)
        if not solved:
            return tm, False
        for i in range(n):
            al = 2.0 * math.sqrt(W[i]) + step[i]
            al = max(al, 1e-150)
            W[i] = 0.25 * al * al
    return tm, False


@_jit
def stability(prm, T, P, z, W_out, max_ss=80, tol=1e-10):
    """Tangent-plane stability test.  Returns (stable, tpd_min, trial_is_lighter, converged).

    On instability ``W_out`` holds the normalised trial composition."""
    n = z.size
    lnphi_z = np.empty(n)
    Zf = ln_phi(prm, T, P, z, GIBBS, lnphi_z)
    d = np.empty(n)
    for i in range(n):
        d[i] = math.log(z[i]) + lnphi_z[i]
    Kw = np.empty(n)
    wilson_k(prm, T, P, Kw)
    tcs = critical_constants(prm)[0]
    polar = polar_flags(prm)
    heavy = 0
    for i in range(n):
        if tcs[i] > tcs[heavy]:
            heavy = i
    n_trials = 2
    for i in range(n):
        if polar[i] or i == heavy:
            n_trials += 1
    trials = np.empty((n_trials, n))
    for i in range(n):
        trials[0, i] = z[i] * Kw[i]
        trials[1, i] = z[i] / Kw[i]
    k = 2
    for c in range(n):
        if polar[c] or c == heavy:
            rest = max(1.0 - z[c], 1e-300)
            for i in range(n):
                trials[k, i] = 1e-3 * z[i] / rest
            trials[k, c] = 0.999
            k += 1
    W = np.empty(n)
    lnW = np.empty(n)
    w = np.empty(n)
    lnphi_w = np.empty(n)
    all_conv = True
    tpd_min = 0.0
    for t in range(n_trials):
        for i in range(n):
            W[i] = trials[t, i]
            lnW[i] = math.log(W[i])
        tm = 0.0
        conv = False
        trivial = False
        for _it in range(max_ss):
            Wt = W.sum()
            for i in range(n):
                w[i] = W[i] / Wt
            ln_phi(prm, T, P, w, GIBBS, lnphi_w)
            tm = 1.0
            delta = 0.0
            dz = 0.0
            bt = 0.0
            for i in range(n):
                tm += W[i] * (lnW[i] + lnphi_w[i] - d[i] - 1.0)
                bt += (W[i] - z[i]) * (lnW[i] - math.log(z[i]))
                new = d[i] - lnphi_w[i]
                delta = max(delta, abs(new - lnW[i]))
                lnW[i] = new
                W[i] = math.exp(new)
                dz += (w[i] - z[i]) ** 2
            if dz < 1e-10 and abs(tm) < 1e-6:
                trivial = True
                break
            # heading for the trivial solution: tm ~ beta/2 with beta small (Michelsen and
            # Mollerup 2007, ch. 10, the r = 2 tm / beta test)
            if bt < 1e-4 and tm > 0.0 and abs(2.0 * tm / bt - 1.0) < 0.2:
                trivial = True
                break
            if delta < tol:
                conv = True
                break
            if tm < -1e-3 and delta < 1e-2:
                conv = True   # clearly unstable: good enough to seed a split
                break
        if not conv and not trivial:
            tm, conv = _tpd_newton(prm, T, P, d, W, 30)
            Wt = W.sum()
            dz = 0.0
            for i in range(n):
                dz += (W[i] / Wt - z[i]) ** 2
            if dz < 1e-10:
                trivial = True
        if trivial:
            tm = 0.0
        elif not conv:
            all_conv = False
        if tm < tpd_min:
            tpd_min = tm
            Wt = W.sum()
            for i in range(n):
                W_out[i] = W[i] / Wt
        if tpd_min < -1e-3:
            break  # clearly unstable: no need to try the other trial phases
    if tpd_min < -1e-8:
        Zw = ln_phi(prm, T, P, W_out, GIBBS, lnphi_w)
        return False, tpd_min, Zw > Zf, True
    return True, tpd_min, False, all_conv
