"""Compiled UV and TV flashes: the equilibrium state of a closed volume (vessel depressurisation).

Michelsen, Fluid Phase Equilib. 158-160 (1999) 617-626 (state-function based flash specifications,
doi:10.1016/S0378-3812(99)00092-8): the internal energy u and molar volume v (or T and v) are met by
Newton steps on (T, ln P) around the model's (T, P) functions, with analytic derivatives:

- one phase: dv/dT = -(dP/dT)_v / (dP/dv)_T, dv/dP = 1/(dP/dv)_T, and with u = h - P v,
  du/dT = cp - P dv/dT, du/dP = -T dv/dT - P dv/dP;
- two phases at fixed feed: each iterate is a converged (warm-started) PT split, and the sensitivity of
  the vapour mole numbers to T and P, dnu/dT = -H^-1 dg/dT and dnu/dP = -H^-1 dg/dP (H the Gibbs-energy
  Hessian of Michelsen 1982 Part II), adds sum_i (hbar_i^V - hbar_i^L) dnu_i and sum_i (vbar_i^V -
  vbar_i^L) dnu_i to the phase sums, with hbar_i^V - hbar_i^L = -R T^2 (d ln phi_i^V/dT - d ln phi_i^L/dT).

A single-phase answer is accepted only after the tangent-plane stability test at it (skipped above
``t_skip``, the fluid's cricondentherm plus a margin); an unstable one restarts on the two-phase branch
from the trial phase's K-values.  A pure component inside its dome is solved on the saturation line:
the lever rule on v gives the quality at each saturation pressure, and a bracketed secant on ln P meets
u.  Model functions come only from :mod:`jtcheck.thermo.models.interface`, so the flashes work for
every model family behind it.

Both return (status, T, P, beta, h, s, iterations, residual, tpd_min) and fill x, y; the status codes
are those of :mod:`jtcheck.thermo.kernels.constants` (10 and above: failure, never an answer).
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
from jtcheck.thermo.kernels.single_phase import single_phase_beta
from jtcheck.thermo.kernels.split import gibbs_hessian, split, two_phase_work
from jtcheck.thermo.kernels.stability import stability
from jtcheck.thermo.kernels.wilson import wilson_k
from jtcheck.thermo.models.interface import GIBBS, LIQUID, VAPOUR, R, critical_constants, fug_derivs, props

_jit = njit(cache=True, nogil=True)

#: Pressure window of the iterations [Pa].
P_MIN = 1.0
P_MAX = 1.0e9
#: A converged one-phase state whose stability test finds a tangent-plane distance above this [-] but no split
#: is accepted as one phase (the very edge of the envelope).
EDGE_TPD = -1e-8
#: Convergence: |u - u_target| <= U_TOL R T and |ln(v / v_target)| <= V_TOL.
U_TOL = 1e-11
V_TOL = 1e-11
#: On the two-phase branch the tolerances are this many times wider: each iterate is a phase split converged to
#: 1e-10 in ln K, which limits how closely u and v can be met (about 1e-9 with a phase of a few ppm).
TWO_PHASE_TOL_FACTOR = 100.0
#: ... and a two-phase iteration whose residual stops halving below this is accepted (the split's precision).
STAGNATION_TOL = 1e-7


@_jit
def _one_phase(prm, T, P, z, phase):
    """(u, v, du/dT, du/dP, dv/dT, dv/dP, h, s) of one phase at T [K], P [Pa]."""
    p = props(prm, T, P, z, phase)
    v = p[1]
    dvdT = -p[6] / p[7]
    dvdP = 1.0 / p[7]
    u = p[2] - P * v
    return u, v, p[4] - P * dvdT, -T * dvdT - P * dvdP, dvdT, dvdP, p[2], p[3]


@_jit
def _two_phase(prm, T, P, beta, x, y):
    """(u, v, du/dT, du/dP, dv/dT, dv/dP, h, s) of a converged split, per mole of feed, on the equilibrium path."""
    n = x.size
    pV = props(prm, T, P, y, GIBBS)
    pL = props(prm, T, P, x, GIBBS)
    V = beta
    L = 1.0 - beta
    lnV, lnL, dnV, dnL, dTV, dTL, dPV, vbV = two_phase_work(n)
    dPL = np.empty(n)
    vbL = np.empty(n)
    fug_derivs(prm, T, P, y, GIBBS, lnV, dnV, dTV, dPV, vbV)
    fug_derivs(prm, T, P, x, GIBBS, lnL, dnL, dTL, dPL, vbL)
    H = np.empty((n, n))
    gibbs_hessian(dnV, dnL, x, y, V, L, H)
    gT = np.empty(n)
    gP = np.empty(n)
    for i in range(n):
        gT[i] = -(dTV[i] - dTL[i])
        gP[i] = -(dPV[i] - dPL[i])
    nuT = np.zeros(n)
    nuP = np.zeros(n)
    h = V * pV[2] + L * pL[2]
    s = V * pV[3] + L * pL[3]
    v = V * pV[1] + L * pL[1]
    dvdT_V = -pV[6] / pV[7]
    dvdT_L = -pL[6] / pL[7]
    dvdP_V = 1.0 / pV[7]
    dvdP_L = 1.0 / pL[7]
    dHdT = V * pV[4] + L * pL[4]
    dVdT = V * dvdT_V + L * dvdT_L
    dHdP = V * (pV[1] - T * dvdT_V) + L * (pL[1] - T * dvdT_L)
    dVdP = V * dvdP_V + L * dvdP_L
    if lu_solve(H, gT, nuT) and lu_solve(H, gP, nuP):
        RTT = R * T * T
        for i in range(n):
            dh_i = RTT * gT[i]          # hbar_V - hbar_L = -R T^2 (dlnphiV/dT - dlnphiL/dT)
            dv_i = vbV[i] - vbL[i]
            dHdT += dh_i * nuT[i]
            dVdT += dv_i * nuT[i]
            dHdP += dh_i * nuP[i]
            dVdP += dv_i * nuP[i]
    else:
        dHdT = np.nan
    u = h - P * v
    return u, v, dHdT - P * dVdT, dHdP - v - P * dVdP, dVdT, dVdP, h, s


@_jit
def _newton_tp(prm, u_t, v_t, z, T, P, fix_T, two, K, x, y, max_iter):
    """Newton on (T, ln P) (or ln P alone when ``fix_T``) to meet u_t [J/mol] and v_t [m^3/mol].

    One phase (``two`` False, Gibbs root) or the two-phase branch (each iterate a warm PT split from K).
    Returns (code, T, P, beta, h, s, iterations, residual): code 1 converged, 0 not converged,
    2 the split vanished (left the two-phase region) at the returned T, P."""
    n = z.size
    beta = 1.0
    h = np.nan
    s = np.nan
    r = np.inf
    lnP = math.log(P)
    warm = True
    T_prev = np.nan
    lnP_prev = np.nan
    dT = 0.0
    dlnP = 0.0
    Kprev = K.copy()
    r_last = np.inf
    for it in range(1, max_iter + 1):
        if two:
            st, b_, _its = split(prm, T, P, z, K, x, y, warm)
            back = 0
            while st != 1 and math.isfinite(T_prev) and back < 10:
                # the step left the two-phase region: go back along it (the answer may lie just inside the edge)
                back += 1
                dT *= 0.5
                dlnP *= 0.5
                T = T_prev + dT
                lnP = lnP_prev + dlnP
                P = math.exp(lnP)
                for i in range(n):
                    K[i] = Kprev[i]
                st, b_, _its = split(prm, T, P, z, K, x, y, warm)
            if st != 1:
                return 2, T, P, beta, h, s, it, r
            for i in range(n):
                Kprev[i] = K[i]
            beta = b_
            u, v, dudT, dudP, dvdT, dvdP, h, s = _two_phase(prm, T, P, beta, x, y)
        else:
            u, v, dudT, dudP, dvdT, dvdP, h, s = _one_phase(prm, T, P, z, GIBBS)
        RT = R * T
        r1 = (u - u_t) / RT
        r2 = math.log(v / v_t) if v > 0.0 else np.inf
        r = abs(r2) if fix_T else max(abs(r1), abs(r2))
        tol_f = TWO_PHASE_TOL_FACTOR if two else 1.0
        if (fix_T or abs(r1) <= U_TOL * tol_f) and abs(r2) <= V_TOL * tol_f:
            return 1, T, P, beta, h, s, it, r
        if two and r <= STAGNATION_TOL and r > 0.5 * r_last:
            # the split's own precision is reached (a phase of a few ppm): Newton no longer gains
            return 1, T, P, beta, h, s, it, r
        r_last = r
        a12 = P * dvdP / v
        if fix_T:
            if not (a12 < 0.0 and math.isfinite(a12)):
                return 0, T, P, beta, h, s, it, r
            dlnP = -r2 / a12
            dT = 0.0
        else:
            a11 = dudT / RT
            a21 = P * dudP / RT
            a22 = dvdT / v
            det = a11 * a12 - a21 * a22
            if not (math.isfinite(det) and det != 0.0):
                return 0, T, P, beta, h, s, it, r
            dT = (-r1 * a12 + r2 * a21) / det
            dlnP = (-r2 * a11 + r1 * a22) / det
        lam = 1.0
        if abs(dlnP) > 0.5:
            lam = 0.5 / abs(dlnP)
        if abs(dT) * lam > 0.1 * T:
            lam = 0.1 * T / abs(dT)
        T_prev = T
        lnP_prev = lnP
        dT *= lam
        dlnP *= lam
        T += dT
        lnP += dlnP
        if not (T_MIN < T < T_MAX):
            return 0, T, P, beta, h, s, it, r
        lnP = min(max(lnP, math.log(P_MIN)), math.log(P_MAX))
        P = math.exp(lnP)
    return 0, T, P, beta, h, s, max_iter, r


@_jit
def pure_saturation_P(prm, T, z, i):
    """Saturation pressure [Pa] of pure component i at T [K] from the EOS; nan at or above its critical
    temperature.  Bracketed secant on ln P over :func:`pure_saturation_T` (monotonic in P)."""
    tcs, pcs, oms = critical_constants(prm)
    tc, pc, w = tcs[i], pcs[i], oms[i]
    if T >= tc or T <= T_MIN:
        return np.nan
    lo = math.log(pc) - 60.0
    hi = math.log(pc)
    # Wilson-type start (Michelsen and Mollerup 2007, eq. for the K-value at x = y)
    lp = math.log(pc) + 5.373 * (1.0 + w) * (1.0 - tc / T)
    lp = min(max(lp, lo + 1e-9), hi - 1e-9)
    for _it in range(100):
        Ts = pure_saturation_T(prm, math.exp(lp), z, i)
        if not math.isfinite(Ts):
            hi = lp
            lp = 0.5 * (lo + hi)
            continue
        f = Ts - T
        if abs(f) < 1e-11 * T:
            return math.exp(lp)
        if f > 0.0:
            hi = lp
        else:
            lo = lp
        # Clausius-Clapeyron slope d ln P / d(1/T) ~ -5.373 (1 + w) tc
        dl = 5.373 * (1.0 + w) * tc * (1.0 / T - 1.0 / Ts)
        ln_new = lp - dl
        if not (lo < ln_new < hi):
            ln_new = 0.5 * (lo + hi)
        if hi - lo < 1e-13:
            return math.exp(0.5 * (lo + hi))
        lp = ln_new
    return np.nan


@_jit
def _pure_sat_state(prm, P, z, i, v_t):
    """On the saturation line at P: (T, quality q from the lever rule on v, u, h, s), q possibly outside [0, 1]."""
    Ts = pure_saturation_T(prm, P, z, i)
    if not math.isfinite(Ts):
        return np.nan, np.nan, np.nan, np.nan, np.nan
    pL = props(prm, Ts, P, z, LIQUID)
    pV = props(prm, Ts, P, z, VAPOUR)
    if not pV[1] > pL[1]:
        return Ts, np.nan, np.nan, np.nan, np.nan
    q = (v_t - pL[1]) / (pV[1] - pL[1])
    h = q * pV[2] + (1.0 - q) * pL[2]
    s = q * pV[3] + (1.0 - q) * pL[3]
    return Ts, q, h - P * v_t, h, s


@_jit
def _pure_uv(prm, u_t, v_t, z, i, P0):
    """Pure component inside its dome at given u, v: bracketed secant on ln P along the saturation line.

    At fixed overall v, u rises with the saturation pressure.  Returns (ok, T, P, q, h, s, iterations, residual);
    ok False when the target is not inside the dome."""
    tcs, pcs, oms = critical_constants(prm)
    pc = pcs[i]
    lo = math.log(max(P_MIN, 1e-12 * pc))
    hi = math.log(pc * (1.0 - 1e-7))
    # find the window where 0 <= q <= 1 is possible: bisect for valid lever rule at the ends
    lp = min(max(math.log(P0), lo + 1e-6), hi - 1e-6)
    f_lo = np.nan
    f_hi = np.nan
    r = np.inf
    for it in range(1, 200):
        Ts, q, u, h, s = _pure_sat_state(prm, math.exp(lp), z, i, v_t)
        if not math.isfinite(q):
            hi = lp
            lp = 0.5 * (lo + hi)
            continue
        f = (u - u_t) / (R * Ts)
        r = abs(f)
        if q < 0.0 or q > 1.0:
            # outside the dome at this pressure: q > 1 (too much vapour volume) means a lower pressure would fit
            # a vapour less dense; q < 0 a higher one; combined with the sign of f this sets the direction
            if q > 1.0:
                # vapour denser than v_t needs: go to lower pressure
                hi = lp
            else:
                lo = lp
            lp = 0.5 * (lo + hi)
            if hi - lo < 1e-12:
                return False, Ts, math.exp(lp), q, h, s, it, r
            continue
        if r <= U_TOL:
            return True, Ts, math.exp(lp), q, h, s, it, r
        if f > 0.0:
            hi = lp
            f_hi = f
        else:
            lo = lp
            f_lo = f
        if math.isfinite(f_lo) and math.isfinite(f_hi):
            # regula falsi (Illinois) inside the bracket
            ln_new = lo - f_lo * (hi - lo) / (f_hi - f_lo)
            if not (lo < ln_new < hi):
                ln_new = 0.5 * (lo + hi)
        else:
            ln_new = lp - 0.5 if f > 0.0 else lp + 0.5
            ln_new = min(max(ln_new, lo), hi)
            if not (lo < ln_new < hi):
                ln_new = 0.5 * (lo + hi)
        if hi - lo < 1e-14:
            return abs(f) < 1e-7, Ts, math.exp(lp), q, h, s, it, r
        lp = ln_new
    return False, np.nan, np.nan, np.nan, np.nan, np.nan, 200, r


@_jit
def _pure(prm, spec_T, u_t, v_t, z, i, T0, P0, x, y):
    """Pure component: the saturation line if the target lies inside the dome, else one phase."""
    for k in range(z.size):
        x[k] = z[k]
        y[k] = z[k]
    tcs, pcs, oms = critical_constants(prm)
    if spec_T:
        T = T0
        Ps = pure_saturation_P(prm, T, z, i)
        if math.isfinite(Ps):
            pL = props(prm, T, Ps, z, LIQUID)
            pV = props(prm, T, Ps, z, VAPOUR)
            if pL[1] <= v_t <= pV[1] and pV[1] > pL[1]:
                q = (v_t - pL[1]) / (pV[1] - pL[1])
                h = q * pV[2] + (1.0 - q) * pL[2]
                s = q * pV[3] + (1.0 - q) * pL[3]
                return ST_PURE_SAT, T, Ps, q, h, s, 0, 0.0, 0.0
            # one phase: start on the right side of the saturation pressure
            P0 = 0.5 * Ps if v_t > pV[1] else 2.0 * Ps
        K = np.ones(z.size)
        code, T, P, b, h, s, its, r = _newton_tp(prm, u_t, v_t, z, T0, P0, True, False, K, x, y, 100)
        if code == 1:
            return ST_SINGLE, T, P, single_phase_beta(prm, T, P, z), h, s, its, r, 0.0
        return ST_FAIL_SINGLE, T, P, np.nan, np.nan, np.nan, its, r, 0.0
    # one phase first: a state of the stable (Gibbs) root that meets (u, v) is the equilibrium state of a
    # pure fluid (the state at given u, v is unique); otherwise the target lies inside the dome
    K = np.ones(z.size)
    code, T, P, b, h, s, its, r = _newton_tp(prm, u_t, v_t, z, T0, P0, False, False, K, x, y, 100)
    if code == 1:
        return ST_SINGLE, T, P, single_phase_beta(prm, T, P, z), h, s, its, r, 0.0
    ok, T, P, q, h, s, its2, r = _pure_uv(prm, u_t, v_t, z, i, P0)
    if ok:
        return ST_PURE_SAT, T, P, q, h, s, its + its2, r, 0.0
    return ST_FAIL_SINGLE, T, P, np.nan, np.nan, np.nan, its + its2, r, 0.0


@_jit
def _flash_closed(prm, spec_T, u_t, v_t, z, T0, P0, x, y, t_skip):
    n = z.size
    if not (math.isfinite(v_t) and v_t > 0.0 and math.isfinite(T0) and T0 > 0.0 and math.isfinite(P0)
            and P0 > 0.0 and (spec_T or math.isfinite(u_t))):
        return ST_FAIL_INPUT, np.nan, np.nan, np.nan, np.nan, np.nan, 0, np.nan, 0.0
    imax = 0
    for i in range(n):
        if z[i] > z[imax]:
            imax = i
    if n == 1 or z[imax] > 1.0 - 1e-12:
        return _pure(prm, spec_T, u_t, v_t, z, imax, T0, P0, x, y)
    P0 = min(max(P0, P_MIN), P_MAX)
    T = T0
    P = P0
    K = np.empty(n)
    W = np.empty(n)
    its = 0
    tpd = 0.0
    two = False
    r = np.inf
    edge = False
    edge_tpd = EDGE_TPD
    eT = eP = eh = es = er = etpd = np.nan
    if T0 <= t_skip:
        # a guess inside the two-phase region (in a transient: the last step's state) starts on the two-phase
        # branch at once; a one-phase iteration from there could end on a metastable one-phase state far away
        stable, tpd, lighter, sconv = stability(prm, T, P, z, W)
        if not stable:
            for i in range(n):
                K[i] = W[i] / z[i] if lighter else z[i] / W[i]
            two = True
    for _round in range(4):
        if not two:
            for i in range(n):
                x[i] = z[i]
                y[i] = z[i]
            code, T1, P1, b, h, s, k, r = _newton_tp(prm, u_t, v_t, z, T, P, spec_T, False, K, x, y, 100)
            its += k
            if code == 1:
                if T1 > t_skip:
                    stable, tpd, lighter = True, 0.0, False
                else:
                    stable, tpd, lighter, sconv = stability(prm, T1, P1, z, W)
                if stable:
                    return ST_SINGLE, T1, P1, single_phase_beta(prm, T1, P1, z), h, s, its, r, tpd
                if tpd > edge_tpd:
                    edge = True
                    eT, eP, eh, es, er, etpd = T1, P1, h, s, r, tpd
                for i in range(n):
                    K[i] = W[i] / z[i] if lighter else z[i] / W[i]
                T, P = T1, P1
            else:
                # not converged on one phase: try the two-phase branch from the guess (in a transient the state of
                # the last step) or just beside it (a guess on a bubble or dew line), or from where the iteration
                # stopped
                stable = True
                for probe in range(6):
                    if probe == 0:
                        Tp, Pp = T0, P0
                    elif probe == 5:
                        if not (math.isfinite(T1) and T_MIN < T1 < T_MAX):
                            break
                        Tp, Pp = T1, P1
                    else:
                        Tp = T0 * (0.99 if probe == 3 else 1.01 if probe == 4 else 1.0)
                        Pp = P0 * (0.98 if probe == 1 else 1.02 if probe == 2 else 1.0)
                    stable, tpd, lighter, sconv = stability(prm, Tp, Pp, z, W)
                    if not stable:
                        T, P = Tp, Pp
                        break
                if stable:
                    wilson_k(prm, T, P, K)
                else:
                    for i in range(n):
                        K[i] = W[i] / z[i] if lighter else z[i] / W[i]
            two = True
        st, b_, k = split(prm, T, P, z, K, x, y, False)
        its += k
        if st != 1:
            wilson_k(prm, T, P, K)
            st, b_, k = split(prm, T, P, z, K, x, y, False)
            its += k
        if st != 1:
            two = False
            if _round > 0:
                break
            continue
        code, T1, P1, beta, h, s, k, r = _newton_tp(prm, u_t, v_t, z, T, P, spec_T, True, K, x, y, 60)
        its += k
        if code == 1 and 0.0 < beta < 1.0:
            return ST_TWO, T1, P1, beta, h, s, its, r, tpd
        if code == 2:
            # the split vanished: continue on one phase from there
            T, P = T1, P1
            two = False
            continue
        break
    for i in range(n):
        x[i] = z[i]
        y[i] = z[i]
    if edge:
        # at the very edge of the two-phase region (tangent-plane distance above EDGE_TPD) the split finds no second
        # phase: the incipient phase is below its resolution, and the one-phase state meets (u, v)
        return ST_SINGLE, eT, eP, single_phase_beta(prm, eT, eP, z), eh, es, its, er, etpd
    return (ST_FAIL_TWO if two else ST_FAIL_SINGLE), T, P, np.nan, np.nan, np.nan, its, r, tpd


@_jit
def flash_uv(prm, u_t, v_t, z, T0, P0, x, y, t_skip):
    """UV flash: the equilibrium state with molar internal energy ``u_t`` [J/mol] and molar volume ``v_t``
    [m^3/mol] of feed ``z``, from the guess (``T0`` [K], ``P0`` [Pa]).

    Returns (status, T, P, beta, h, s, iterations, residual, tpd_min); fills x, y."""
    return _flash_closed(prm, False, u_t, v_t, z, T0, P0, x, y, t_skip)


@_jit
def flash_tv(prm, T, v_t, z, P0, x, y, t_skip):
    """TV flash: the equilibrium state at temperature ``T`` [K] with molar volume ``v_t`` [m^3/mol], from the
    pressure guess ``P0`` [Pa].  Returns (status, T, P, beta, h, s, iterations, residual, tpd_min); fills x, y."""
    return _flash_closed(prm, True, 0.0, v_t, z, T, P0, x, y, t_skip)


@_jit
def phase_props(prm, T, P, x, phase):
    """The model's ``props`` (see :mod:`jtcheck.thermo.models`) callable from Python: once the interface
    dispatches on the parameter type at compile time, its functions are callable from compiled code only."""
    return props(prm, T, P, x, phase)
