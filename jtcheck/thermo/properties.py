"""Derived single-phase properties from the fluid's model (a cubic or GERG-2008): Joule-Thomson
coefficient, isentropic exponent, speed of sound, density.

From the EOS derivatives (exact thermodynamic identities, e.g. Michelsen and Mollerup 2007, ch. 2):

    mu_JT = (T (dv/dT)_P - v) / cp,          (dv/dT)_P = -(dP/dT)_v / (dP/dv)_T
    k     = -(v / P) (cp / cv) (dP/dv)_T      (isentropic exponent, P v^k = const locally)
    w     = v sqrt(-(cp / cv) (dP/dv)_T / M)  (speed of sound)

All functions broadcast: ``T``, ``P`` of shape (...) with ``x`` of shape (n,) or (..., n).
They describe one phase (the root of lowest Gibbs energy unless told); for a two-phase state
ask the flash for the phase compositions first.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from jtcheck.thermo.states import Mixture, model_state


@dataclass(frozen=True)
class PhaseState:
    """Single-phase properties (SI).

    Attributes
    ----------
    T : temperature [K]
    P : pressure [Pa]
    Z : compressibility factor [-]
    density : mass density [kg/m^3] (volume-translated when a shift is given)
    h : molar enthalpy [J/mol]
    s : molar entropy [J/(mol K)]
    cp, cv : molar heat capacities [J/(mol K)]
    jt_coefficient : Joule-Thomson coefficient [K/Pa]
    isentropic_exponent : [-]
    speed_of_sound : [m/s]
    """

    T: np.ndarray
    P: np.ndarray
    Z: np.ndarray
    density: np.ndarray
    h: np.ndarray
    s: np.ndarray
    cp: np.ndarray
    cv: np.ndarray
    jt_coefficient: np.ndarray
    isentropic_exponent: np.ndarray
    speed_of_sound: np.ndarray


def phase_state(mix: Mixture, T, P, x, phase: str = "gibbs", volume_shift: bool = False) -> PhaseState:
    """Properties of one phase at ``T`` [K], ``P`` [Pa], composition ``x`` [-].

    Parameters
    ----------
    mix : CubicMixture or GergMixture
        Mixture parameters (any model family: the model interface is called).
    volume_shift : bool
        Subtract the Peneloux shift sum x_i c_i from the molar volume for the density (and shift
        the enthalpy by -P sum x_i c_i), consistent with :class:`jtcheck.thermo.fluid.Fluid`.  Cubic
        models only (a GERG-2008 mixture has no shift).
    """
    T = np.asarray(T, float)
    P = np.asarray(P, float)
    x = np.asarray(x, float)
    pp = model_state(mix, T, P, x, phase)
    mw = x @ mix.mws
    dv_dT = -pp.dP_dT_v / pp.dP_dv_T
    jt = (T * dv_dT - pp.v) / pp.cp
    gamma = pp.cp / pp.cv
    kappa = -(pp.v / P) * gamma * pp.dP_dv_T
    w = pp.v * np.sqrt(-gamma * pp.dP_dv_T / mw)
    v = pp.v
    h = pp.h
    if volume_shift and getattr(mix, "vol_shifts", None) is not None:
        c = x @ mix.vol_shifts
        v = v - c
        h = h - P * c
    return PhaseState(T=T, P=P, Z=pp.Z, density=mw / v, h=h, s=pp.s, cp=pp.cp, cv=pp.cv, jt_coefficient=jt,
                      isentropic_exponent=kappa, speed_of_sound=w)


def joule_thomson_coefficient(mix: Mixture, T, P, x, phase: str = "gibbs"):
    """Joule-Thomson coefficient (dT/dP)_h of one phase [K/Pa]."""
    return phase_state(mix, T, P, x, phase).jt_coefficient


def isentropic_exponent(mix: Mixture, T, P, x, phase: str = "gibbs"):
    """Real-gas isentropic exponent k = -(v/P)(cp/cv)(dP/dv)_T [-]."""
    return phase_state(mix, T, P, x, phase).isentropic_exponent


def speed_of_sound(mix: Mixture, T, P, x, phase: str = "gibbs"):
    """Speed of sound of one phase [m/s]."""
    return phase_state(mix, T, P, x, phase).speed_of_sound
