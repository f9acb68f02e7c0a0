"""Compiled PH and PS flashes (Michelsen, Fluid Phase Equilib. 33 (1987) 13-27).

A single-phase answer is accepted only after a stability test; otherwise the two-phase answer is
found by Newton on the vapour mole numbers and T together, or, failing that, by a temperature
iteration on warm-started PT splits; a pure component is solved on its saturation line.  See
:mod:`jtcheck.thermo.flash` for the method and its references.
"""
from __future__ import annotations

import math

import numpy as np
from numba import njit

from jtcheck.thermo.kernels.constants import (
    ST_FAIL_INPUT,
    ST_FAIL_SINGLE,
    ST_FAIL_TWO,
    ST_PURE_SAT,
    ST_SINGLE,
    ST_TWO,
    T_MAX,
    T_MIN,
)
from jtcheck.thermo.kernels.linalg import lu_solve
from jtcheck.thermo.kernels.saturation import pure_saturation_T
from jtcheck.thermo.kernels.single_phase import single_phase_beta, solve_single, spec_tol, spec_value
from jtcheck.thermo.kernels.split import apply_step, gibbs_hessian, split, two_phase_state, two_phase_work
from jtcheck.thermo.kernels.stability import stability
from jtcheck.thermo.kernels.wilson import wilson_k
from jtcheck.thermo.models.interface import GIBBS, LIQUID, VAPOUR, R, fug_derivs, props

_jit = njit(cache=True, nogil=True)


@_jit
def _joint_newton(prm, P, target, z, T0, K, spec, x, y, max_iter=30):
    """Two-phase PH/PS flash by Newton on (vapour mole numbers v, T) together (Michelsen 1987).

    Equations: g_i = ln(y_i phi_i^V) - ln(x_i phi_i^L) = 0 and (spec(v, T) - target) = 0, with
    d g/d v = the Gibbs-energy Hessian, d g_i/d T = d ln phi_i^V/dT - d ln phi_i^L/dT,
    d h/d v_i = hbar_i^V - hbar_i^L = -R T^2 (d ln phi_i^V/dT - d ln phi_i^L/dT), d h/d T = V cp_V + L cp_L
    (for entropy: d s/d v_i = (hbar_i^V - hbar_i^L)/T - R g_i, d s/d T = (V cp_V + L cp_L)/T).
    Starts from a converged split at T0.  Returns (ok, T, beta, h, s, iterations, residual)."""
    n = z.size
    T = T0
    st, beta, its = split(prm, T, P, z, K, x, y, False)
    if st != 1:
        return False, T, beta, np.nan, np.nan, its, np.inf
    tol = spec_tol(spec, target)
    v = np.empty(n)
    l_ = np.empty(n)
    for i in range(n):
        v[i] = beta * y[i]
        l_[i] = (1.0 - beta) * x[i]
    lnV, lnL, dnV, dnL, dTV, dTL, dP_, vb = two_phase_work(n)
    J = np.empty((n + 1, n + 1))
    rhs = np.empty(n + 1)
    step = np.empty(n + 1)
    r = np.inf
    h = np.nan
    s = np.nan
    for it in range(1, max_iter + 1):
        V = v.sum()
        L = l_.sum()
        if not (V > 0.0 and L > 0.0):
            return False, T, V, np.nan, np.nan, its + it, r
        for i in range(n):
            y[i] = v[i] / V
            x[i] = l_[i] / L
        fug_derivs(prm, T, P, y, GIBBS, lnV, dnV, dTV, dP_, vb)
        fug_derivs(prm, T, P, x, GIBBS, lnL, dnL, dTL, dP_, vb)
        pV = props(prm, T, P, y, GIBBS)
        pL = props(prm, T, P, x, GIBBS)
        h = V * pV[2] + L * pL[2]
        s = V * pV[3] + L * pL[3]
        cpf = V * pV[4] + L * pL[4]
        gmax = 0.0
        for i in range(n):
            rhs[i] = -(math.log(y[i]) + lnV[i] - math.log(x[i]) - lnL[i])
            gmax = max(gmax, abs(rhs[i]))
        r = (h if spec == 0 else s) - target
        if gmax < 1e-10 and abs(r) <= tol:
            return True, T, V, h, s, its + it, r
        RTT = R * T * T
        gibbs_hessian(dnV, dnL, x, y, V, L, J)
        for i in range(n):
            dg = dTV[i] - dTL[i]
            J[i, n] = dg
            dh = -RTT * dg
            if spec == 0:
                J[n, i] = dh / (R * T)
            else:
                J[n, i] = (dh / T + R * rhs[i]) / R
        J[n, n] = cpf / (R * T) if spec == 0 else cpf / (R * T)
        rhs[n] = -r / (R * T) if spec == 0 else -r / R
        if not lu_solve(J, rhs, step):
            return False, T, V, h, s, its + it, r
        dT = step[n]
        lam = 1.0
        if abs(dT) > 10.0:
            lam = 10.0 / abs(dT)
        for i in range(n):
            if step[i] < 0.0:
                lam = min(lam, 0.9 * v[i] / -step[i])
            elif step[i] > 0.0:
                lam = min(lam, 0.9 * l_[i] / step[i])
        if lam < 1e-6:
            return False, T, V, h, s, its + it, r
        apply_step(z, v, l_, step[:n], lam)
        T += lam * dT
        if not (T_MIN < T < T_MAX):
            return False, T, V, h, s, its + it, r
    return False, T, v.sum(), h, s, its + max_iter, r


@_jit
def _solve_two_phase(prm, P, target, z, T0, K, spec, x, y, max_iter=60):
    """Two-phase temperature iteration.  Returns (status, T, beta, h, s, iterations, residual)."""
    n = z.size
    tol = spec_tol(spec, target)
    T = T0
    lo = T_MIN
    hi = T_MAX
    have_lo = False
    have_hi = False
    r = np.inf
    beta = np.nan
    Kbest = K.copy()
    W = np.empty(n)
    warm = False
    for it in range(1, max_iter + 1):
        for i in range(n):
            K[i] = Kbest[i]
        status, b_, its = split(prm, T, P, z, K, x, y, warm)
        if status != 1:
            wilson_k(prm, T, P, K)
            status, b_, its = split(prm, T, P, z, K, x, y, False)
        h = 0.0
        s = 0.0
        if status == 1:
            h, s, dh = two_phase_state(prm, T, P, b_, x, y)
            if spec == 0:
                val, dval = h, dh
            else:
                val, dval = s, dh / T
            for i in range(n):
                Kbest[i] = K[i]
            beta = b_
            two = True
            warm = True
        else:
            val, dval = spec_value(prm, T, P, z, spec, GIBBS)
            two = False
        r = val - target
        # converged on the tolerance, or (narrow-boiling fluids, where dh/dT is huge) on the
        # temperature resolution: the Newton step left is below 1e-10 T
        t_resolved = two and dval > 0.0 and abs(r) / dval < 1e-10 * T
        if abs(r) <= tol or t_resolved:
            if two:
                return ST_TWO, T, beta, h, s, it, r
            stable, tpd, lighter, sconv = stability(prm, T, P, z, W)
            if stable:
                for i in range(n):
                    x[i] = z[i]
                    y[i] = z[i]
                p = props(prm, T, P, z, GIBBS)
                return ST_SINGLE, T, single_phase_beta(prm, T, P, z), p[2], p[3], it, r
            for i in range(n):
                Kbest[i] = W[i] / z[i] if lighter else z[i] / W[i]
        if r > 0.0:
            hi = T
            have_hi = True
        else:
            lo = T
            have_lo = True
        Tn = T - r / dval if dval > 0.0 else np.nan
        if math.isfinite(Tn):
            Tn = min(max(Tn, T - 40.0), T + 40.0)
        if not math.isfinite(Tn) or not (lo < Tn < hi):
            if have_lo and have_hi:
                Tn = 0.5 * (lo + hi)
            elif have_hi:
                Tn = max(T - 10.0, T_MIN)
            else:
                Tn = min(T + 10.0, T_MAX)
        if have_lo and have_hi and hi - lo < 1e-10 * hi:
            break
        T = Tn
    return ST_FAIL_TWO, T, beta, np.nan, np.nan, max_iter, r


@_jit
def flash_spec(prm, P, target, z, T0, spec, x, y, t_skip):
    """PH (spec 0) or PS (spec 1) flash.

    Above ``t_skip`` [K] (the fluid's cricondentherm plus a margin, or +inf) a converged
    single-phase answer is accepted without a stability test.

    Returns (status, T, beta, h, s, iterations, residual, tpd_min); fills x, y."""
    n = z.size
    if not (math.isfinite(P) and math.isfinite(target) and math.isfinite(T0)):
        return ST_FAIL_INPUT, np.nan, np.nan, np.nan, np.nan, 0, np.nan, 0.0
    for i in range(n):
        x[i] = z[i]
        y[i] = z[i]
    imax = 0
    for i in range(n):
        if z[i] > z[imax]:
            imax = i
    if n == 1 or z[imax] > 1.0 - 1e-12:
        Tsat = pure_saturation_T(prm, P, z, imax)
        if math.isfinite(Tsat):
            vL, _ = spec_value(prm, Tsat, P, z, spec, LIQUID)
            vV, _ = spec_value(prm, Tsat, P, z, spec, VAPOUR)
            if vL <= target <= vV and vV > vL:
                q = (target - vL) / (vV - vL)
                pL = props(prm, Tsat, P, z, LIQUID)
                pV = props(prm, Tsat, P, z, VAPOUR)
                h = q * pV[2] + (1.0 - q) * pL[2]
                s = q * pV[3] + (1.0 - q) * pL[3]
                return ST_PURE_SAT, Tsat, q, h, s, 0, 0.0, 0.0
            if target > vV:
                T, ok, jump, its, r = solve_single(prm, P, target, z, max(T0, Tsat * 1.001), spec, VAPOUR,
                                                   Tsat, T_MAX)
            else:
                T, ok, jump, its, r = solve_single(prm, P, target, z, min(T0, Tsat * 0.999), spec, LIQUID,
                                                   T_MIN, Tsat)
        else:
            T, ok, jump, its, r = solve_single(prm, P, target, z, T0, spec, GIBBS, T_MIN, T_MAX)
        p = props(prm, T, P, z, GIBBS)
        return (ST_SINGLE if ok else ST_FAIL_SINGLE), T, single_phase_beta(prm, T, P, z), p[2], p[3], its, r, 0.0
    T, ok, jump, its, r = solve_single(prm, P, target, z, T0, spec, GIBBS, T_MIN, T_MAX)
    W = np.empty(n)
    if ok and T > t_skip:
        stable, tpd, lighter = True, 0.0, False
    else:
        stable, tpd, lighter, sconv = stability(prm, T, P, z, W)
    if ok and stable:
        p = props(prm, T, P, z, GIBBS)
        return ST_SINGLE, T, single_phase_beta(prm, T, P, z), p[2], p[3], its, r, tpd
    K = np.empty(n)
    if stable:
        wilson_k(prm, T, P, K)
    else:
        for i in range(n):
            K[i] = W[i] / z[i] if lighter else z[i] / W[i]
    K0 = K.copy()
    ok2, T2, beta, h, s, its2, r2 = _joint_newton(prm, P, target, z, T, K, spec, x, y)
    if ok2 and 0.0 < beta < 1.0:
        return ST_TWO, T2, beta, h, s, its + its2, r2, tpd
    for i in range(n):
        K[i] = K0[i]
    status, T2, beta, h, s, its2, r2 = _solve_two_phase(prm, P, target, z, T, K, spec, x, y)
    if status == ST_FAIL_TWO and ok and not jump:
        for i in range(n):
            x[i] = z[i]
            y[i] = z[i]
        p = props(prm, T, P, z, GIBBS)
        return ST_FAIL_TWO, T, single_phase_beta(prm, T, P, z), p[2], p[3], its + its2, r2, tpd
    return status, T2, beta, h, s, its + its2, r2, tpd
