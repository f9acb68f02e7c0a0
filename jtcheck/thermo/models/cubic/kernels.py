"""Compiled kernels of the generic two-parameter cubic equation of state (numba, nopython).

The same equations as the readable numpy module :mod:`jtcheck.thermo.models.cubic.properties`, written
as plain loops so that numba compiles them: on this class of machine a numpy call on a six-component
vector costs about a microsecond, and a PH flash makes thousands of calls.  Methods: Michelsen and
Mollerup, *Thermodynamic Models: Fundamentals and Computational Aspects*, 2nd ed. (2007), ch. 3
(generic cubic, reduced residual Helmholtz function and its derivatives); the phase identification
parameter of Venkatarathnam and Oellrich, Fluid Phase Equilib. 301 (2011) 225-233,
doi:10.1016/j.fluid.2010.12.001; the ideal-gas part from :mod:`jtcheck.thermo.models.idealgas`
(Aly and Lee 1981).

The functions the flash kernels call (through :mod:`jtcheck.thermo.models.interface`) are
:func:`ln_phi`, :func:`props`, :func:`fug_derivs`, :func:`pip`, :func:`critical_constants` and
:func:`polar_flags`.  They take the mixture parameters as one tuple ``prm`` built by
:func:`jtcheck.thermo.models.cubic.mixture.make_mixture` (``CubicMixture.kernel_params``):

    (alpha_kind, s_c1, s_c2, bs, K, d1, d2, cpA, cpB, cpC, cpD, cpE, tcs, pcs, omegas, polar,
     h_ref, s_ref)

    alpha_kind   SOAVE, INV_SQRT or CONSTANT (int)
    s_c1, s_c2   sqrt(a_i(T)) = s_c1 - s_c2 sqrt(T) (Soave), s_c1 T^-1/4 (Redlich-Kwong), s_c1 (vdW)
    bs           co-volumes [m^3/mol], shape (n,)
    K            1 - kij [-], shape (n, n)
    d1, d2       denominator constants of the cubic [-]
    cpA..cpE     Aly-Lee ideal-gas coefficients A, B, D [J/(mol K)], C, E [K], shape (n,)
    tcs, pcs     critical temperatures [K] and pressures [Pa], shape (n,)
    omegas       acentric factors [-], shape (n,)
    polar        components seeded as near-pure trial phases in stability tests (bool), shape (n,)
    h_ref, s_ref ideal-gas antiderivatives at 298.15 K [J/mol], [J/(mol K)], see models.idealgas

The tuple is flat: it reaches the ``prange`` loop of the letdown batch, whose parallel lowering
(numba 0.68) rejects tuples nested in tuples.
"""
from __future__ import annotations

import math

import numpy as np
from numba import njit

from jtcheck.thermo.models.conventions import LIQUID, P_REF, VAPOUR, R
from jtcheck.thermo.models.idealgas import ideal_gas

#: Codes of the alpha function (temperature dependence of a_i) in ``prm[0]``.
SOAVE, INV_SQRT, CONSTANT = 0, 1, 2

_jit = njit(cache=True, nogil=True)


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
    """Logarithms of the fugacity coefficients of one phase, without allocating.

    ln phi_i = (b_i/b)(Z - 1) - ln(Z - B) - (A/B) I (2 sum_j x_j a_ij / a - b_i/b) (Michelsen and
    Mollerup 2007, ch. 3).

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
        GIBBS, LIQUID or VAPOUR (:mod:`jtcheck.thermo.models.conventions`): which root of the cubic.
    out : numpy.ndarray
        Filled with ln phi_i [-], shape (n,).

    Returns
    -------
    float
        Compressibility factor Z [-] of the chosen root.
    """
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
    """Thermodynamic state of one phase (SI, per mole of phase).

    Residual part in closed form (Michelsen and Mollerup 2007, ch. 3), ideal-gas part by Aly and Lee
    (1981); Cp - Cv = -T (dP/dT)_v^2 / (dP/dv)_T.

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
        GIBBS, LIQUID or VAPOUR: which root of the cubic.

    Returns
    -------
    tuple of float
        (Z [-], v [m^3/mol] untranslated, h [J/mol] (ideal gas at 298.15 K is zero), s [J/(mol K)]
        (ideal gas at 298.15 K and 101325 Pa is zero), cp [J/(mol K)], cv [J/(mol K)],
        (dP/dT)_v [Pa/K], (dP/dv)_T [Pa mol/m^3], h_res [J/mol], s_res [J/(mol K)]).
    """
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
    cp_ig, h_ig, s_ig = ideal_gas(prm[7], prm[8], prm[9], prm[10], prm[11], prm[16], prm[17], T, x)
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
    """Phase identification parameter of Venkatarathnam and Oellrich (2011) [-]; above 1 liquid-like.

    PIP = v [ (d2P/dT dv) / (dP/dT)_v - (d2P/dv^2) / (dP/dv)_T ] (Fluid Phase Equilib. 301 (2011)
    225-233, doi:10.1016/j.fluid.2010.12.001).

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
        GIBBS, LIQUID or VAPOUR: which root of the cubic.
    """
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
    """ln phi with its composition, temperature and pressure derivatives, for one mole of one phase.

    Michelsen and Mollerup (2007), ch. 3, reduced residual Helmholtz function F(T, V, n) of the generic
    cubic: n d ln phi_i/d n_j = n F_ij + 1 + (n/RT)(dP/dn_i)(dP/dn_j)/(dP/dV),
    d ln phi_i/dT = F_iT + 1/T - v_i (dP/dT)/(R T), d ln phi_i/dP = v_i/(R T) - 1/P.

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
        GIBBS, LIQUID or VAPOUR: which root of the cubic.
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


@_jit
def critical_constants(prm):
    """Critical temperatures [K], critical pressures [Pa] and acentric factors [-] of the components.

    Used by the algorithms for Wilson K-values and for the start and bracket of a pure component's
    saturation temperature; arrays of shape (n,), not to be modified.
    """
    return prm[12], prm[13], prm[14]


@_jit
def polar_flags(prm):
    """Which components can form a liquid of their own (water, glycols, alcohols, ammonia), shape (n,).

    The stability test seeds a near-pure trial phase of each of them (and of the heaviest component).
    """
    return prm[15]
