"""The generic two-parameter cubic equation of state for mixtures: fugacities and properties, in numpy.

All functions take SI inputs (T [K], P [Pa], mole fractions [-]) and broadcast over leading axes:
``T`` and ``P`` of shape ``(...)`` with compositions of shape ``(..., n)``.  The scalar path (one
state, ``x`` of shape ``(n,)``) is the same code.

Method: Michelsen and Mollerup, *Thermodynamic Models: Fundamentals and Computational Aspects*,
2nd ed. (2007), ch. 3 (the reduced residual Helmholtz function F = A_res/RT of a generic cubic and
its derivatives); van der Waals one-fluid mixing rules with binary interaction parameters kij:
a = sum_i sum_j x_i x_j (1 - kij) sqrt(a_i a_j),  b = sum_i x_i b_i.

The residual enthalpy and entropy in closed form (departures at the same T and P):

    H_R = R T (Z - 1) + (T a' - a) I,     S_R = R ln(Z - B) + a' I,
    I = ln[(v + d1 b)/(v + d2 b)] / (b (d1 - d2))   (I = 1/(v + d b) when d1 = d2),

which for van der Waals (d1 = d2 = 0, a' = 0) reduce to H_R = R T (Z - 1) - a/v.

The parameters come from :mod:`jtcheck.thermo.models.cubic.mixture`; :func:`fugacity_derivatives` and
:func:`phase_identification_parameter` call the compiled kernels of
:mod:`jtcheck.thermo.models.cubic.kernels` (the flash kernels use those kernels, not this module).
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from jtcheck.thermo import idealgas
from jtcheck.thermo.eos import AlphaKind, R
from jtcheck.thermo.models.conventions import GIBBS, LIQUID, P_REF, VAPOUR
from jtcheck.thermo.models.cubic import kernels
from jtcheck.thermo.models.cubic.mixture import CubicMixture

# ---------------------------------------------------------------------------------------------
# attraction parameter
# ---------------------------------------------------------------------------------------------

def sqrt_a(mix: CubicMixture, T):
    """sqrt(a_i(T)) and its first two temperature derivatives.

    Soave: sqrt(a_i) = sqrt(a_c,i) (1 + m_i (1 - sqrt(T/Tc_i))) = s_c1 - s_c2 sqrt(T);
    Redlich-Kwong: sqrt(a_c,i) (Tc_i/T)^(1/4); van der Waals: sqrt(a_c,i).

    Returns
    -------
    s, s_T, s_TT : numpy.ndarray
        Shape ``T.shape + (n,)`` [Pa^0.5 m^3/mol, per K, per K^2].
    """
    T = np.asarray(T, float)[..., None]
    kind = mix.eos.constants.alpha
    if kind is AlphaKind.SOAVE:
        sqT = np.sqrt(T)
        s = mix.s_c1 - mix.s_c2 * sqT
        s_T = -0.5 * mix.s_c2 / sqT
        return s, s_T, -0.5 * s_T / T
    if kind is AlphaKind.INVERSE_SQRT:
        s = mix.s_c1 * T ** -0.25
        return s, -0.25 * s / T, 0.3125 * s / (T * T)
    s = np.broadcast_to(mix.s_c1, T.shape[:-1] + (mix.n,))
    zero = np.zeros_like(s)
    return s, zero, zero


@dataclass(frozen=True, slots=True)
class Attraction:
    """Mixture attraction terms at one temperature and composition.

    a [Pa m^6/mol^2], a_T, a_TT its temperature derivatives, ``sum_xa`` = sum_j x_j a_ij and
    ``sum_xa_T`` its temperature derivative (per component), b [m^3/mol].
    """

    a: np.ndarray
    a_T: np.ndarray
    a_TT: np.ndarray
    sum_xa: np.ndarray
    sum_xa_T: np.ndarray
    b: np.ndarray


def attraction(mix: CubicMixture, T, x) -> Attraction:
    """Mixture a(T), its derivatives and b by the van der Waals one-fluid rules."""
    x = np.asarray(x, float)
    s, s_T, s_TT = sqrt_a(mix, T)
    K = mix.one_minus_kij
    xs = x * s
    xsT = x * s_T
    Kxs = xs @ K
    KxsT = xsT @ K
    a = np.sum(xs * Kxs, axis=-1)
    a_T = 2.0 * np.sum(xsT * Kxs, axis=-1)
    a_TT = 2.0 * (np.sum(x * s_TT * Kxs, axis=-1) + np.sum(xsT * KxsT, axis=-1))
    sum_xa = s * Kxs
    sum_xa_T = s_T * Kxs + s * KxsT
    b = x @ mix.bs
    return Attraction(a, a_T, a_TT, sum_xa, sum_xa_T, b)


# ---------------------------------------------------------------------------------------------
# the cubic in Z
# ---------------------------------------------------------------------------------------------

def cubic_roots(A, B, d1: float, d2: float):
    """Smallest and largest physical roots Z of the generic cubic.

    Z^3 + c2 Z^2 + c1 Z + c0 = 0 with u = d1 + d2, w = d1 d2:
    c2 = (u - 1) B - 1, c1 = A + w B^2 - u B - u B^2, c0 = -(A B + w B^2 + w B^3).
    Solved in closed form (Cardano, trigonometric form for three real roots), then polished by
    two Newton steps.  Where only one root exceeds B both returns are that root.

    Parameters
    ----------
    A : array_like
        a P / (R T)^2 [-].
    B : array_like
        b P / (R T) [-].

    Returns
    -------
    z_small, z_large : numpy.ndarray
    """
    A = np.asarray(A, float)
    B = np.asarray(B, float)
    u = d1 + d2
    w = d1 * d2
    c2 = (u - 1.0) * B - 1.0
    c1 = A + w * B * B - u * B - u * B * B
    c0 = -(A * B + w * B * B + w * B * B * B)
    shift = c2 / 3.0
    p = c1 - c2 * shift
    q = (2.0 / 27.0) * c2 ** 3 - c2 * c1 / 3.0 + c0
    disc = 0.25 * q * q + p ** 3 / 27.0
    with np.errstate(invalid="ignore", divide="ignore"):
        # one real root (disc > 0): numerically stable Cardano
        sq = np.sqrt(np.maximum(disc, 0.0))
        s_ = -0.5 * q - np.copysign(sq, q)
        uu = np.cbrt(s_)
        t1 = np.where(uu != 0.0, uu - p / (3.0 * np.where(uu != 0.0, uu, 1.0)), 0.0)
        # three real roots (disc <= 0): trigonometric form
        pm = np.minimum(p, -1e-300)
        r = 2.0 * np.sqrt(-pm / 3.0)
        arg = np.clip(3.0 * q / (pm * r), -1.0, 1.0)
        phi = np.arccos(arg) / 3.0
        t_hi = r * np.cos(phi)
        t_lo = r * np.cos(phi + 2.0 * math.pi / 3.0)
    three = disc < 0.0
    z_hi = np.where(three, t_hi, t1) - shift
    z_lo = np.where(three, t_lo, t1) - shift
    for _ in range(2):
        for z in (z_hi, z_lo):
            f = ((z + c2) * z + c1) * z + c0
            df = (3.0 * z + 2.0 * c2) * z + c1
            with np.errstate(invalid="ignore", divide="ignore"):
                step = np.where(df != 0.0, f / np.where(df != 0.0, df, 1.0), 0.0)
            z -= step
    z_lo = np.where(z_lo > B, z_lo, z_hi)
    return z_lo, z_hi


def log_term(Z, B, d1: float, d2: float):
    """ln[(Z + d1 B)/(Z + d2 B)] / (d1 - d2), or B/(Z + d1 B) when d1 = d2 [-]."""
    if d1 == d2:
        return B / (Z + d1 * B)
    return np.log((Z + d1 * B) / (Z + d2 * B)) / (d1 - d2)


def gibbs_residual_rt(Z, A, B, d1: float, d2: float):
    """Reduced residual Gibbs energy G_R/(R T) at given Z [-]."""
    return Z - 1.0 - np.log(Z - B) - A / B * log_term(Z, B, d1, d2)


def choose_root(A, B, d1: float, d2: float, phase: str = "gibbs"):
    """Root of the cubic for a phase.

    Parameters
    ----------
    phase : {"gibbs", "liquid", "vapour"}
        ``"gibbs"`` takes the root of lowest Gibbs energy (the stable one), ``"liquid"`` the
        smallest and ``"vapour"`` the largest physical root.
    """
    z_lo, z_hi = cubic_roots(A, B, d1, d2)
    if phase == "liquid":
        return z_lo
    if phase == "vapour":
        return z_hi
    g_lo = gibbs_residual_rt(z_lo, A, B, d1, d2)
    g_hi = gibbs_residual_rt(z_hi, A, B, d1, d2)
    return np.where(g_lo < g_hi, z_lo, z_hi)


# ---------------------------------------------------------------------------------------------
# fugacity, residual and total properties (vectorised)
# ---------------------------------------------------------------------------------------------

def ln_phi(mix: CubicMixture, T, P, x, phase: str = "gibbs"):
    """Logarithms of the fugacity coefficients and the compressibility factor.

    ln phi_i = (b_i/b)(Z - 1) - ln(Z - B) - (a I / (R T)) (2 sum_j x_j a_ij / a - b_i/b)
    (Michelsen and Mollerup 2007, ch. 3, for the generic cubic).

    Parameters
    ----------
    T : array_like
        Temperature [K], shape (...).
    P : array_like
        Pressure [Pa], shape (...).
    x : array_like
        Mole fractions [-], shape (..., n).
    phase : str
        Root choice, see :func:`choose_root`.

    Returns
    -------
    lnphi : numpy.ndarray
        Shape (..., n) [-].
    Z : numpy.ndarray
        Compressibility factor [-], shape (...).
    """
    T = np.asarray(T, float)
    P = np.asarray(P, float)
    att = attraction(mix, T, x)
    RT = R * T
    A = att.a * P / (RT * RT)
    B = att.b * P / RT
    Z = choose_root(A, B, mix.d1, mix.d2, phase)
    Ilog = log_term(Z, B, mix.d1, mix.d2)
    bi_b = mix.bs / att.b[..., None]
    lnphi = (bi_b * (Z - 1.0)[..., None] - np.log(Z - B)[..., None]
             - (A / B * Ilog)[..., None] * (2.0 * att.sum_xa / att.a[..., None] - bi_b))
    return lnphi, Z


@dataclass(frozen=True, slots=True)
class PhaseProperties:
    """Thermodynamic state of one phase (all SI, per mole of phase).

    Attributes
    ----------
    Z : compressibility factor [-]
    v : molar volume from the EOS, untranslated [m^3/mol]
    h : molar enthalpy, ideal gas at 298.15 K as zero [J/mol]
    s : molar entropy, ideal gas at 298.15 K and 101325 Pa as zero [J/(mol K)]
    cp, cv : heat capacities [J/(mol K)]
    dP_dT_v : (dP/dT) at constant v [Pa/K]
    dP_dv_T : (dP/dv) at constant T [Pa mol/m^3]
    h_res, s_res : residual enthalpy [J/mol] and entropy [J/(mol K)]
    """

    Z: np.ndarray
    v: np.ndarray
    h: np.ndarray
    s: np.ndarray
    cp: np.ndarray
    cv: np.ndarray
    dP_dT_v: np.ndarray
    dP_dv_T: np.ndarray
    h_res: np.ndarray
    s_res: np.ndarray


def residual_terms(mix: CubicMixture, T, P, x, phase: str = "gibbs"):
    """Z, residual h, s, cv and the P derivatives; helper of :func:`phase_properties`."""
    T = np.asarray(T, float)
    P = np.asarray(P, float)
    att = attraction(mix, T, x)
    RT = R * T
    A = att.a * P / (RT * RT)
    B = att.b * P / RT
    d1, d2 = mix.d1, mix.d2
    Z = choose_root(A, B, d1, d2, phase)
    v = Z * RT / P
    b = att.b
    Ilog = log_term(Z, B, d1, d2) / b          # I [mol/m^3]
    h_res = RT * (Z - 1.0) + (T * att.a_T - att.a) * Ilog
    s_res = R * np.log(Z - B) + att.a_T * Ilog
    cv_res = T * att.a_TT * Ilog
    den = (v + d1 * b) * (v + d2 * b)
    dP_dT = R / (v - b) - att.a_T / den
    dP_dv = -RT / (v - b) ** 2 + att.a * (2.0 * v + (d1 + d2) * b) / (den * den)
    return Z, v, h_res, s_res, cv_res, dP_dT, dP_dv


def phase_properties(mix: CubicMixture, T, P, x, phase: str = "gibbs") -> PhaseProperties:
    """Enthalpy, entropy, heat capacities and volumetric derivatives of one phase.

    Ideal-gas part from :mod:`jtcheck.thermo.idealgas`; residual part from the cubic in closed
    form (module docstring).  Cp - Cv = -T (dP/dT)_v^2 / (dP/dv)_T.
    """
    T = np.asarray(T, float)
    P = np.asarray(P, float)
    x = np.asarray(x, float)
    Z, v, h_res, s_res, cv_res, dP_dT, dP_dv = residual_terms(mix, T, P, x, phase)
    cf = mix.cp_abcde
    cp_ig = np.sum(x * idealgas.cp_ig(T, *cf), axis=-1)
    h_ig = np.sum(x * idealgas.h_ig(T, *cf), axis=-1)
    with np.errstate(divide="ignore", invalid="ignore"):
        xlnx = np.where(x > 0.0, x * np.log(np.where(x > 0.0, x, 1.0)), 0.0)
    s_ig = np.sum(x * idealgas.s_ig(T, *cf), axis=-1) - R * np.sum(xlnx, axis=-1) - R * np.log(P / P_REF)
    cv = cp_ig - R + cv_res
    cp = cv - T * dP_dT ** 2 / dP_dv
    return PhaseProperties(Z=Z, v=v, h=h_ig + h_res, s=s_ig + s_res, cp=cp, cv=cv, dP_dT_v=dP_dT,
                           dP_dv_T=dP_dv, h_res=h_res, s_res=s_res)


# ---------------------------------------------------------------------------------------------
# derivatives of ln phi (scalar state only), for Newton steps and the phase envelope
# ---------------------------------------------------------------------------------------------

@dataclass(frozen=True, slots=True)
class FugacityDerivatives:
    """ln phi and its derivatives for one phase of total amount 1 mol.

    Attributes
    ----------
    lnphi : (n,) [-]
    dn : (n, n) d ln phi_i / d n_j at constant T, P [1/mol]
    dT : (n,) d ln phi_i / d T at constant P, n [1/K]
    dP : (n,) d ln phi_i / d P at constant T, n [1/Pa]
    Z : compressibility factor [-]
    v_partial : (n,) partial molar volumes [m^3/mol]
    """

    lnphi: np.ndarray
    dn: np.ndarray
    dT: np.ndarray
    dP: np.ndarray
    Z: float
    v_partial: np.ndarray


def fugacity_derivatives(mix: CubicMixture, T: float, P: float, x, phase: str = "gibbs") -> FugacityDerivatives:
    """ln phi with its composition, temperature and pressure derivatives (one state).

    Uses the reduced residual Helmholtz function F(T, V, n) = -n g(V, B) - D(T) f(V, B) / T of
    Michelsen and Mollerup (2007), ch. 3, for the generic cubic, with B = n b and D = n^2 a:

        n d ln phi_i / d n_j = n F_ij + 1 + (n / RT) (dP/dn_i)(dP/dn_j) / (dP/dV)
        d ln phi_i / dT      = F_iT + 1/T - v_i (dP/dT) / (R T)
        d ln phi_i / dP      = v_i / (R T) - 1/P

    Parameters
    ----------
    T : float
        Temperature [K].
    P : float
        Pressure [Pa].
    x : array_like
        Mole fractions [-], shape (n,).
    phase : {"gibbs", "liquid", "vapour"}
        Root choice.
    """
    x = np.ascontiguousarray(x, dtype=float)
    n = x.size
    lnphi = np.empty(n)
    dn = np.empty((n, n))
    dT = np.empty(n)
    dP = np.empty(n)
    vbar = np.empty(n)
    Z = kernels.fug_derivs(mix.kernel_params, float(T), float(P), x, _PHASE_CODES[phase], lnphi, dn, dT, dP, vbar)
    return FugacityDerivatives(lnphi=lnphi, dn=dn, dT=dT, dP=dP, Z=float(Z), v_partial=vbar)


def phase_identification_parameter(mix: CubicMixture, T: float, P: float, x, phase: str = "gibbs") -> float:
    """Phase identification parameter of Venkatarathnam and Oellrich (2011) [-].

    PIP = v [ (d2P/dT dv) / (dP/dT)_v - (d2P/dv^2) / (dP/dv)_T ]; PIP > 1 is liquid-like, below 1
    vapour-like (Fluid Phase Equilib. 301 (2011) 225-233, doi:10.1016/j.fluid.2010.12.001).
    """
    return float(kernels.pip(mix.kernel_params, float(T), float(P), np.ascontiguousarray(x, dtype=float),
                             _PHASE_CODES[phase]))


_PHASE_CODES = {"gibbs": GIBBS, "liquid": LIQUID, "vapour": VAPOUR}
