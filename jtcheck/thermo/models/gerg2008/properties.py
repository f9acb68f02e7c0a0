"""Single-phase properties of a GERG-2008 mixture at (T, P), for reports and checks (Python level).

Thin wrapper over the compiled kernels of :mod:`jtcheck.thermo.models.gerg2008.kernels`: density root,
then the relations of Kunz and Wagner, J. Chem. Eng. Data 57 (2012) 3032-3091, Table 3 (speed of sound,
Joule-Thomson coefficient, isentropic exponent from alpha_r and the ideal-gas part).
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from jtcheck.errors import ConvergenceError, InputError
from jtcheck.thermo.models.conventions import GIBBS, LIQUID, VAPOUR
from jtcheck.thermo.models.gerg2008 import kernels
from jtcheck.thermo.models.gerg2008.mixture import GergMixture


@dataclass(frozen=True)
class GergState:
    """One phase of a GERG-2008 mixture (SI, per mole unless stated).

    Attributes
    ----------
    T, P : float
        Temperature [K], pressure [Pa].
    rho : float
        Molar density [mol/m^3].
    Z : float
        Compressibility factor [-].
    h, s : float
        Enthalpy [J/mol] and entropy [J/(mol K)] (ideal gas at 298.15 K and 101325 Pa: zero).
    u, g : float
        Internal energy and Gibbs energy [J/mol], same reference.
    cp, cv : float
        Heat capacities [J/(mol K)].
    w : float
        Speed of sound [m/s].
    jt : float
        Joule-Thomson coefficient [K/Pa].
    kappa : float
        Isentropic exponent w^2 rho M / P [-].
    dP_drho : float
        (dP/drho)_T [Pa m^3/mol].
    dP_dT : float
        (dP/dT)_rho [Pa/K].
    molar_mass : float
        [kg/mol].
    pip : float
        Phase identification parameter of Venkatarathnam and Oellrich (2011) [-].
    """

    T: float
    P: float
    rho: float
    Z: float
    h: float
    s: float
    u: float
    g: float
    cp: float
    cv: float
    w: float
    jt: float
    kappa: float
    dP_drho: float
    dP_dT: float
    molar_mass: float
    pip: float


def gerg_state(mix: GergMixture, T: float, P: float, z, phase: int = GIBBS) -> GergState:
    """Properties of one phase of ``mix`` at ``T`` [K], ``P`` [Pa], mole fractions ``z`` [-].

    Parameters
    ----------
    mix : GergMixture
    T, P : float
        Temperature [K] and pressure [Pa], both positive.
    z : array_like
        Mole fractions [-], shape (n,), normalised here.
    phase : int
        GIBBS (stable root), LIQUID (densest) or VAPOUR (lightest), :mod:`jtcheck.thermo.models.conventions`.

    Raises
    ------
    InputError
        Non-positive T or P, or a composition of the wrong shape.
    ConvergenceError
        No density root found.
    """
    if not (T > 0.0 and P > 0.0):
        raise InputError("state", f"T and P must be positive, got T={T} K, P={P} Pa")
    if phase not in (GIBBS, LIQUID, VAPOUR):
        raise InputError("phase", "must be GIBBS, LIQUID or VAPOUR")
    x = np.ascontiguousarray(z, dtype=float)
    if x.shape != (mix.n,) or np.any(x < 0.0) or x.sum() <= 0.0:
        raise InputError("composition", f"{mix.n} non-negative mole fractions expected")
    x = x / x.sum()
    prm = mix.kernel_params
    Z, v, h, s, cp, cv, dP_dT, dP_dv, _, _ = kernels.props(prm, float(T), float(P), x, phase)
    if not math.isfinite(v):
        raise ConvergenceError("GERG-2008 density", f"no density root at T={T} K, P={P} Pa")
    rho = 1.0 / v
    M = float(mix.mws @ x)
    dP_drho = -dP_dv * v * v
    w2 = cp / cv * dP_drho / M
    w = math.sqrt(w2) if w2 > 0.0 else 0.0
    dv_dT = -dP_dT / dP_dv
    jt = (T * dv_dT - v) / cp
    return GergState(T=float(T), P=float(P), rho=rho, Z=Z, h=h, s=s, u=h - P * v, g=h - T * s, cp=cp, cv=cv,
                     w=w, jt=jt, kappa=w * w * rho * M / P, dP_drho=dP_drho, dP_dT=dP_dT, molar_mass=M,
                     pip=kernels.pip(prm, float(T), float(P), x, phase))
