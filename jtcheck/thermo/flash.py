"""Equilibrium flashes at given (T, P), (P, H) and (P, S): vapour-liquid, with stability testing.

PT flash: Michelsen's tangent-plane stability test (:mod:`jtcheck.thermo.stability`), then the phase
split by successive substitution on the K-values with the Rachford-Rice solver
(:mod:`jtcheck.thermo.rachford_rice`), finished by Newton steps on the vapour mole numbers with the
analytic Hessian of the Gibbs energy (Michelsen, Fluid Phase Equilib. 9 (1982) 21-40, Part II,
doi:10.1016/0378-3812(82)85002-4).

PH and PS flashes (Michelsen, Fluid Phase Equilib. 33 (1987) 13-27, doi:10.1016/0378-3812(87)87002-4):
at fixed pressure H(T) and S(T) are monotonic, so the temperature is found by Newton steps
safeguarded by a bracket.  A single-phase answer is accepted only after a stability test at the
answer; otherwise the temperature is solved on the two-phase branch, each step a warm-started PT
split, with the exact derivative dH/dT = V cp_V + L cp_L + (hbar_V - hbar_L) . dv/dT from the
split's sensitivity (dv/dT = -H^-1 dg/dT, hbar_i = h_i^ig - R T^2 d ln phi_i/dT; dS/dT = (dH/dT)/T
on the equilibrium path).  A pure component is solved on its EOS saturation line, with the quality
from the lever rule.

The numerical work is done by the compiled kernels :mod:`jtcheck.thermo.kernels.flash_pt` and
:mod:`jtcheck.thermo.kernels.flash_spec`, over the model interface of :mod:`jtcheck.thermo.models`; this module
turns their status codes into :class:`FlashResult` objects.  Every result carries ``converged``;
a failure is never returned as a plain number.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from jtcheck.thermo.kernels.constants import (
    ST_FAIL_INPUT,
    ST_FAIL_SINGLE,
    ST_FAIL_SPLIT,
    ST_FAIL_TWO,
    ST_PURE_SAT,
    ST_SINGLE,
    ST_TWO,
)
from jtcheck.thermo.kernels.flash_pt import flash_pt as _flash_pt_kernel
from jtcheck.thermo.kernels.flash_spec import flash_spec as _flash_spec_kernel
from jtcheck.thermo.kernels.flash_uv import flash_tv as _flash_tv_kernel
from jtcheck.thermo.kernels.flash_uv import flash_uv as _flash_uv_kernel
from jtcheck.thermo.states import Mixture

_STATUS_TEXT = {
    ST_SINGLE: "stable single phase",
    ST_TWO: "two phases",
    ST_PURE_SAT: "pure component on its saturation line",
    ST_FAIL_SINGLE: "single-phase temperature iteration did not converge",
    ST_FAIL_TWO: "two-phase temperature iteration did not converge",
    ST_FAIL_SPLIT: "the feed is unstable but no phase split was found",
    ST_FAIL_INPUT: "non-finite input",
}


@dataclass(frozen=True)
class FlashResult:
    """Equilibrium state found by a flash.

    Attributes
    ----------
    T : float
        Temperature [K].
    P : float
        Pressure [Pa].
    beta : float
        Vapour mole fraction [-] (1 for a vapour-like single phase, 0 for a liquid-like one; see ``phase``).
    phase : str
        ``"vapour"``, ``"liquid"``, ``"two-phase"``, or ``"supercritical"`` for a pure component
        above its critical pressure and temperature (vapour fraction 1: no liquid can separate from it).
        A single phase is labelled by :func:`jtcheck.thermo.kernels.single_phase.single_phase_beta`: a
        gas far above its (pseudo-)critical temperature, otherwise by the phase identification parameter.
    z, x, y : numpy.ndarray
        Feed, liquid and vapour mole fractions [-] (x = y = z in a single phase).
    h : float
        Molar enthalpy of the feed [J/mol] (ideal gas at 298.15 K is zero).
    s : float
        Molar entropy of the feed [J/(mol K)] (ideal gas at 298.15 K and 101325 Pa is zero).
    converged : bool
        False when the solver stopped without meeting its tolerance; ``message`` says why.
    iterations : int
        Temperature iterations used (PH, PS) or split iterations (PT).
    residual : float
        Last residual of the specification (J/mol for PH, J/(mol K) for PS, 0 for PT).
    message : str
        What the solver found, or why it failed.
    tpd_min : float
        Lowest tangent-plane distance of the stability test [-].
    """

    T: float
    P: float
    beta: float
    phase: str
    z: np.ndarray
    x: np.ndarray
    y: np.ndarray
    h: float
    s: float
    converged: bool
    iterations: int = 0
    residual: float = 0.0
    message: str = ""
    tpd_min: float = 0.0

    @property
    def two_phase(self) -> bool:
        return self.phase == "two-phase"


def _phase_label(status: int, beta: float) -> str:
    if status in (ST_TWO, ST_PURE_SAT) and 0.0 < beta < 1.0:
        return "two-phase"
    if status == ST_PURE_SAT:
        return "vapour" if beta >= 1.0 else "liquid"
    return "vapour" if beta >= 0.5 else "liquid"


def pure_supercritical(mix: Mixture, z, P, T) -> bool | np.ndarray:
    """Whether a pure component is supercritical: at or above both its critical pressure and temperature.

    There it has no vapour-liquid distinction; it is counted as one gas-like phase (vapour fraction 1).
    Below its critical temperature a pure component above its critical pressure is a compressed liquid.
    Broadcasts over ``P`` [Pa] and ``T`` [K]."""
    z = np.asarray(z, float)
    i = int(np.argmax(z))
    if z[i] < 1.0 - 1e-12:
        return np.zeros(np.broadcast(P, T).shape, bool) if (np.ndim(P) or np.ndim(T)) else False
    out = (np.asarray(P) >= mix.pcs[i]) & (np.asarray(T) >= mix.tcs[i])
    return out if np.ndim(out) else bool(out)


def _result(status, T, P, beta, z, x, y, h, s, its, resid, tpd, mix=None) -> FlashResult:
    converged = status in (ST_SINGLE, ST_TWO, ST_PURE_SAT)
    if converged:
        phase = _phase_label(status, beta)
        if phase != "two-phase" and mix is not None and pure_supercritical(mix, z, P, T):
            # above its critical point a pure fluid cannot split into vapour and liquid: it is
            # counted as one vapour-like phase (vapour fraction 1), labelled "supercritical"
            phase, beta = "supercritical", 1.0
    else:
        phase = "unknown"
    if phase != "two-phase":
        x = y = z
    return FlashResult(T=float(T), P=float(P), beta=float(beta), phase=phase, z=z, x=x, y=y, h=float(h),
                       s=float(s), converged=converged, iterations=int(its), residual=float(resid),
                       message=_STATUS_TEXT[status], tpd_min=float(tpd))


def flash_pt(mix: Mixture, T: float, P: float, z) -> FlashResult:
    """Isothermal flash at temperature ``T`` [K] and pressure ``P`` [Pa] of feed ``z`` [-]."""
    z = np.ascontiguousarray(z, dtype=float)
    x = np.empty_like(z)
    y = np.empty_like(z)
    st, beta, h, s, tpd, its = _flash_pt_kernel(mix.kernel_params, float(T), float(P), z, x, y, math.inf)
    return _result(st, T, P, beta, z, x.copy(), y.copy(), h, s, its, 0.0, tpd, mix)


def _flash_spec(mix: Mixture, P: float, target: float, z, T_guess: float | None, spec: int) -> FlashResult:
    z = np.ascontiguousarray(z, dtype=float)
    x = np.empty_like(z)
    y = np.empty_like(z)
    T0 = 300.0 if T_guess is None or not math.isfinite(T_guess) else float(T_guess)
    st, T, beta, h, s, its, resid, tpd = _flash_spec_kernel(mix.kernel_params, float(P), float(target), z, T0, spec,
                                                            x, y, math.inf)
    return _result(st, T, P, beta, z, x.copy(), y.copy(), h, s, its, resid, tpd, mix)


def flash_ph(mix: Mixture, P: float, H: float, z, T_guess: float | None = None) -> FlashResult:
    """Isenthalpic flash: the equilibrium state at pressure ``P`` [Pa] with molar enthalpy ``H`` [J/mol].

    Parameters
    ----------
    mix : CubicMixture or GergMixture
    P : float
        Pressure [Pa].
    H : float
        Molar enthalpy [J/mol] (ideal gas at 298.15 K is zero).
    z : array_like
        Feed mole fractions [-].
    T_guess : float, optional
        Starting temperature [K] (the inlet temperature for a letdown); 300 K if not given.
    """
    return _flash_spec(mix, P, H, z, T_guess, 0)


def flash_ps(mix: Mixture, P: float, S: float, z, T_guess: float | None = None) -> FlashResult:
    """Isentropic flash: the equilibrium state at pressure ``P`` [Pa] with molar entropy ``S`` [J/(mol K)]."""
    return _flash_spec(mix, P, S, z, T_guess, 1)


def _start_pressure(T0: float, V: float, P_guess: float | None) -> float:
    if P_guess is not None and math.isfinite(P_guess) and P_guess > 0.0:
        return float(P_guess)
    # ideal gas at the start temperature, kept inside the kernels' window
    return min(max(8.314462618 * T0 / V, 1.0e3), 1.0e8)


def flash_uv(mix: Mixture, U: float, V: float, z, T_guess: float | None = None,
             P_guess: float | None = None, t_skip: float = math.inf) -> FlashResult:
    """Equilibrium of a closed volume: the state with molar internal energy ``U`` [J/mol] and molar volume
    ``V`` [m^3/mol] (Michelsen, Fluid Phase Equilib. 158-160 (1999) 617-626; see
    :mod:`jtcheck.thermo.kernels.flash_uv`).

    Parameters
    ----------
    mix : CubicMixture or GergMixture
    U : float
        Molar internal energy u = h - P v [J/mol] (same reference state as the enthalpy).
    V : float
        Molar volume [m^3/mol], > 0.
    z : array_like
        Feed mole fractions [-].
    T_guess, P_guess : float, optional
        Starting temperature [K] (300 K if not given) and pressure [Pa] (the ideal gas at T_guess if not given).
    t_skip : float, optional
        Temperature [K] above which the fluid is known to be single-phase (stability test skipped).

    Returns
    -------
    FlashResult
        With ``P`` the pressure found [Pa]; ``residual`` the larger of |u - U|/(R T) and |ln(v/V)|.
    """
    z = np.ascontiguousarray(z, dtype=float)
    x = np.empty_like(z)
    y = np.empty_like(z)
    T0 = 300.0 if T_guess is None or not math.isfinite(T_guess) else float(T_guess)
    P0 = _start_pressure(T0, float(V), P_guess)
    st, T, P, beta, h, s, its, resid, tpd = _flash_uv_kernel(mix.kernel_params, float(U), float(V), z, T0, P0, x, y,
                                                             float(t_skip))
    return _result(st, T, P, beta, z, x.copy(), y.copy(), h, s, its, resid, tpd, mix)


def flash_tv(mix: Mixture, T: float, V: float, z, P_guess: float | None = None,
             t_skip: float = math.inf) -> FlashResult:
    """Equilibrium at temperature ``T`` [K] and molar volume ``V`` [m^3/mol] (a closed volume held at T).

    ``P_guess`` [Pa] starts the pressure iteration (the ideal gas at T if not given).  ``residual`` is |ln(v/V)|.
    """
    z = np.ascontiguousarray(z, dtype=float)
    x = np.empty_like(z)
    y = np.empty_like(z)
    P0 = _start_pressure(float(T), float(V), P_guess)
    st, T1, P, beta, h, s, its, resid, tpd = _flash_tv_kernel(mix.kernel_params, float(T), float(V), z, P0, x, y,
                                                              float(t_skip))
    return _result(st, T, P, beta, z, x.copy(), y.copy(), h, s, its, resid, tpd, mix)
