"""Compiled scalar kernels of the flash machinery (numba, nopython).

These are the same algorithms as the readable numpy reference in :mod:`jtcheck.thermo.cubic`,
written as plain loops so that numba compiles them: on this class of machine a numpy call on a
six-component vector costs about a microsecond, and a PH flash makes thousands of them.  The
kernels take the mixture parameters as one tuple ``prm`` built by
:func:`jtcheck.thermo.cubic.kernel_params`:

    (alpha_kind, s_c1, s_c2, bs, K, d1, d2, cpA, cpB, cpC, cpD, cpE, tcs, pcs, omegas, polar,
     h_ref, s_ref)

Methods and equations: see :mod:`jtcheck.thermo.cubic` (generic cubic, Michelsen and Mollerup
2007, ch. 3), :mod:`jtcheck.thermo.stability` (Michelsen 1982, Part I), :mod:`jtcheck.thermo.flash`
(Michelsen 1982 Part II; Michelsen 1987), :mod:`jtcheck.thermo.rachford_rice` (Rachford and Rice 1952;
Leibovici and Neoschil 1992) and :mod:`jtcheck.thermo.idealgas` (Aly and Lee 1981).
"""
from __future__ import annotations

import math

import numpy as np
from numba import njit, prange

R = 8.314462618
T_REF = 298.15
P_REF = 101325.0
T_MIN = 5.0
T_MAX = 5000.0
LN2 = math.log(2.0)

SOAVE, INV_SQRT, CONSTANT = 0, 1, 2
GIBBS, LIQUID, VAPOUR = 0, 1, 2

# status codes of flash kernels
ST_SINGLE = 0          # stable single phase
ST_TWO = 1             # two phases
ST_PURE_SAT = 2        # pure component on the saturation line
ST_FAIL_SINGLE = 10    # single-phase temperature iteration failed
ST_FAIL_TWO = 11       # two-phase iteration failed
ST_FAIL_SPLIT = 12     # unstable feed but no phase split found
ST_FAIL_INPUT = 13     # non-finite input

_jit = njit(cache=True, nogil=True)


# ---------------------------------------------------------------------------------------------
# ideal gas (Aly and Lee 1981, DIPPR eq. 107)
# ---------------------------------------------------------------------------------------------

@_jit
def _aly_lee_terms(A, B, C, D, E, T):
    """Cp [J/mol/K], H(T) and S(T) antiderivatives (no reference) for one component."""
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
    """H and S antiderivatives of each component at T_REF = 298.15 K (subtracted by ideal_gas)."""
    n = A.size
    h_ref = np.empty(n)
    s_ref = np.empty(n)
    for i in range(n):
        _, h_ref[i], s_ref[i] = _aly_lee_terms(A[i], B[i], C[i], D[i], E[i], T_REF)
    return h_ref, s_ref


@_jit
def ideal_gas(prm, T, x):
    """Mixture ideal-gas cp [J/mol/K], h [J/mol] (zero at 298.15 K) and sum x_i s_i [J/mol/K]."""
    cA, cB, cC, cD, cE, h_ref, s_ref = prm[7], prm[8], prm[9], prm[10], prm[11], prm[16], prm[17]
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



# ---------------------------------------------------------------------------------------------
# small dense linear algebra that reports failure instead of raising (safe inside prange)
# ---------------------------------------------------------------------------------------------

@_jit
def lu_solve(A, b, out):
    """Solve A out = b by Gaussian elimination with partial pivoting; A, b are not modified.

    Returns False when A is singular to working precision."""
    n = b.size
    M = A.copy()
    r = b.copy()
    for k in range(n):
        p = k
        big = abs(M[k, k])
        for i in range(k + 1, n):
            if abs(M[i, k]) > big:
                big = abs(M[i, k])
                p = i
        if not big > 1e-300:
            return False
        if p != k:
            for j in range(n):
                tmp = M[k, j]
                M[k, j] = M[p, j]
                M[p, j] = tmp
            tmp = r[k]
            r[k] = r[p]
            r[p] = tmp
        for i in range(k + 1, n):
            f = M[i, k] / M[k, k]
            if f != 0.0:
                for j in range(k, n):
                    M[i, j] -= f * M[k, j]
                r[i] -= f * r[k]
    for i in range(n - 1, -1, -1):
        acc = r[i]
        for j in range(i + 1, n):
            acc -= M[i, j] * out[j]
        out[i] = acc / M[i, i]
        if not math.isfinite(out[i]):
            return False
    return True


@_jit
def cholesky_solve(A, b, out):
    """Solve A out = b for symmetric A by Cholesky; returns False unless A is positive definite."""
    n = b.size
    L = np.zeros((n, n))
    for i in range(n):
        for j in range(i + 1):
            acc = A[i, j]
            for k in range(j):
                acc -= L[i, k] * L[j, k]
            if i == j:
                if not acc > 0.0:
                    return False
                L[i, i] = math.sqrt(acc)
            else:
                L[i, j] = acc / L[j, j]
    tmp = np.empty(n)
    for i in range(n):
        acc = b[i]
        for k in range(i):
            acc -= L[i, k] * tmp[k]
        tmp[i] = acc / L[i, i]
    for i in range(n - 1, -1, -1):
        acc = tmp[i]
        for k in range(i + 1, n):
            acc -= L[k, i] * out[k]
        out[i] = acc / L[i, i]
    return True

# ---------------------------------------------------------------------------------------------
# the cubic
# ---------------------------------------------------------------------------------------------

@_jit
def sqrt_a(prm, T, s, s_T):
    """Fill s = sqrt(a_i(T)) and s_T = d s / dT."""
    kind, c1, c2 = prm[0], prm[1], prm[2]
    n = c1.size
    if kind == SOAVE:
        sq = math.sqrt(T)
        for i in range(n):
            s[i] = c1[i] - c2[i] * sq
            s_T[i] = -0.5 * c2[i] / sq
    elif kind == INV_SQRT:
        f = T ** -0.25
        for i in range(n):
            s[i] = c1[i] * f
            s_T[i] = -0.25 * s[i] / T
    else:
        for i in range(n):
            s[i] = c1[i]
            s_T[i] = 0.0


@_jit
def _s_i(kind, c1, c2, i, T, sqT, f):
    """sqrt(a_i(T)) for one component (sqT = sqrt(T), f = T**-0.25 precomputed)."""
    if kind == SOAVE:
        return c1[i] - c2[i] * sqT
    if kind == INV_SQRT:
        return c1[i] * f
    return c1[i]


@_jit
def attraction_scalars(prm, T, x):
    """Mixture a, a_T, a_TT [SI] and b [m^3/mol] without allocating (O(n^2) loops)."""
    kind, c1, c2, bs, K = prm[0], prm[1], prm[2], prm[3], prm[4]
    n = x.size
    sqT = math.sqrt(T)
    f = T ** -0.25 if kind == INV_SQRT else 1.0
    a = 0.0
    a_T = 0.0
    q_TT = 0.0
    b = 0.0
    for i in range(n):
        if x[i] == 0.0:
            continue
        si = _s_i(kind, c1, c2, i, T, sqT, f)
        if kind == SOAVE:
            sTi = -0.5 * c2[i] / sqT
        elif kind == INV_SQRT:
            sTi = -0.25 * si / T
        else:
            sTi = 0.0
        ksx = 0.0
        ksxT = 0.0
        for j in range(n):
            sj = _s_i(kind, c1, c2, j, T, sqT, f)
            if kind == SOAVE:
                sTj = -0.5 * c2[j] / sqT
            elif kind == INV_SQRT:
                sTj = -0.25 * sj / T
            else:
                sTj = 0.0
            ksx += K[i, j] * x[j] * sj
            ksxT += K[i, j] * x[j] * sTj
        a += x[i] * si * ksx
        a_T += 2.0 * x[i] * sTi * ksx
        q_TT += x[i] * sTi * ksxT
        b += x[i] * bs[i]
    if kind == SOAVE:
        a_TT = -a_T / (2.0 * T) + 2.0 * q_TT
    elif kind == INV_SQRT:
        # s_TT = 0.3125 s / T^2, so sum x_i s_TT_i (K x s)_i = 0.3125 a / T^2
        a_TT = 2.0 * (0.3125 * a / (T * T) + q_TT)
    else:
        a_TT = 0.0
    return a, a_T, a_TT, b


@_jit
def attraction(prm, T, x, s, s_T, sum_xa, sum_xa_T):
    """Mixture a, a_T, a_TT and b; fills s, s_T, sum_j x_j a_ij and its T-derivative."""
    kind, bs, K = prm[0], prm[3], prm[4]
    n = x.size
    sqrt_a(prm, T, s, s_T)
    a = 0.0
    a_T = 0.0
    q_TT = 0.0   # sum x_i x_j K_ij s_T_i s_T_j
    q_sTT = 0.0  # sum x_i x_j K_ij s_TT_i s_j
    b = 0.0
    for i in range(n):
        ksx = 0.0
        ksxT = 0.0
        for j in range(n):
            ksx += K[i, j] * x[j] * s[j]
            ksxT += K[i, j] * x[j] * s_T[j]
        sum_xa[i] = s[i] * ksx
        sum_xa_T[i] = s_T[i] * ksx + s[i] * ksxT
        a += x[i] * s[i] * ksx
        a_T += 2.0 * x[i] * s_T[i] * ksx
        q_TT += x[i] * s_T[i] * ksxT
        if kind == INV_SQRT:
            q_sTT += x[i] * (0.3125 * s[i] / (T * T)) * ksx
        b += x[i] * bs[i]
    if kind == SOAVE:
        a_TT = -a_T / (2.0 * T) + 2.0 * q_TT
    elif kind == INV_SQRT:
        a_TT = 2.0 * (q_sTT + q_TT)
    else:
        a_TT = 0.0
    return a, a_T, a_TT, b


@_jit
def cubic_roots(A, B, d1, d2):
    """Smallest and largest physical roots of the generic cubic in Z (see cubic.cubic_roots)."""
    u = d1 + d2
    w = d1 * d2
    BB = B * B
    c2 = (u - 1.0) * B - 1.0
    c1 = A + w * BB - u * B - u * BB
    c0 = -(A * B + w * BB + w * BB * B)
    shift = c2 / 3.0
    p = c1 - c2 * shift
    q = (2.0 / 27.0) * c2 * c2 * c2 - c2 * c1 / 3.0 + c0
    disc = 0.25 * q * q + p * p * p / 27.0
    if disc > 0.0 or p >= 0.0:
        sq = math.sqrt(max(disc, 0.0))
        s_ = -0.5 * q - math.copysign(sq, q)
        uu = math.copysign(abs(s_) ** (1.0 / 3.0), s_)
        t = uu - p / (3.0 * uu) if uu != 0.0 else 0.0
        z_hi = t - shift
        z_lo = z_hi
    else:
        r = 2.0 * math.sqrt(-p / 3.0)
        arg = min(1.0, max(-1.0, 3.0 * q / (p * r)))
        phi = math.acos(arg) / 3.0
        z_hi = r * math.cos(phi) - shift
        z_lo = r * math.cos(phi + 2.0 * math.pi / 3.0) - shift
    for _ in range(2):
        f = ((z_hi + c2) * z_hi + c1) * z_hi + c0
        df = (3.0 * z_hi + 2.0 * c2) * z_hi + c1
        if df != 0.0:
            z_hi -= f / df
        f = ((z_lo + c2) * z_lo + c1) * z_lo + c0
        df = (3.0 * z_lo + 2.0 * c2) * z_lo + c1
        if df != 0.0:
            z_lo -= f / df
    if not z_lo > B:
        z_lo = z_hi
    return z_lo, z_hi


@_jit
def log_term(Z, B, d1, d2):
    if d1 == d2:
        return B / (Z + d1 * B)
    return math.log((Z + d1 * B) / (Z + d2 * B)) / (d1 - d2)


@_jit
def choose_root(A, B, d1, d2, phase):
    z_lo, z_hi = cubic_roots(A, B, d1, d2)
    if phase == LIQUID or z_lo == z_hi:
        return z_lo
    if phase == VAPOUR:
        return z_hi
    AB = A / B
    g_lo = z_lo - math.log(z_lo - B) - AB * log_term(z_lo, B, d1, d2)
    g_hi = z_hi - math.log(z_hi - B) - AB * log_term(z_hi, B, d1, d2)
    return z_lo if g_lo < g_hi else z_hi


@_jit
def ln_phi(prm, T, P, x, phase, out):
    """Fill ``out`` with ln phi_i; return Z.  Allocation-free."""
    kind, c1, c2, bs, K, d1, d2 = prm[0], prm[1], prm[2], prm[3], prm[4], prm[5], prm[6]
    n = x.size
    sqT = math.sqrt(T)
    f = T ** -0.25 if kind == INV_SQRT else 1.0
    a = 0.0
    b = 0.0
    for i in range(n):
        ksx = 0.0
        for j in range(n):
            ksx += K[i, j] * x[j] * _s_i(kind, c1, c2, j, T, sqT, f)
        out[i] = ksx          # (K x s)_i for now
        a += x[i] * _s_i(kind, c1, c2, i, T, sqT, f) * ksx
        b += x[i] * bs[i]
    RT = R * T
    A = a * P / (RT * RT)
    B = b * P / RT
    Z = choose_root(A, B, d1, d2, phase)
    c = A / B * log_term(Z, B, d1, d2)
    lzb = math.log(Z - B)
    for i in range(n):
        sxa = _s_i(kind, c1, c2, i, T, sqT, f) * out[i]
        out[i] = bs[i] / b * (Z - 1.0 + c) - lzb - 2.0 * c * sxa / a
    return Z


@_jit
def props(prm, T, P, x, phase):
    """(Z, v, h, s, cp, cv, dP/dT_v, dP/dv_T, h_res, s_res) of one phase (SI, per mole)."""
    n = x.size
    a, a_T, a_TT, b = attraction_scalars(prm, T, x)
    d1, d2 = prm[5], prm[6]
    RT = R * T
    A = a * P / (RT * RT)
    B = b * P / RT
    Z = choose_root(A, B, d1, d2, phase)
    v = Z * RT / P
    Ilog = log_term(Z, B, d1, d2) / b
    h_res = RT * (Z - 1.0) + (T * a_T - a) * Ilog
    s_res = R * math.log(Z - B) + a_T * Ilog
    cv_res = T * a_TT * Ilog
    p1 = v + d1 * b
    p2 = v + d2 * b
    den = p1 * p2
    dP_dT = R / (v - b) - a_T / den
    dP_dv = -RT / ((v - b) * (v - b)) + a * (p1 + p2) / (den * den)
    cp_ig, h_ig, s_ig = ideal_gas(prm, T, x)
    xlnx = 0.0
    for i in range(n):
        if x[i] > 0.0:
            xlnx += x[i] * math.log(x[i])
    s_tot = s_ig - R * xlnx - R * math.log(P / P_REF) + s_res
    cv = cp_ig - R + cv_res
    cp = cv - T * dP_dT * dP_dT / dP_dv
    return Z, v, h_ig + h_res, s_tot, cp, cv, dP_dT, dP_dv, h_res, s_res


@_jit
def pip(prm, T, P, x, phase):
    """Phase identification parameter (Venkatarathnam and Oellrich 2011); > 1 liquid-like."""
    a, a_T, a_TT, b = attraction_scalars(prm, T, x)
    d1, d2 = prm[5], prm[6]
    RT = R * T
    Z = choose_root(a * P / (RT * RT), b * P / RT, d1, d2, phase)
    v = Z * RT / P
    p1 = v + d1 * b
    p2 = v + d2 * b
    den = p1 * p2
    dden = p1 + p2
    dP_dT = R / (v - b) - a_T / den
    dP_dv = -RT / (v - b) ** 2 + a * dden / den ** 2
    d2P_dv2 = 2.0 * RT / (v - b) ** 3 + a * (2.0 / den ** 2 - 2.0 * dden * dden / den ** 3)
    d2P_dTdv = -R / (v - b) ** 2 + a_T * dden / den ** 2
    return v * (d2P_dTdv / dP_dT - d2P_dv2 / dP_dv)


@_jit
def fug_derivs(prm, T, P, x, phase, lnphi, dn, dT, dP, vbar):
    """Fill ln phi, d ln phi/dn (n,n) [1/mol], d/dT [1/K], d/dP [1/Pa], partial volumes; return Z.

    Michelsen and Mollerup (2007), ch. 3, reduced residual Helmholtz function of the generic cubic.
    """
    n = x.size
    s = np.empty(n)
    s_T = np.empty(n)
    sxa = np.empty(n)
    sxa_T = np.empty(n)
    D, D_T, a_TT, B = attraction(prm, T, x, s, s_T, sxa, sxa_T)
    bs, K, d1, d2 = prm[3], prm[4], prm[5], prm[6]
    RT = R * T
    Zr = choose_root(D * P / (RT * RT), B * P / RT, d1, d2, phase)
    V = Zr * RT / P
    VB = V - B
    g = math.log(1.0 - B / V)
    g_V = B / (V * VB)
    g_B = -1.0 / VB
    g_VV = -1.0 / (VB * VB) + 1.0 / (V * V)
    g_BV = 1.0 / (VB * VB)
    g_BB = -1.0 / (VB * VB)
    p1 = V + d1 * B
    p2 = V + d2 * B
    if d1 == d2:
        f = 1.0 / (R * p1)
    else:
        f = math.log(p1 / p2) / (R * B * (d1 - d2))
    f_V = -1.0 / (R * p1 * p2)
    f_B = -(f + V * f_V) / B
    f_VV = (p1 + p2) / (R * (p1 * p2) ** 2)
    f_BV = -(2.0 * f_V + V * f_VV) / B
    f_BB = -(2.0 * f_B + V * f_BV) / B
    F_n = -g
    F_B = -g_B - D * f_B / T
    F_D = -f / T
    F_nB = -g_B
    F_nV = -g_V
    F_BB = -g_BB - D * f_BB / T
    F_BD = -f_B / T
    F_BV = -g_BV - D * f_BV / T
    F_DV = -f_V / T
    F_VV = -g_VV - D * f_VV / T
    F_BT = D * f_B / (T * T) - D_T * f_B / T
    F_DT = f / (T * T)
    F_VT = D * f_V / (T * T) - D_T * f_V / T
    dP_dV = -RT * F_VV - RT / (V * V)
    dP_dT = -RT * F_VT + P / T
    lnZ = math.log(Zr)
    dPdn = np.empty(n)
    for i in range(n):
        Di = 2.0 * sxa[i]
        lnphi[i] = F_n + F_B * bs[i] + F_D * Di - lnZ
        F_iV = F_nV + F_BV * bs[i] + F_DV * Di
        dPdn[i] = -RT * F_iV + RT / V
        vbar[i] = -dPdn[i] / dP_dV
        F_iT = F_BT * bs[i] + F_DT * Di + F_D * 2.0 * sxa_T[i]
        dT[i] = F_iT + 1.0 / T - vbar[i] * dP_dT / RT
        dP[i] = vbar[i] / RT - 1.0 / P
    for i in range(n):
        Di = 2.0 * sxa[i]
        for j in range(i, n):
            Dj = 2.0 * sxa[j]
            Fij = (F_nB * (bs[i] + bs[j]) + F_BB * bs[i] * bs[j] + F_D * 2.0 * K[i, j] * s[i] * s[j]
                   + F_BD * (bs[i] * Dj + bs[j] * Di))
            val = Fij + 1.0 + dPdn[i] * dPdn[j] / (RT * dP_dV)
            dn[i, j] = val
            dn[j, i] = val
    return Zr


# ---------------------------------------------------------------------------------------------
# Rachford-Rice
# ---------------------------------------------------------------------------------------------

@_jit
def rachford_rice(z, K, x, y):
    """Solve for beta in the Leibovici-Neoschil window; fill x, y. Returns (beta, ok).

    beta = +-inf when every K lies on one side of 1 (no split possible)."""
    n = z.size
    kmax = -1.0
    kmin = 1e300
    for i in range(n):
        kmax = max(kmax, K[i])
        kmin = min(kmin, K[i])
    if kmax <= 1.0:
        for i in range(n):
            x[i] = z[i]
            y[i] = z[i]
        return -np.inf, True
    if kmin >= 1.0:
        for i in range(n):
            x[i] = z[i]
            y[i] = z[i]
        return np.inf, True
    lo = -1e300
    hi = 1e300
    for i in range(n):
        if K[i] > 1.0:
            lo = max(lo, (K[i] * z[i] - 1.0) / (K[i] - 1.0))
        elif K[i] < 1.0:
            hi = min(hi, (1.0 - z[i]) / (1.0 - K[i]))
    beta = 0.5 * (lo + hi)
    ok = False
    for _ in range(200):
        f = 0.0
        df = 0.0
        for i in range(n):
            km1 = K[i] - 1.0
            if km1 == 0.0:
                continue
            den = 1.0 / km1 + beta
            f += z[i] / den
            df -= z[i] / (den * den)
        if f > 0.0:
            lo = beta
        else:
            hi = beta
        new = beta - f / df if df != 0.0 else 0.5 * (lo + hi)
        if not (lo < new < hi):
            new = 0.5 * (lo + hi)
        if abs(new - beta) <= 1e-15 * max(1.0, abs(beta)):
            beta = new
            ok = True
            break
        beta = new
    sx = 0.0
    sy = 0.0
    for i in range(n):
        x[i] = z[i] / (1.0 + beta * (K[i] - 1.0))
        y[i] = K[i] * x[i]
        sx += x[i]
        sy += y[i]
    for i in range(n):
        x[i] /= sx
        y[i] /= sy
    return beta, ok


# ---------------------------------------------------------------------------------------------
# stability (Michelsen 1982, Part I)
# ---------------------------------------------------------------------------------------------

@_jit
def wilson_k(prm, T, P, K):
    tcs, pcs, oms = prm[12], prm[13], prm[14]
    for i in range(tcs.size):
        K[i] = pcs[i] / P * math.exp(5.373 * (1.0 + oms[i]) * (1.0 - tcs[i] / T))


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
    tcs, polar = prm[12], prm[15]
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


# ---------------------------------------------------------------------------------------------
# phase split (Michelsen 1982, Part II)
# ---------------------------------------------------------------------------------------------

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
def gibbs_hessian(dnV, dnL, x, y, V, L, H):
    """Fill H[:n, :n] with the Hessian of the Gibbs energy in the vapour mole numbers,
    (delta_ij / y_i - 1 + n d ln phi_i/d n_j)^V / V + (same)^L / L (Michelsen 1982, Part II)."""
    n = x.size
    for i in range(n):
        for j in range(n):
            H[i, j] = (dnV[i, j] - 1.0) / V + (dnL[i, j] - 1.0) / L
        H[i, i] += 1.0 / (y[i] * V) + 1.0 / (x[i] * L)


@_jit
def _apply_step(z, v, l_, dv, lam):
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
    z_i minus it (:func:`_apply_step`), so that a phase of a millionth of the feed just inside a dew
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
        _apply_step(z, v, l_, dv, lam)
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
    lnV = np.empty(n)
    lnL = np.empty(n)
    dnV = np.empty((n, n))
    dnL = np.empty((n, n))
    dTV = np.empty(n)
    dTL = np.empty(n)
    dP_ = np.empty(n)
    vb = np.empty(n)
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


# ---------------------------------------------------------------------------------------------
# PH / PS machinery
# ---------------------------------------------------------------------------------------------

@_jit
def spec_value(prm, T, P, z, spec, phase):
    """(value, d value/dT) for spec 0 = enthalpy [J/mol], 1 = entropy [J/mol/K]."""
    p = props(prm, T, P, z, phase)
    if spec == 0:
        return p[2], p[4]
    return p[3], p[4] / T


@_jit
def spec_tol(spec, target):
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
def pure_saturation_T(prm, P, z, i):
    """Saturation temperature of pure component i from the EOS [K]; nan above its critical point."""
    tcs, pcs, oms = prm[12], prm[13], prm[14]
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


@_jit
def _label(prm, T, P, z):
    """Vapour fraction of a single phase by the phase identification parameter: 1 or 0."""
    return 0.0 if pip(prm, T, P, z, GIBBS) > 1.0 else 1.0


@_jit
def flash_pt(prm, T, P, z, x, y, t_skip):
    """PT flash.  Returns (status, beta, h, s, tpd_min, iterations); fills x, y.

    Above ``t_skip`` [K] (the fluid's cricondentherm plus a margin, or +inf) the feed is known to be
    single-phase and the stability test is skipped."""
    n = z.size
    imax = 0
    for i in range(n):
        if z[i] > z[imax]:
            imax = i
    if n == 1 or z[imax] > 1.0 - 1e-12:
        for i in range(n):
            x[i] = z[i]
            y[i] = z[i]
        p = props(prm, T, P, z, GIBBS)
        return ST_SINGLE, _label(prm, T, P, z), p[2], p[3], 0.0, 0
    W = np.empty(n)
    if T > t_skip:
        stable, tpd, lighter = True, 0.0, False
    else:
        stable, tpd, lighter, sconv = stability(prm, T, P, z, W)
    if stable:
        for i in range(n):
            x[i] = z[i]
            y[i] = z[i]
        p = props(prm, T, P, z, GIBBS)
        return ST_SINGLE, _label(prm, T, P, z), p[2], p[3], tpd, 0
    K = np.empty(n)
    for attempt in range(2):
        if attempt == 0:
            for i in range(n):
                K[i] = W[i] / z[i] if lighter else z[i] / W[i]
        else:
            wilson_k(prm, T, P, K)
        status, beta, its = split(prm, T, P, z, K, x, y)
        if status == 1:
            h, s, _ = two_phase_state(prm, T, P, beta, x, y)
            return ST_TWO, beta, h, s, tpd, its
    for i in range(n):
        x[i] = z[i]
        y[i] = z[i]
    p = props(prm, T, P, z, GIBBS)
    return ST_FAIL_SPLIT, _label(prm, T, P, z), p[2], p[3], tpd, 0


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
    lnV = np.empty(n)
    lnL = np.empty(n)
    dnV = np.empty((n, n))
    dnL = np.empty((n, n))
    dTV = np.empty(n)
    dTL = np.empty(n)
    dP_ = np.empty(n)
    vb = np.empty(n)
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
        _apply_step(z, v, l_, step[:n], lam)
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
                return ST_SINGLE, T, _label(prm, T, P, z), p[2], p[3], it, r
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
        return (ST_SINGLE if ok else ST_FAIL_SINGLE), T, _label(prm, T, P, z), p[2], p[3], its, r, 0.0
    T, ok, jump, its, r = solve_single(prm, P, target, z, T0, spec, GIBBS, T_MIN, T_MAX)
    W = np.empty(n)
    if ok and T > t_skip:
        stable, tpd, lighter = True, 0.0, False
    else:
        stable, tpd, lighter, sconv = stability(prm, T, P, z, W)
    if ok and stable:
        p = props(prm, T, P, z, GIBBS)
        return ST_SINGLE, T, _label(prm, T, P, z), p[2], p[3], its, r, tpd
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
        return ST_FAIL_TWO, T, _label(prm, T, P, z), p[2], p[3], its + its2, r2, tpd
    return status, T2, beta, h, s, its + its2, r2, tpd


# ---------------------------------------------------------------------------------------------
# batches
# ---------------------------------------------------------------------------------------------

@njit(cache=True, parallel=True)
def letdown_batch(prm, z, p_in, t_in, p_out, spec, offset, t_skip):
    """Isenthalpic (spec 0) or isentropic (spec 1) letdowns of one feed, in parallel.

    The outlet target is the inlet value plus ``offset[k]`` (the volume-translation enthalpy
    correction, or zero); ``t_skip`` as in :func:`flash_pt`.

    Returns arrays (status_in, beta_in, h_in, s_in, status_out, T_out, beta_out, h_out, s_out,
    iterations, residual)."""
    N = p_in.size
    n = z.size
    st_in = np.empty(N, np.int64)
    b_in = np.empty(N)
    h_in = np.empty(N)
    s_in = np.empty(N)
    st_out = np.empty(N, np.int64)
    T_out = np.empty(N)
    b_out = np.empty(N)
    h_out = np.empty(N)
    s_out = np.empty(N)
    iters = np.empty(N, np.int64)
    resid = np.empty(N)
    for k in prange(N):
        x = np.empty(n)
        y = np.empty(n)
        st, b, h, s, tpd, its = flash_pt(prm, t_in[k], p_in[k], z, x, y, t_skip)
        st_in[k] = st
        b_in[k] = b
        h_in[k] = h
        s_in[k] = s
        target = (h if spec == 0 else s) + offset[k]
        st2, T2, b2, h2, s2, its2, r2, tpd2 = flash_spec(prm, p_out[k], target, z, t_in[k], spec, x, y, t_skip)
        st_out[k] = st2
        T_out[k] = T2
        b_out[k] = b2
        h_out[k] = h2
        s_out[k] = s2
        iters[k] = its2
        resid[k] = r2
    return st_in, b_in, h_in, s_in, st_out, T_out, b_out, h_out, s_out, iters, resid
