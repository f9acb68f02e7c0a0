"""Compiled kernels of the GERG-2008 equation of state (numba, nopython).

Kunz and Wagner, *The GERG-2008 wide-range equation of state for natural gases and other mixtures: an
expansion of GERG-2004*, J. Chem. Eng. Data 57 (2012) 3032-3091, doi:10.1021/je300655b (ISO 20765-2):

- reduced residual Helmholtz energy alpha_r(delta, tau, x) = sum_i x_i alpha_r_oi(delta, tau)
  + sum_{i<j} x_i x_j F_ij alpha_r_ij(delta, tau) (eqs. 7.9-7.10), delta = rho / rho_r(x), tau = T_r(x) / T;
- reducing functions (eqs. 7.11-7.12) 1/rho_r = sum_ij x_i x_j beta_v,ij gamma_v,ij (x_i + x_j) /
  (beta_v,ij^2 x_i + x_j) (1/8)(rho_c,i^-1/3 + rho_c,j^-1/3)^3 and the same form for T_r with sqrt(T_c,i T_c,j);
- the composition derivatives of their Table B4 (here written with the homogeneous derivatives
  n d/dn_i of functions of x, Michelsen and Mollerup, *Thermodynamic Models: Fundamentals and
  Computational Aspects*, 2nd ed. (2007), ch. 2) for ln phi_i and d ln phi_i / d n_j;
- the ideal-gas heat capacity of the paper (eq. 7.6 with the Table A1-A3 constants), integrated
  from 298.15 K, so that h = 0 for the ideal gas at 298.15 K and s = 0 for the ideal gas at 298.15 K and
  101325 Pa: the reference state every model family of :mod:`jtcheck.thermo.models` shares.

Units inside: SI (T [K], P [Pa], rho [mol/m^3]); the gas constant is GERG-2008's R = 8.314472 J/(mol K)
(the paper's value, used by its residual part) and R* = 8.31451 J/(mol K) for its ideal-gas heat
capacities (eq. 7.6); jtcheck's other models use CODATA 2018 (:mod:`jtcheck.thermo.models.conventions`).

The interface functions (:func:`ln_phi`, :func:`props`, :func:`fug_derivs`, :func:`pip`,
:func:`critical_constants`, :func:`polar_flags`; contract in :mod:`jtcheck.thermo.models`) take the flat
parameter tuple ``prm`` built by :func:`jtcheck.thermo.models.gerg2008.mixture.make_gerg_mixture`
(``GergMixture.kernel_params``):

    (marker, tcs_r, vcs_r, bv2, cv, bt2, ct,
     p_own, p_n, p_d, p_ti, p_c,
     q_fun, pairs, q_n, q_d, q_ti, q_eta, q_eps, q_beta, q_gam, q_exp,
     tuniq, ig_n3m1, ig_n, ig_th, ig_href, ig_sref,
     tcs, pcs, omegas, polar,
     p_grp, q_grp, g_d, g_c, g_par)

    marker          numpy.uint16(2008): numba tells this tuple from the cubic family's by its type
    tcs_r, vcs_r    reducing T_c,i [K] and 1/rho_c,i [m^3/mol] of GERG-2008, shape (n,)
    bv2, cv         beta_v,ij^2 [-] and 2 beta_v,ij gamma_v,ij (v_c,i^1/3 + v_c,j^1/3)^3 / 8 [m^3/mol], (n, n),
                    for i < j in the mixture's order (beta already inverted where the GERG order is reversed)
    bt2, ct         beta_T,ij^2 [-] and 2 beta_T,ij gamma_T,ij sqrt(T_c,i T_c,j) [K], (n, n)
    p_*             pure-fluid terms of the mixture's components, flattened: owner, n, d, index of t in
                    tuniq, c (0: polynomial term)
    q_fun, q_*      departure-function terms of the functions the mixture's pairs use, flattened and grouped
                    by function: function index, n, d, index of t, eta, epsilon, beta, gamma, exponential (1)
                    or polynomial (0)
    pairs           (npairs, 4) floats: i, j, function index, F_ij of each pair with a departure function
    tuniq           the distinct tau exponents [-]
    ig_n3m1, ig_n, ig_th   ideal-gas n_3 - 1 (n,), n_4..n_7 and theta_4..theta_7 [K] (n, 4); columns 0 and 2
                    are sinh terms, 1 and 3 cosh terms
    ig_href, ig_sref       the hyperbolic parts of h/R* [K] and s/R* [-] at 298.15 K, (n,)
    tcs, pcs, omegas       critical constants of jtcheck's component data (Wilson starts), (n,)
    polar           near-pure trial phases in stability tests (bool), (n,)
    p_grp, q_grp    the group of each pure-fluid term and of each departure term: terms of one group share their
                    delta dependence, delta^d exp(-delta^c) or delta^d exp(-eta (delta - eps)^2 - beta (delta - gamma))
                    (:func:`level0_coefs`)
    g_d, g_c, g_par d, c (-1: exponential departure group) and (eta, eps, beta, gamma) of each group, (ng,), (ng, 4);
                    the (d, c) groups first, sorted by c, then the exponential groups sorted by their parameters

The tuple is flat (the ``prange`` loop of the letdown batch rejects nested tuples, numba 0.68).
"""
from __future__ import annotations

import math

import numpy as np
from numba import njit

from jtcheck.thermo.models.conventions import GIBBS, LIQUID, P_REF, T_REF, VAPOUR

#: Molar gas constant of GERG-2008 [J/(mol K)] (Kunz and Wagner 2012, eq. 7.1 and Table 4).
R_GERG = 8.314472
#: Molar gas constant of the ideal-gas heat capacities of GERG-2008 [J/(mol K)] (eq. 7.6).
R_STAR = 8.31451

#: Value of the first element of the parameter tuple (typed numpy.uint16 by numba).
MARKER = 2008

_jit = njit(cache=True, nogil=True)
#: Small kernels, inlined into their callers at numba IR level: a compiled call that passes the parameter tuple
#: costs a reference-count update per array of the tuple (measured: more than an evaluation of alpha_r itself).
_jit_inline = njit(cache=True, nogil=True, inline="always")


# ----------------------------------------------------------------------------------------------
# reducing functions
# ----------------------------------------------------------------------------------------------

@_jit_inline
def reducing(prm, x):
    """Reducing temperature T_r [K] and volume V_r = 1/rho_r [m^3/mol] of composition x (eqs. 7.11-7.12)."""
    tcs, vcs, bv2, cv, bt2, ct = prm[1], prm[2], prm[3], prm[4], prm[5], prm[6]
    n = x.size
    Vr = 0.0
    Tr = 0.0
    for i in range(n):
        xi = x[i]
        if xi == 0.0:
            continue
        Vr += xi * xi * vcs[i]
        Tr += xi * xi * tcs[i]
        for j in range(i + 1, n):
            xj = x[j]
            if xj == 0.0:
                continue
            xs = xi * xj * (xi + xj)
            Vr += cv[i, j] * xs / (bv2[i, j] * xi + xj)
            Tr += ct[i, j] * xs / (bt2[i, j] * xi + xj)
    return Tr, Vr


@_jit_inline
def _g_first(a, b, B):
    """g = a b (a + b) / (B a + b) and its first partial derivatives (0 where a = b = 0).

    Written with the ratios a/D, b/D, (a + b)/D (D = B a + b), which stay bounded when a and b are tiny.
    """
    D = B * a + b
    if D < 1e-300:
        return 0.0, 0.0, 0.0
    r = 1.0 / D
    p = a * r
    q = b * r
    S = a + b
    return S * a * q, q * (S + a) - B * p * q * S, p * (S + b) - p * q * S


@_jit_inline
def _g_second(a, b, B):
    """Second partial derivatives (g_aa, g_bb, g_ab) of g = a b (a + b) / (B a + b) (bounded ratios)."""
    D = B * a + b
    if D < 1e-300:
        return 0.0, 0.0, 0.0
    r = 1.0 / D
    p = a * r
    q = b * r
    S = a + b
    sD = S * r
    u1 = (S + a) * r
    u2 = (S + b) * r
    gaa = 2.0 * q - 2.0 * B * q * u1 + 2.0 * B * B * p * q * sD
    gbb = 2.0 * p - 2.0 * p * u2 + 2.0 * p * q * sD
    gab = 2.0 * sD - q * u1 - B * p * u2 + 2.0 * B * p * q * sD
    return gaa, gbb, gab


@_jit_inline
def reducing_derivs(prm, x, dT, dV, d2T, d2V, second):
    """Fill d T_r/d x_k, d V_r/d x_k (x independent) and, if ``second``, the second derivatives (n, n)."""
    tcs, vcs, bv2, cv, bt2, ct = prm[1], prm[2], prm[3], prm[4], prm[5], prm[6]
    n = x.size
    for k in range(n):
        dT[k] = 2.0 * x[k] * tcs[k]
        dV[k] = 2.0 * x[k] * vcs[k]
    if second:
        for k in range(n):
            for m in range(n):
                d2T[k, m] = 0.0
                d2V[k, m] = 0.0
            d2T[k, k] = 2.0 * tcs[k]
            d2V[k, k] = 2.0 * vcs[k]
    for i in range(n):
        for j in range(i + 1, n):
            a = x[i]
            b = x[j]
            _, ga, gb = _g_first(a, b, bv2[i, j])
            dV[i] += cv[i, j] * ga
            dV[j] += cv[i, j] * gb
            _, ga, gb = _g_first(a, b, bt2[i, j])
            dT[i] += ct[i, j] * ga
            dT[j] += ct[i, j] * gb
            if second:
                gaa, gbb, gab = _g_second(a, b, bv2[i, j])
                d2V[i, i] += cv[i, j] * gaa
                d2V[j, j] += cv[i, j] * gbb
                d2V[i, j] += cv[i, j] * gab
                d2V[j, i] += cv[i, j] * gab
                gaa, gbb, gab = _g_second(a, b, bt2[i, j])
                d2T[i, i] += ct[i, j] * gaa
                d2T[j, j] += ct[i, j] * gbb
                d2T[i, j] += ct[i, j] * gab
                d2T[j, i] += ct[i, j] * gab


# ----------------------------------------------------------------------------------------------
# residual Helmholtz energy
# ----------------------------------------------------------------------------------------------

@_jit_inline
def tau_powers(prm, tau, tp):
    """Fill tp[k] = tau ** tuniq[k]."""
    tuniq = prm[22]
    lt = math.log(tau)
    for k in range(tuniq.size):
        tp[k] = math.exp(tuniq[k] * lt)


@_jit_inline
def alphar(prm, tp, x, delta, level, ax, adx, atx, axx):
    """Reduced residual Helmholtz energy and its derivatives at (delta, tau) with tp = tau ** tuniq.

    level 0 returns A, delta A_d, delta^2 A_dd (the rest zero); level 1 all the scalars; level 2 also
    fills ax_i = dA/dx_i, adx_i = delta d2A/d delta dx_i, atx_i = tau d2A/d tau dx_i (x independent);
    level 3 also axx_ij = d2A/dx_i dx_j.

    Returns
    -------
    tuple of float
        (A, delta A_d, delta^2 A_dd, delta^3 A_ddd, tau A_t, tau^2 A_tt, delta tau A_dt,
        delta^2 tau A_ddt), A = alpha_r [-].
    """
    p_own, p_n, p_d, p_ti, p_c = prm[7], prm[8], prm[9], prm[10], prm[11]
    q_fun, pairs, q_n, q_d, q_ti = prm[12], prm[13], prm[14], prm[15], prm[16]
    q_eta, q_eps, q_beta, q_gam, q_exp = prm[17], prm[18], prm[19], prm[20], prm[21]
    tuniq = prm[22]
    n = x.size
    if level >= 2:
        for i in range(n):
            ax[i] = 0.0
            adx[i] = 0.0
            atx[i] = 0.0
            if level >= 3:
                for j in range(n):
                    axx[i, j] = 0.0
    # powers of delta and exp(-delta^c), c = 1..6
    d1 = delta
    d2 = d1 * d1
    dp = np.empty(11)
    dp[0] = 1.0
    for k in range(1, 11):
        dp[k] = dp[k - 1] * d1
    ec = np.empty(7)
    for k in range(7):
        ec[k] = math.exp(-dp[k])
    A = 0.0
    ad = 0.0
    add = 0.0
    addd = 0.0
    at = 0.0
    att = 0.0
    adt = 0.0
    addt = 0.0
    for k in range(p_n.size):
        i = p_own[k]
        xi = x[i]
        if xi == 0.0 and level < 2:
            continue
        d = p_d[k]
        c = p_c[k]
        v = p_n[k] * tp[p_ti[k]] * dp[d]
        if c == 0:
            g = float(d)
            Dg = 0.0
            D2g = 0.0
        else:
            u = dp[c]
            v *= ec[c]
            g = d - c * u
            Dg = -c * c * u
            D2g = Dg * c
        f2 = g * g + Dg - g
        A += xi * v
        ad += xi * v * g
        add += xi * v * f2
        if level >= 1:
            t = tuniq[p_ti[k]]
            vt = v * t
            at += xi * vt
            att += xi * vt * (t - 1.0)
            adt += xi * vt * g
            addt += xi * vt * f2
            addd += xi * v * (g * g * g + 3.0 * g * Dg + D2g - 3.0 * g * g - 3.0 * Dg + 2.0 * g)
            if level >= 2:
                ax[i] += v
                adx[i] += v * g
                atx[i] += vt
    # departure functions: each one evaluated once, then weighted by x_i x_j F_ij for every pair that uses it
    nq = q_n.size
    if nq == 0:
        return A, ad, add, addd, at, att, adt, addt
    nfun = q_fun[nq - 1] + 1
    fv = np.zeros((nfun, 8))
    for m in range(nq):
        f = q_fun[m]
        d = q_d[m]
        v = q_n[m] * tp[q_ti[m]] * dp[d]
        if q_exp[m] == 1:
            eta = q_eta[m]
            eps = q_eps[m]
            beta = q_beta[m]
            dd = delta - eps
            v *= math.exp(-eta * dd * dd - beta * (delta - q_gam[m]))
            e1 = 2.0 * eta * eps * delta - beta * delta
            g = d - 2.0 * eta * d2 + e1
            Dg = -4.0 * eta * d2 + e1
            D2g = -8.0 * eta * d2 + e1
        else:
            g = float(d)
            Dg = 0.0
            D2g = 0.0
        f2 = g * g + Dg - g
        fv[f, 0] += v
        fv[f, 1] += v * g
        fv[f, 2] += v * f2
        if level >= 1:
            t = tuniq[q_ti[m]]
            vt = v * t
            fv[f, 3] += v * (g * g * g + 3.0 * g * Dg + D2g - 3.0 * g * g - 3.0 * Dg + 2.0 * g)
            fv[f, 4] += vt
            fv[f, 5] += vt * (t - 1.0)
            fv[f, 6] += vt * g
            fv[f, 7] += vt * f2
    for m in range(pairs.shape[0]):
        i = int(pairs[m, 0])
        j = int(pairs[m, 1])
        f = int(pairs[m, 2])
        F = pairs[m, 3]
        w = x[i] * x[j] * F
        A += w * fv[f, 0]
        ad += w * fv[f, 1]
        add += w * fv[f, 2]
        if level >= 1:
            addd += w * fv[f, 3]
            at += w * fv[f, 4]
            att += w * fv[f, 5]
            adt += w * fv[f, 6]
            addt += w * fv[f, 7]
            if level >= 2:
                ax[i] += x[j] * F * fv[f, 0]
                ax[j] += x[i] * F * fv[f, 0]
                adx[i] += x[j] * F * fv[f, 1]
                adx[j] += x[i] * F * fv[f, 1]
                atx[i] += x[j] * F * fv[f, 4]
                atx[j] += x[i] * F * fv[f, 4]
                if level >= 3:
                    axx[i, j] += F * fv[f, 0]
                    axx[j, i] += F * fv[f, 0]
    return A, ad, add, addd, at, att, adt, addt


# ----------------------------------------------------------------------------------------------
# density from (T, P)
# ----------------------------------------------------------------------------------------------

@_jit_inline
def level0_coefs(prm, tp, x, cg):
    """Coefficients of the sums over delta at fixed tau and x (for the density iteration and the level-1 scalars).

    Terms of one group (``prm[32]``, ``prm[33]``; module docstring) share their delta dependence, so their
    coefficients are summed once per (tau, x): cg[0, g] = sum of w_k n_k tau^t_k over the terms k of group g,
    with w_k = x_owner for a pure-fluid term and the sum of x_i x_j F_ij over the pairs that use the departure
    function of a departure term; if cg has 3 + 4 rows, cg[1, g] and cg[2, g] are the same sums weighted by t_k
    and t_k (t_k - 1).  The last four rows of cg are work space of :func:`_group_terms` (no allocation per
    evaluation inside the density iteration): cg has 1 + 4 or 3 + 4 rows.
    """
    p_own, p_n, p_ti = prm[7], prm[8], prm[10]
    q_fun, pairs, q_n, q_ti = prm[12], prm[13], prm[14], prm[16]
    tuniq, p_grp, q_grp = prm[22], prm[32], prm[33]
    rows = cg.shape[0] - 4
    for r in range(rows):
        for g in range(cg.shape[1]):
            cg[r, g] = 0.0
    nq = q_n.size
    wf = np.zeros(q_fun[nq - 1] + 1 if nq > 0 else 0)
    for m in range(pairs.shape[0]):
        wf[int(pairs[m, 2])] += x[int(pairs[m, 0])] * x[int(pairs[m, 1])] * pairs[m, 3]
    for k in range(p_n.size + nq):
        if k < p_n.size:
            w = x[p_own[k]] * p_n[k] * tp[p_ti[k]]
            g = p_grp[k]
            t = tuniq[p_ti[k]]
        else:
            m = k - p_n.size
            w = wf[q_fun[m]] * q_n[m] * tp[q_ti[m]]
            g = q_grp[m]
            t = tuniq[q_ti[m]]
        cg[0, g] += w
        if rows == 3:
            cg[1, g] += w * t
            cg[2, g] += w * t * (t - 1.0)


@_jit_inline
def density_params(prm):
    """The arrays of the density iteration, (v_c,i [m^3/mol], g_d, g_c, g_par) (module docstring): the functions
    from :func:`_group_terms` to :func:`density` take this short tuple rather than ``prm``, because a call that
    passes the parameter tuple costs a reference-count update per array of the tuple."""
    return prm[2], prm[34], prm[35], prm[36]


@_jit_inline
def _group_terms(dk, cg, delta):
    """The delta dependence of every group (module docstring), in four rows (g = 0..ng-1): the common factor
    b = delta^d exp(-delta^c) or delta^d exp(-eta (delta - eps)^2 - beta (delta - gamma)), and g = delta d ln b/d delta,
    Dg = delta dg/d delta, D2g = delta d Dg/d delta (Kunz and Wagner 2012, Table B4).  One exp per distinct c or
    parameter set (the groups are sorted).  Written into (and returned as) the last four rows of cg."""
    g_d, g_c, g_par = dk[1], dk[2], dk[3]
    ng = g_d.size
    out = cg[cg.shape[0] - 4:]
    dp = (1.0, delta, delta ** 2, delta ** 3, delta ** 4, delta ** 5, delta ** 6, delta ** 7, delta ** 8, delta ** 9,
          delta ** 10)
    d2 = dp[2]
    cur = 0
    u = 0.0
    e = 1.0
    pe = np.nan
    pp = np.nan
    pb = np.nan
    pg = np.nan
    ex = 1.0
    e1 = 0.0
    for k in range(ng):
        c = g_c[k]
        d = g_d[k]
        b = dp[d]
        if c == 0:
            g = float(d)
            Dg = 0.0
            D2g = 0.0
        elif c > 0:
            if c != cur:
                cur = c
                u = dp[c]
                e = math.exp(-u)
            b *= e
            g = d - c * u
            Dg = -c * c * u
            D2g = Dg * c
        else:
            eta = g_par[k, 0]
            eps = g_par[k, 1]
            beta = g_par[k, 2]
            gam = g_par[k, 3]
            if eta != pe or eps != pp or beta != pb or gam != pg:
                pe = eta
                pp = eps
                pb = beta
                pg = gam
                dd = delta - eps
                ex = math.exp(-eta * dd * dd - beta * (delta - gam))
                e1 = 2.0 * eta * eps * delta - beta * delta
            b *= ex
            g = d - 2.0 * eta * d2 + e1
            Dg = -4.0 * eta * d2 + e1
            D2g = -8.0 * eta * d2 + e1
        out[0, k] = b
        out[1, k] = g
        out[2, k] = Dg
        out[3, k] = D2g
    return out


@_jit_inline
def alphar0(dk, cg, delta):
    """(A, delta A_d, delta^2 A_dd) from the coefficients of :func:`level0_coefs` (row 0 of cg)."""
    gt = _group_terms(dk, cg, delta)
    A = 0.0
    ad = 0.0
    add = 0.0
    for k in range(gt.shape[1]):
        v = cg[0, k] * gt[0, k]
        g = gt[1, k]
        A += v
        ad += v * g
        add += v * (g * g + gt[2, k] - g)
    return A, ad, add


@_jit
def alphar1(dk, cg, delta):
    """The scalar derivatives of alpha_r (level 1 of :func:`alphar`) from :func:`level0_coefs` with three rows.

    Returns (A, delta A_d, delta^2 A_dd, delta^3 A_ddd, tau A_t, tau^2 A_tt, delta tau A_dt, delta^2 tau A_ddt).
    """
    gt = _group_terms(dk, cg, delta)
    A = 0.0
    ad = 0.0
    add = 0.0
    addd = 0.0
    at = 0.0
    att = 0.0
    adt = 0.0
    addt = 0.0
    for k in range(gt.shape[1]):
        b = gt[0, k]
        g = gt[1, k]
        Dg = gt[2, k]
        v = cg[0, k] * b
        vt = cg[1, k] * b
        f2 = g * g + Dg - g
        A += v
        ad += v * g
        add += v * f2
        addd += v * (g * g * g + 3.0 * g * Dg + gt[3, k] - 3.0 * g * g - 3.0 * Dg + 2.0 * g)
        at += vt
        att += cg[2, k] * b
        adt += vt * g
        addt += vt * f2
    return A, ad, add, addd, at, att, adt, addt


@_jit_inline
def _p_dp(dk, cp, x, rho, Vr, RT):
    """Pressure [Pa] and (dP/drho)_T [Pa m^3/mol] at rho [mol/m^3]; also A and delta A_d."""
    A, ad, add = alphar0(dk, cp, rho * Vr)
    return rho * RT * (1.0 + ad), RT * (1.0 + 2.0 * ad + add), A, ad


@_jit_inline
def _liquid_start(dk, cp, x, P, Vr, RT):
    """Start of the liquid-like root search [mol/m^3]: three times the pseudo-critical density (the reference
    implementation's liquid start), made denser until P(rho) > P on a rising branch (cold liquids are denser)."""
    vcs = dk[0]
    vm = 0.0
    for i in range(x.size):
        vm += x[i] * vcs[i]
    rho = 3.0 / vm
    for _ in range(10):
        p, dp, _, _ = _p_dp(dk, cp, x, rho, Vr, RT)
        if dp > 0.0 and p > P:
            break
        rho *= 1.25
    return rho


@_jit
def _root_search(dk, cp, x, T, P, Vr, liquid, cap):
    """Bracketed Newton search for one density root (see :func:`_root`); returns (rho, start) or (-1, start).

    ``cap`` > 1 limits each step to a factor ``cap`` in density (upwards for the vapour-like root from
    a hundredth of the ideal-gas density, downwards for the liquid-like root), so that the search
    walks along one branch of P(rho) and stops at its spinodal instead of jumping past it.
    """
    RT = R_GERG * T
    vcs = dk[0]
    lo = 0.0
    hi = np.inf
    vm = 0.0
    for i in range(x.size):
        vm += x[i] * vcs[i]
    if liquid:
        rho = _liquid_start(dk, cp, x, P, Vr, RT)
    else:
        rho = P / RT if cap <= 1.0 else 0.01 * P / RT
    start = rho
    for _ in range(300):
        p, dp, _, _ = _p_dp(dk, cp, x, rho, Vr, RT)
        good = dp > 0.0 and math.isfinite(p) and math.isfinite(dp)
        if liquid:
            if good and p > P:
                hi = rho
            else:
                lo = rho
        else:
            if good and p < P:
                lo = rho
            else:
                hi = rho
        if good:
            step = (p - P) / dp
            rn = rho - step
            if abs(step) <= 1e-11 * rho:
                return rn, start
        else:
            rn = -1.0
        if cap > 1.0:
            if liquid and hi == np.inf and lo == rho:
                # walking down the liquid branch found no state above P: not this branch
                return -1.0, start
            if liquid and lo == 0.0:
                rn = max(rn, rho / cap)
            if not liquid and hi == np.inf:
                rn = min(rn, rho * cap)
        if not (lo < rn < hi):
            if hi < np.inf:
                rn = 0.5 * (lo + hi)
            else:
                rn = 1.5 * rho
        if hi < np.inf and hi - lo <= 1e-13 * hi:
            return -1.0, start
        if liquid and lo > 40.0 / vm:
            return -1.0, start
        rho = rn
    return -1.0, start


@_jit_inline
def _on_branch(dk, cp, x, a, b, Vr, RT):
    """Whether (dP/drho)_T > 0 at three points inside (a, b) [mol/m^3]: the root is on one branch with its end."""
    for k in range(1, 4):
        rho = a + 0.25 * k * (b - a)
        if _p_dp(dk, cp, x, rho, Vr, RT)[1] <= 0.0:
            return False
    return True


@_jit
def _root(dk, cp, x, T, P, Vr, liquid):
    """The lightest (liquid False) or densest (liquid True) density root [mol/m^3] at (T, P); -1 if none.

    A Newton iteration on rho safeguarded by a bracket: for the vapour-like root the bracket is
    bounded below by states of the first (rising) branch with P(rho) < P, and above by any state with
    P(rho) >= P or (dP/drho)_T <= 0; for the liquid-like root the other way round, starting from
    three times the pseudo-critical density (the reference implementation's liquid start).  If the
    bracket closes on a spinodal instead of a root, that root does not exist at (T, P).

    Inside the two-phase region P(rho) of a multiparameter equation oscillates between the spinodals
    and has spurious roots there (Span, *Multiparameter Equations of State*, Springer 2000, ch. 3).  A
    root is accepted only if P(rho) rises at three points between it and the end it was searched
    from (zero density, or the liquid start); otherwise the search is repeated walking along the
    branch in steps of at most 20 % in density, which stops at the spinodal.
    """
    RT = R_GERG * T
    r, start = _root_search(dk, cp, x, T, P, Vr, liquid, 0.0)
    if r > 0.0:
        if liquid:
            ok = start > r and _on_branch(dk, cp, x, r, start, Vr, RT)
        else:
            ok = _on_branch(dk, cp, x, 0.0, r, Vr, RT)
        if ok:
            return r
    r, start = _root_search(dk, cp, x, T, P, Vr, liquid, 1.2)
    return r


@_jit
def density(dk, T, P, x, phase, cp, Vr):
    """Molar density [mol/m^3] of the chosen root at (T, P) (cp from :func:`level0_coefs` at this T, x).

    GIBBS: the root of lower Gibbs energy when both exist; LIQUID: the densest root; VAPOUR: the
    lightest.  Where only one root exists every phase code returns it.  NaN if none was found.
    """
    rv = -1.0
    rl = -1.0
    if phase != LIQUID:
        rv = _root(dk, cp, x, T, P, Vr, False)
    if phase == GIBBS and rv > 0.0:
        # one root only if P(rho) rises from the vapour-like root to the liquid start (three points checked)
        RT = R_GERG * T
        rs = _liquid_start(dk, cp, x, P, Vr, RT)
        if rs > rv and _on_branch(dk, cp, x, rv, rs, Vr, RT):
            return rv
    if phase != VAPOUR or rv < 0.0:
        rl = _root(dk, cp, x, T, P, Vr, True)
    if phase == LIQUID and rl < 0.0:
        rv = _root(dk, cp, x, T, P, Vr, False)
    if rv < 0.0 and rl < 0.0:
        return np.nan
    if rv < 0.0:
        return rl
    if rl < 0.0:
        return rv
    if phase == LIQUID:
        return rl
    if phase == VAPOUR:
        return rv
    if abs(rl - rv) <= 1e-9 * rl:
        return rv
    RT = R_GERG * T
    _, _, Av, adv = _p_dp(dk, cp, x, rv, Vr, RT)
    _, _, Al, adl = _p_dp(dk, cp, x, rl, Vr, RT)
    gv = Av + adv - math.log(1.0 + adv)
    gl = Al + adl - math.log(1.0 + adl)
    return rl if gl < gv else rv


@_jit_inline
def state_coefs(prm, T, P, x, phase, tp, cg):
    """(T_r, V_r, tau, rho, delta) at (T, P, x) for the chosen root; fills tp and cg (:func:`level0_coefs`)."""
    Tr, Vr = reducing(prm, x)
    tau = Tr / T
    tau_powers(prm, tau, tp)
    level0_coefs(prm, tp, x, cg)
    rho = density(density_params(prm), T, P, x, phase, cg, Vr)
    return Tr, Vr, tau, rho, rho * Vr


@_jit_inline
def state_at(prm, T, P, x, phase, tp):
    """(T_r, V_r, tau, rho, delta) at (T, P, x) for the chosen root; fills tp."""
    cg = np.empty((1 + 4, prm[34].size))
    return state_coefs(prm, T, P, x, phase, tp, cg)


@_jit_inline
def _state_level1(prm, T, P, x, phase):
    """(rho, alpha_r scalars of :func:`alphar1`) at (T, P, x) for the chosen root."""
    tp = np.empty(prm[22].size)
    cg = np.empty((3 + 4, prm[34].size))
    st = state_coefs(prm, T, P, x, phase, tp, cg)
    return st[3], alphar1(density_params(prm), cg, st[4])


# ----------------------------------------------------------------------------------------------
# ideal gas
# ----------------------------------------------------------------------------------------------

_LN2 = math.log(2.0)


@_jit_inline
def ideal_gas(prm, T, x):
    """Ideal-gas cp [J/(mol K)], h [J/mol] and s at P_REF without mixing [J/(mol K)] (zero at 298.15 K).

    cp0 = R + R* (n_3 - 1 + sum_sinh n_k u_k^2 / sinh^2 u_k + sum_cosh n_k u_k^2 / cosh^2 u_k), u_k = theta_k / T
    (Kunz and Wagner 2012, eq. 7.6 with their Tables A1-A3), integrated analytically from T_REF.
    """
    n3m1, ign, igth, href, sref = prm[23], prm[24], prm[25], prm[26], prm[27]
    cp = 0.0
    h = 0.0
    s = 0.0
    lnT = math.log(T / T_REF)
    for i in range(x.size):
        xi = x[i]
        if xi == 0.0:
            continue
        c0 = R_GERG + R_STAR * n3m1[i]
        cpi = c0
        hi = c0 * (T - T_REF)
        si = c0 * lnT
        hh = 0.0
        sh = 0.0
        ch = 0.0
        for k in range(4):
            th = igth[i, k]
            if th == 0.0:
                continue
            nk = ign[i, k]
            u = th / T
            # with em = exp(-u), e2 = em^2: sinh u = (1 - e2) / (2 em), cosh u = (1 + e2) / (2 em),
            # ln sinh u = u - ln 2 + ln(1 - e2), ln cosh u = u - ln 2 + ln(1 + e2): one exp and one log per term
            em = math.exp(-u)
            e2 = em * em
            om = 1.0 - e2 if u > 0.3 else -math.expm1(-2.0 * u)
            op = 1.0 + e2
            if k == 0 or k == 2:
                ct_ = op / om
                ch += nk * (2.0 * u * em / om) ** 2
                hh += nk * th * ct_
                sh += nk * (u * ct_ - (u - _LN2 + math.log(om)))
            else:
                tn = om / op
                ch += nk * (2.0 * u * em / op) ** 2
                hh -= nk * th * tn
                sh += nk * ((u - _LN2 + math.log1p(e2)) - u * tn)
        cp += xi * (cpi + R_STAR * ch)
        h += xi * (hi + R_STAR * (hh - href[i]))
        s += xi * (si + R_STAR * (sh - sref[i]))
    return cp, h, s


# ----------------------------------------------------------------------------------------------
# interface functions
# ----------------------------------------------------------------------------------------------

@_jit
def ln_phi(prm, T, P, x, phase, out):
    """Logarithms of the fugacity coefficients of one phase.

    ln phi_i = alpha_r + delta alpha_r_d (1 + V_r,i^ / V_r) + tau alpha_r_t T_r,i^ / T_r + alpha_r,x_i
    - sum_k x_k alpha_r,x_k - ln Z, with f^_i = d f/d x_i - sum_k x_k d f/d x_k (Kunz and Wagner 2012,
    Table B4).

    Parameters
    ----------
    prm : tuple
        Mixture parameters (module docstring).
    T : float
        Temperature [K].
    P : float
        Pressure [Pa].
    x : numpy.ndarray
        Mole fractions [-], shape (n,).
    phase : int
        GIBBS, LIQUID or VAPOUR (:mod:`jtcheck.thermo.models.conventions`): which density root.
    out : numpy.ndarray
        Filled with ln phi_i [-], shape (n,).

    Returns
    -------
    float
        Compressibility factor Z [-] of the chosen root.
    """
    n = x.size
    tp = np.empty(prm[22].size)
    buf = np.empty((5, n))
    ax, adx, atx, dT, dV = buf[0], buf[1], buf[2], buf[3], buf[4]
    Tr, Vr, tau, rho, delta = state_at(prm, T, P, x, phase, tp)
    r = alphar(prm, tp, x, delta, 2, ax, adx, atx, buf[:0, :0])
    A, ad, at = r[0], r[1], r[4]
    reducing_derivs(prm, x, dT, dV, buf[:0, :0], buf[:0, :0], False)
    sV = 0.0
    sT = 0.0
    sA = 0.0
    for k in range(n):
        sV += x[k] * dV[k]
        sT += x[k] * dT[k]
        sA += x[k] * ax[k]
    Z = 1.0 + ad
    lnZ = math.log(Z)
    for i in range(n):
        out[i] = A + ad * (1.0 + (dV[i] - sV) / Vr) + at * (dT[i] - sT) / Tr + ax[i] - sA - lnZ
    return Z


@_jit
def props(prm, T, P, x, phase):
    """Thermodynamic state of one phase (SI, per mole of phase), GERG-2008.

    Residual part from alpha_r (Kunz and Wagner 2012, Table 3), ideal-gas part from their eq. 7.6
    integrated from 298.15 K; cp - cv = -T (dP/dT)_v^2 / (dP/dv)_T.

    Parameters
    ----------
    prm : tuple
        Mixture parameters (module docstring).
    T : float
        Temperature [K].
    P : float
        Pressure [Pa].
    x : numpy.ndarray
        Mole fractions [-], shape (n,).
    phase : int
        GIBBS, LIQUID or VAPOUR: which density root.

    Returns
    -------
    tuple of float
        (Z [-], v [m^3/mol], h [J/mol] (ideal gas at 298.15 K is zero), s [J/(mol K)] (ideal gas at
        298.15 K and 101325 Pa is zero), cp [J/(mol K)], cv [J/(mol K)], (dP/dT)_v [Pa/K],
        (dP/dv)_T [Pa mol/m^3], h_res [J/mol], s_res [J/(mol K)]).
    """
    n = x.size
    rho, ar = _state_level1(prm, T, P, x, phase)
    A, ad, add, addd, at, att, adt, addt = ar
    R = R_GERG
    RT = R * T
    Z = 1.0 + ad
    v = 1.0 / rho
    h_res = RT * (at + ad)
    s_res = R * (at - A + math.log(Z))
    cv_res = -R * att
    dP_dT = rho * R * (1.0 + ad - adt)
    dP_drho = RT * (1.0 + 2.0 * ad + add)
    dP_dv = -rho * rho * dP_drho
    cp_ig, h_ig, s_ig = ideal_gas(prm, T, x)
    cv = cp_ig - R + cv_res
    cp = cv - T * dP_dT * dP_dT / dP_dv
    s_mix = 0.0
    for i in range(n):
        if x[i] > 0.0:
            s_mix -= R * x[i] * math.log(x[i])
    s_tot = s_ig + s_mix - R * math.log(P / P_REF) + s_res
    return Z, v, h_ig + h_res, s_tot, cp, cv, dP_dT, dP_dv, h_res, s_res


@_jit
def pip(prm, T, P, x, phase):
    """Phase identification parameter of Venkatarathnam and Oellrich (2011) [-]; above 1 liquid-like.

    PIP = 2 - rho [(d2P/drho dT) / (dP/dT)_rho - (d2P/drho^2) / (dP/drho)_T] (Fluid Phase Equilib. 301 (2011)
    225-233, doi:10.1016/j.fluid.2010.12.001), from the GERG-2008 derivatives of alpha_r.

    Parameters
    ----------
    prm : tuple
        GERG-2008 parameter tuple of the mixture (layout in the module docstring).
    T, P : float
        Temperature [K] and pressure [Pa].
    x : numpy.ndarray
        Mole fractions [-], shape (n,).
    phase : int
        GIBBS, LIQUID or VAPOUR: which density root is labelled.
    """
    rho, ar = _state_level1(prm, T, P, x, phase)
    A, ad, add, addd, at, att, adt, addt = ar
    # rho-scaled derivatives divided by R T (or rho R)
    P_rho = 1.0 + 2.0 * ad + add
    rho_P_rhorho = 2.0 * ad + 4.0 * add + addd
    P_T = 1.0 + ad - adt
    rho_P_Trho = 1.0 + 2.0 * ad + add - 2.0 * adt - addt
    return 2.0 - (rho_P_Trho / P_T - rho_P_rhorho / P_rho)


@_jit
def fug_derivs(prm, T, P, x, phase, lnphi, dn, dT, dP, vbar):
    """ln phi with its composition, temperature and pressure derivatives, for one mole of one phase.

    With F = n alpha_r(delta, tau, x) at (T, V, n) (Kunz and Wagner 2012, Table B4; Michelsen and
    Mollerup 2007, ch. 2): n d ln phi_i/d n_j = n F_ij + 1 + (n/RT)(dP/dn_i)(dP/dn_j)/(dP/dV),
    d ln phi_i/dT = F_iT + 1/T - v_i (dP/dT)/(R T), d ln phi_i/dP = v_i/(R T) - 1/P, v_i = -(dP/dn_i)/(dP/dV).

    Parameters
    ----------
    prm : tuple
        Mixture parameters (module docstring).
    T : float
        Temperature [K].
    P : float
        Pressure [Pa].
    x : numpy.ndarray
        Mole fractions [-], shape (n,).
    phase : int
        GIBBS, LIQUID or VAPOUR: which density root.
    lnphi : numpy.ndarray
        Filled with ln phi_i [-], shape (n,).
    dn : numpy.ndarray
        Filled with d ln phi_i / d n_j at constant T, P [1/mol], shape (n, n), symmetric.
    dT : numpy.ndarray
        Filled with d ln phi_i / d T at constant P, n [1/K], shape (n,).
    dP : numpy.ndarray
        Filled with d ln phi_i / d P at constant T, n [1/Pa], shape (n,).
    vbar : numpy.ndarray
        Filled with the partial molar volumes [m^3/mol], shape (n,).

    Returns
    -------
    float
        Compressibility factor Z [-].
    """
    n = x.size
    tp = np.empty(prm[22].size)
    vec = np.empty((11, n))
    mat = np.empty((3, n, n))
    ax, adx, atx, dTr, dVr = vec[0], vec[1], vec[2], vec[3], vec[4]
    w, u, Ah, adh, ath, dPdn = vec[5], vec[6], vec[7], vec[8], vec[9], vec[10]
    axx, d2T, d2V = mat[0], mat[1], mat[2]
    Tr, Vr, tau, rho, delta = state_at(prm, T, P, x, phase, tp)
    A, ad, add, addd, at, att, adt, addt = alphar(prm, tp, x, delta, 3, ax, adx, atx, axx)
    reducing_derivs(prm, x, dTr, dVr, d2T, d2V, True)
    R = R_GERG
    RT = R * T
    V = 1.0 / rho
    Z = 1.0 + ad
    lnZ = math.log(Z)
    sV = 0.0
    sT = 0.0
    sA = 0.0
    sAd = 0.0
    sAt = 0.0
    for k in range(n):
        sV += x[k] * dVr[k]
        sT += x[k] * dTr[k]
        sA += x[k] * ax[k]
        sAd += x[k] * adx[k]
        sAt += x[k] * atx[k]
    # homogeneous first derivatives n d/dn_i of V_r, T_r (scaled), A, delta A_d, tau A_t at fixed delta, tau
    for i in range(n):
        w[i] = (dVr[i] - sV) / Vr
        u[i] = (dTr[i] - sT) / Tr
        Ah[i] = ax[i] - sA
        adh[i] = adx[i] - sAd
        ath[i] = atx[i] - sAt
    # x-weighted row sums of the second derivatives
    rA = np.empty((3, n))
    for i in range(n):
        s1 = 0.0
        s2 = 0.0
        s3 = 0.0
        for k in range(n):
            s1 += x[k] * axx[i, k]
            s2 += x[k] * d2V[i, k]
            s3 += x[k] * d2T[i, k]
        rA[0, i] = s1
        rA[1, i] = s2
        rA[2, i] = s3
    qA = 0.0
    qV = 0.0
    qT = 0.0
    for i in range(n):
        qA += x[i] * rA[0, i]
        qV += x[i] * rA[1, i]
        qT += x[i] * rA[2, i]
    dP_dV = -(RT / (V * V)) * (1.0 + 2.0 * ad + add)
    dP_dT = rho * R * (1.0 + ad - adt)
    for i in range(n):
        lnphi[i] = A + ad * (1.0 + w[i]) + at * u[i] + Ah[i] - lnZ
        dPdn[i] = (RT / V) * (1.0 + 2.0 * ad + ad * w[i] + add * (1.0 + w[i]) + adt * u[i] + adh[i])
        vbar[i] = -dPdn[i] / dP_dV
        FiT = -(at + adt * (1.0 + w[i]) + att * u[i] + ath[i] + at * u[i]) / T
        dT[i] = FiT + 1.0 / T - vbar[i] * dP_dT / RT
        dP[i] = vbar[i] / RT - 1.0 / P
    for i in range(n):
        for j in range(i, n):
            Wij = (d2V[i, j] - rA[1, i] - rA[1, j] + qV - (dVr[i] - sV) - (dVr[j] - sV)) / Vr
            Uij = (d2T[i, j] - rA[2, i] - rA[2, j] + qT - (dTr[i] - sT) - (dTr[j] - sT)) / Tr
            Acheck = axx[i, j] - rA[0, i] - rA[0, j] + qA - Ah[i] - Ah[j]
            wi = w[i]
            wj = w[j]
            ui = u[i]
            uj = u[j]
            nF = (ad * (2.0 + 2.0 * wi + 2.0 * wj + Wij)
                  + at * (ui + uj + Uij)
                  + Ah[i] + Ah[j] + Acheck
                  + (1.0 + wi) * (add * (1.0 + wj) + adt * uj + adh[j])
                  + ui * (adt * (1.0 + wj) + att * uj + ath[j])
                  + adh[i] * (1.0 + wj) + ath[i] * uj)
            val = nF + 1.0 + dPdn[i] * dPdn[j] / (RT * dP_dV)
            dn[i, j] = val
            dn[j, i] = val
    return Z


@_jit_inline
def critical_constants(prm):
    """Critical temperatures [K], critical pressures [Pa] and acentric factors [-] of the components.

    From jtcheck's component data (``components.csv``), for Wilson K-values and saturation starts;
    arrays of shape (n,), not to be modified.
    """
    return prm[28], prm[29], prm[30]


@_jit_inline
def polar_flags(prm):
    """Which components can form a liquid of their own (water), shape (n,)."""
    return prm[31]


@_jit
def residual_tv(prm, T, rho, x):
    """alpha_r and its (delta, tau) derivatives at (T [K], rho [mol/m^3], x), for properties at given density.

    Returns (A, delta A_d, delta^2 A_dd, delta^3 A_ddd, tau A_t, tau^2 A_tt, delta tau A_dt, delta^2 tau A_ddt).
    """
    tp = np.empty(prm[22].size)
    cg = np.empty((3 + 4, prm[34].size))
    Tr, Vr = reducing(prm, x)
    tau_powers(prm, Tr / T, tp)
    level0_coefs(prm, tp, x, cg)
    return alphar1(density_params(prm), cg, rho * Vr)


@_jit
def density_tp(prm, T, P, x, phase):
    """Molar density [mol/m^3] at (T [K], P [Pa], x) of the root chosen by ``phase`` (NaN if none)."""
    tp = np.empty(prm[22].size)
    return state_at(prm, T, P, x, phase, tp)[3]


__all__ = ["GIBBS", "LIQUID", "VAPOUR", "MARKER", "R_GERG", "R_STAR", "critical_constants", "density_tp",
           "fug_derivs", "ln_phi", "pip", "polar_flags", "props", "residual_tv"]
