"""Cold hazards of a pressure-relief valve: relieving state, nozzle (throat) flow and outlet temperature.

A relief valve passes its fluid in two steps that matter for low temperature:

1. **The nozzle.**  From the stagnation (relieving) state P1, T1 the fluid accelerates isentropically
   to the throat.  Along the isentrope s(P) = s0 the mass flux per unit throat area is

       G(P) = rho(P) sqrt(2 (h0 - h(P)))        [kg/(m^2 s)], h on a mass basis,

   the direct integration of the isentropic nozzle equation (h0 - h(P) = -integral of v dP along
   the isentrope) described in API Standard 520 Part I, 10th ed. (2020), Annex B, with the
   homogeneous equilibrium model for a two-phase state (phases at equal velocity and temperature in
   equilibrium; the mixture density combines the phases' molar volumes weighted by the vapour
   fraction).  G rises from zero at P1, passes a maximum and falls: the pressure of the maximum is
   the critical (choked) throat pressure.  If the back pressure is at or below it the flow is choked
   and the throat sits at the critical pressure; otherwise the throat pressure is the back pressure.
   The result is set beside the ideal-gas critical flow ratio P*/P0 = (2/(k+1))^(k/(k-1)) and
   T*/T0 = 2/(k+1) (any gas-dynamics text; the basis of API 520 Part I's critical-flow gas equations),
   with k the real-gas isentropic exponent at the stagnation state.
2. **The outlet piping.**  Downstream the jet slows and its kinetic energy returns to enthalpy; with
   no heat exchange the fluid reaches the back pressure with the stagnation enthalpy, i.e. the
   isenthalpic letdown P1, T1 -> P_back of :func:`jtcheck.letdown.letdown`.  This is the temperature
   the outlet piping and the flare header see once the jet has mixed out.  The throat's static
   temperature is local to the valve; it can be warmer than the downstream temperature (a choked
   throat is at about half the relieving pressure, the outlet piping far below it), and a choked
   jet expands further past the throat, colder still, before it slows.

All states come from the fluid's cubic equation of state through the PT and PS flashes of
:mod:`jtcheck.thermo.flash`.  SI units throughout: Pa absolute, K, J/mol, kg/s.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field, fields
from typing import Any

import numpy as np
from scipy.optimize import minimize_scalar

from jtcheck import marks
from jtcheck.errors import InputError
from jtcheck.letdown.checks import check_fluid, finite, positive
from jtcheck.letdown.plain import plain as _plain
from jtcheck.letdown.throttle import LetdownResult, letdown
from jtcheck.thermo.flash import FlashResult
from jtcheck.thermo.fluid import Fluid
from jtcheck.thermo.properties import phase_state

#: Standard atmosphere [Pa].
P_ATM_STANDARD_PA = 101325.0

#: Allowed range of the local atmospheric pressure [Pa] (sea level to high-altitude sites).
P_ATM_RANGE_PA = (5.0e4, 1.2e5)

#: Largest accepted overpressure fraction [-] (fraction of the set gauge pressure).
OVERPRESSURE_MAX = 1.0

#: Points of the first scan of G(P) between P0 and ``SCAN_LOW_FRACTION * P0``.
SCAN_POINTS = 40
SCAN_LOW_FRACTION = 0.1
#: When G still rises at the end of the first scan, a second one (geometric spacing) continues down to
#: this fraction of P0, or to the back pressure when that is lower.
SCAN_EXTENDED_LOW_FRACTION = 0.01

#: Tolerance of the refined critical pressure, as a fraction of P0.
P_CRITICAL_XTOL = 1.0e-7


# ---------------------------------------------------------------------------------------------
# input checks and JSON
# ---------------------------------------------------------------------------------------------

def _temperature(name: str, value: Any, what: str) -> float:
    v = positive(name, value, what, "K")
    if v > 2000.0:
        raise InputError(name, f"{what} must be between 0 and 2000 K (the range of the heat-capacity data), "
                               f"got {v:g}")
    return v


# ---------------------------------------------------------------------------------------------
# pressures
# ---------------------------------------------------------------------------------------------

def relieving_pressure_pa(set_pressure_pa: float, overpressure_fraction: float,
                          p_atm_pa: float = P_ATM_STANDARD_PA) -> float:
    """Absolute relieving pressure P1 of a pressure-relief valve.

    P1 = P_set,g (1 + overpressure_fraction) + P_atm, with the set gauge pressure
    P_set,g = ``set_pressure_pa`` - ``p_atm_pa``.  The allowable overpressure is a fraction of the
    set *gauge* pressure: 0.10 for a single valve in a non-fire case, 0.16 for multiple valves and
    0.21 for a fire case are the common-practice values taken from the ASME Boiler and Pressure
    Vessel Code Section VIII and API Standard 520 Part I.  The caller chooses the fraction; the
    code's minimum absolute overpressure for low set pressures (a few kPa, applied instead of the
    fraction when larger) is not applied here.

    Parameters
    ----------
    set_pressure_pa : float
        Set pressure, **absolute** [Pa]; must be above ``p_atm_pa`` (a positive gauge set pressure).
        A set pressure of 95 barg at sea level is ``95e5 + 101325``.
    overpressure_fraction : float
        Allowable overpressure as a fraction of the set gauge pressure [-], 0 to 1.
    p_atm_pa : float, optional
        Local atmospheric pressure [Pa], 50 000 to 120 000; 101 325 Pa by default.

    Returns
    -------
    float
        Relieving pressure, absolute [Pa].

    Raises
    ------
    jtcheck.errors.InputError
        For a non-finite input, a set pressure not above atmospheric, an overpressure fraction
        outside 0 to 1 or an atmospheric pressure outside its range; the message names the field.

    Examples
    --------
    >>> round((relieving_pressure_pa(95e5 + 101325.0, 0.10) - 101325.0) / 1e5, 6)
    104.5
    """
    p_atm = finite("p_atm_pa", p_atm_pa, "atmospheric pressure", "Pa")
    if not P_ATM_RANGE_PA[0] <= p_atm <= P_ATM_RANGE_PA[1]:
        raise InputError("p_atm_pa", f"atmospheric pressure must be between {P_ATM_RANGE_PA[0]:g} and "
                                     f"{P_ATM_RANGE_PA[1]:g} Pa, got {p_atm:g}")
    p_set = finite("set_pressure_pa", set_pressure_pa, "set pressure (absolute)", "Pa")
    if p_set <= p_atm:
        raise InputError("set_pressure_pa", f"set pressure is absolute and must be above the atmospheric pressure "
                                            f"{p_atm:g} Pa (a positive gauge set pressure), got {p_set:g} Pa")
    frac = finite("overpressure_fraction", overpressure_fraction, "overpressure fraction", "-")
    if not 0.0 <= frac <= OVERPRESSURE_MAX:
        raise InputError("overpressure_fraction", f"overpressure fraction of the set gauge pressure must be between "
                                                  f"0 and {OVERPRESSURE_MAX:g} (0.10 single valve, 0.16 multiple "
                                                  f"valves, 0.21 fire), got {frac:g}")
    return (p_set - p_atm) * (1.0 + frac) + p_atm


def back_pressure_pa(superimposed_pa: float, built_up_pa: float) -> float:
    """Total back pressure at the valve outlet during relief.

    Parameters
    ----------
    superimposed_pa : float
        Superimposed back pressure, **absolute** [Pa], > 0: the pressure in the discharge system
        before the valve opens (atmospheric for a valve discharging to air).
    built_up_pa : float
        Built-up back pressure, a pressure **difference** [Pa], >= 0: the rise caused by the flow
        through the discharge piping once the valve opens.

    Returns
    -------
    float
        Back pressure, absolute [Pa] = superimposed + built-up.

    Raises
    ------
    jtcheck.errors.InputError
        For a non-finite input, a superimposed back pressure not above 0 or a negative built-up
        back pressure; the message names the field.
    """
    sup = positive("superimposed_pa", superimposed_pa, "superimposed back pressure (absolute)", "Pa")
    built = finite("built_up_pa", built_up_pa, "built-up back pressure (a difference)", "Pa")
    if built < 0.0:
        raise InputError("built_up_pa", f"built-up back pressure is a pressure rise and must be 0 Pa or more, "
                                        f"got {built:g}")
    return sup + built


# ---------------------------------------------------------------------------------------------
# isentropic nozzle
# ---------------------------------------------------------------------------------------------

@dataclass(frozen=True)
class _PathState:
    """One state on the isentrope (internal)."""

    P: float
    T: float
    beta: float
    phase: str
    h: float
    density: float
    G: float
    velocity: float
    speed_of_sound: float
    converged: bool
    message: str


def _mixture_density(fluid: Fluid, res: FlashResult) -> tuple[float, float]:
    """(mass density [kg/m^3], speed of sound [m/s] or NaN) of a flash result.

    Two-phase: homogeneous equilibrium, v = beta v_V + (1 - beta) v_L per mole of feed, with each
    phase's molar volume from its own root of the cubic; no speed of sound is given.  With volume
    translation both the density and the speed of sound use the translated volume.
    """
    mix = fluid.mixture
    vs = fluid.volume_translation
    if res.phase == "two-phase":
        liq = phase_state(mix, res.T, res.P, res.x, "liquid", volume_shift=vs)
        vap = phase_state(mix, res.T, res.P, res.y, "vapour", volume_shift=vs)
        v_l = float(np.asarray(res.x) @ mix.mws) / float(liq.density)
        v_v = float(np.asarray(res.y) @ mix.mws) / float(vap.density)
        v = res.beta * v_v + (1.0 - res.beta) * v_l
        return fluid.molar_mass / v, math.nan
    one = phase_state(mix, res.T, res.P, fluid.zs, "gibbs", volume_shift=vs)
    w = float(one.speed_of_sound)
    if vs:
        # w = v sqrt(-(cp/cv) (dP/dv)_T / M) with the translated volume (the shift leaves dP/dv unchanged);
        # phase_state gives it with the untranslated one, so scale by v_translated / v
        plain = phase_state(mix, res.T, res.P, fluid.zs, "gibbs", volume_shift=False)
        w *= float(plain.density) / float(one.density)
    return float(one.density), w


def _path_state(fluid: Fluid, p: float, s0: float, h0: float, t_guess: float, t0: float) -> _PathState:
    """State at pressure ``p`` on the isentrope s = s0 with its mass flux G."""
    res = fluid.flash_ps(p, s0, t_guess)
    if not res.converged and abs(t_guess - t0) > 1e-9:
        res = fluid.flash_ps(p, s0, t0)
    if not res.converged:
        return _PathState(p, math.nan, math.nan, "unknown", math.nan, math.nan, math.nan, math.nan, math.nan,
                          False, f"PS flash at {p:.6g} Pa failed: {res.message}")
    # the PS flash reports the untranslated enthalpy; the stagnation one (PT flash) is translated
    h = res.h + fluid.enthalpy_shift(p)
    rho, w = _mixture_density(fluid, res)
    dh_mass = max(h0 - h, 0.0) / fluid.molar_mass
    u = math.sqrt(2.0 * dh_mass)
    if not (math.isfinite(rho) and rho > 0.0):
        return _PathState(p, res.T, res.beta, res.phase, h, math.nan, math.nan, math.nan, math.nan, False,
                          f"no density at {p:.6g} Pa, {res.T:.6g} K")
    return _PathState(p, res.T, res.beta, res.phase, h, rho, rho * u, u, w, True, res.message)


@dataclass(frozen=True)
class NozzleFlow:
    """Isentropic flow from a stagnation state through a relief-valve nozzle.  All values SI.

    Attributes
    ----------
    p0_pa, t0_k : float
        Stagnation (relieving) pressure, absolute [Pa], and temperature [K].
    p_back_pa : float
        Back pressure at the nozzle exit, absolute [Pa].
    stagnation_phase : str
        Phase of the stagnation state ("vapour", "liquid", "two-phase", "supercritical").
    stagnation_vapor_fraction : float
        Vapour mole fraction at stagnation [-].
    stagnation_h_j_per_mol, stagnation_s_j_per_mol_k : float
        Stagnation molar enthalpy [J/mol] and entropy [J/(mol K)].
    stagnation_density_kg_per_m3 : float
        Stagnation density (homogeneous when two-phase) [kg/m^3].
    molar_mass_kg_per_mol : float
        Mean molar mass of the fluid [kg/mol].
    choked : bool or None
        True when the back pressure is at or below the critical pressure; None when not converged.
    p_critical_pa : float
        Critical (choked) throat pressure, where the isentropic mass flux is greatest [Pa]; NaN if
        it lies below the lowest pressure scanned (then ``choked`` is False and a warning says so).
    t_critical_k : float
        Temperature at the critical pressure on the isentrope [K].
    critical_pressure_ratio, critical_temperature_ratio : float
        p_critical / p0 and t_critical / t0 [-] (real-fluid isentrope).
    p_throat_pa, t_throat_k : float
        Throat pressure (the critical pressure when choked, else the back pressure) [Pa] and the
        static temperature there [K].
    throat_phase : str
        Phase at the throat.
    throat_vapor_fraction : float
        Vapour mole fraction at the throat [-].
    throat_density_kg_per_m3 : float
        Throat density (homogeneous equilibrium when two-phase) [kg/m^3].
    mass_flux_kg_per_m2_s : float
        Ideal (frictionless) mass flux through the throat, G = rho sqrt(2 (h0 - h)) [kg/(m^2 s)];
        the flow through a valve of effective area A with discharge coefficient Kd is Kd A G.
    velocity_m_per_s : float
        Throat velocity sqrt(2 (h0 - h)) [m/s].
    throat_speed_of_sound_m_per_s : float
        Speed of sound at the throat from the EOS [m/s] (single phase only, else NaN); equals the
        velocity for choked single-phase flow.
    isentropic_exponent : float
        Real-gas isentropic exponent k at the stagnation state [-] (NaN for a liquid or two-phase
        stagnation state, where the ideal-gas ratios below do not apply and are NaN too).
    ideal_critical_pressure_ratio : float
        Ideal-gas critical flow ratio (2/(k+1))^(k/(k-1)) [-].
    ideal_critical_temperature_ratio : float
        Ideal-gas critical temperature ratio T*/T0 = 2/(k+1) [-].
    converged : bool
        False when a flash or the search for the critical pressure failed; then the flow values are
        NaN and ``message`` says why.
    message : str
    warnings : tuple of str
    basis : dict
        EOS, kij set, volume translation and data versions, with the method.
    component_ids : tuple of str
    """

    p0_pa: float
    t0_k: float
    p_back_pa: float
    stagnation_phase: str
    stagnation_vapor_fraction: float
    stagnation_h_j_per_mol: float
    stagnation_s_j_per_mol_k: float
    stagnation_density_kg_per_m3: float
    molar_mass_kg_per_mol: float
    choked: bool | None
    p_critical_pa: float
    t_critical_k: float
    critical_pressure_ratio: float
    critical_temperature_ratio: float
    p_throat_pa: float
    t_throat_k: float
    throat_phase: str
    throat_vapor_fraction: float
    throat_density_kg_per_m3: float
    mass_flux_kg_per_m2_s: float
    velocity_m_per_s: float
    throat_speed_of_sound_m_per_s: float
    isentropic_exponent: float
    ideal_critical_pressure_ratio: float
    ideal_critical_temperature_ratio: float
    converged: bool
    message: str
    warnings: tuple[str, ...] = field(default=())
    basis: dict = field(default_factory=dict)
    component_ids: tuple[str, ...] = field(default=())

    def to_dict(self) -> dict:
        """Plain-JSON representation (SI units; NaN becomes None)."""
        return {f.name: _plain(getattr(self, f.name)) for f in fields(self)}


NOZZLE_METHOD = ("isentropic nozzle, direct integration G = rho sqrt(2 (h0 - h)) along s = s0 with the "
                 "homogeneous equilibrium model (API Standard 520 Part I, 10th ed. 2020, Annex B); "
                 "critical pressure at the maximum of G")


def _ideal_ratios(k: float) -> tuple[float, float]:
    if not (math.isfinite(k) and k > 1.0):
        return math.nan, math.nan
    return (2.0 / (k + 1.0)) ** (k / (k - 1.0)), 2.0 / (k + 1.0)


def _throat_warnings(fluid: Fluid, st: _PathState) -> list[str]:
    notes: list[str] = []
    if not st.converged:
        return notes
    if st.phase == "two-phase":
        notes.append(f"throat is two-phase (vapour fraction {st.beta:.3g}): homogeneous equilibrium assumed; "
                     "real nozzles can pass more flow (non-equilibrium)")
    for comp, z in zip(fluid.components, fluid.zs, strict=True):
        if z < 0.01:
            continue
        if comp.t_triple_k and st.T < comp.t_triple_k:
            notes.append(f"throat temperature {marks.T(st.T)} is below the triple point of {comp.name} "
                         f"({marks.T(comp.t_triple_k)}): solid can form in the nozzle; the EOS has no solid phase")
        if comp.id == "water" and st.T < 273.16:
            notes.append(f"water present ({z:.3g} mol/mol) and throat below 0 degC: ice and hydrates can form")
        if st.T < comp.cp_tmin_k:
            notes.append(f"throat {marks.T(st.T)} is below the range of the ideal-gas heat-capacity data of "
                         f"{comp.name} ({marks.T(comp.cp_tmin_k)}): extrapolated")
    return notes


def nozzle_flow(fluid: Fluid, p0_pa: float, t0_k: float, p_back_pa: float) -> NozzleFlow:
    """Isentropic (ideal-nozzle) flow from a stagnation state to a back pressure.

    The stagnation state (P0, T0) comes from a PT flash (h0, s0).  Along the isentrope (PS flashes
    at falling pressure) the mass flux is G(P) = rho(P) sqrt(2 (h0 - h(P)) / M), with M the molar
    mass and rho the homogeneous-equilibrium density when two-phase: the direct integration of the
    isentropic nozzle equation of API Standard 520 Part I, 10th ed. (2020), Annex B.  G is scanned at
    40 pressures from P0 down to 0.1 P0 (further, to 0.01 P0 or the back pressure if lower, when it
    still rises there) and its maximum refined
    by a bounded Brent search (:func:`scipy.optimize.minimize_scalar`) between the scan points beside
    the largest value.  That maximum is the critical pressure; the flow is choked when P_back is at
    or below it.  The ideal-gas ratios (2/(k+1))^(k/(k-1)) and 2/(k+1), with the real-gas isentropic
    exponent k at stagnation, are reported for comparison.

    Parameters
    ----------
    fluid : Fluid
        The relieved fluid.
    p0_pa : float
        Stagnation (relieving) pressure, absolute [Pa], > 0.
    t0_k : float
        Stagnation (relieving) temperature [K], 0 to 2000.
    p_back_pa : float
        Back pressure, absolute [Pa], above 0 and below ``p0_pa``.

    Returns
    -------
    NozzleFlow
        ``converged`` False (with NaN flow values and a message) when a flash or the search failed.

    Raises
    ------
    jtcheck.errors.InputError
        For bad input; the message names the field.
    """
    fluid = check_fluid(fluid)
    p0 = positive("p0_pa", p0_pa, "stagnation pressure (absolute)", "Pa")
    t0 = _temperature("t0_k", t0_k, "stagnation temperature")
    pb = positive("p_back_pa", p_back_pa, "back pressure (absolute)", "Pa")
    if pb >= p0:
        raise InputError("p_back_pa", f"back pressure {pb:g} Pa must be below the stagnation pressure {p0:g} Pa "
                                      "(no flow otherwise)")
    basis = dict(fluid.basis())
    basis["method"] = NOZZLE_METHOD
    ids = fluid.ids
    notes = list(fluid.warnings)
    nan = math.nan

    def failed(msg: str, stag: FlashResult | None = None, rho0: float = nan, k: float = nan) -> NozzleFlow:
        ideal_p, ideal_t = _ideal_ratios(k)
        return NozzleFlow(
            p0_pa=p0, t0_k=t0, p_back_pa=pb,
            stagnation_phase=stag.phase if stag is not None else "unknown",
            stagnation_vapor_fraction=stag.beta if stag is not None else nan,
            stagnation_h_j_per_mol=stag.h if stag is not None else nan,
            stagnation_s_j_per_mol_k=stag.s if stag is not None else nan,
            stagnation_density_kg_per_m3=rho0, molar_mass_kg_per_mol=fluid.molar_mass, choked=None,
            p_critical_pa=nan, t_critical_k=nan, critical_pressure_ratio=nan, critical_temperature_ratio=nan,
            p_throat_pa=nan, t_throat_k=nan, throat_phase="unknown", throat_vapor_fraction=nan,
            throat_density_kg_per_m3=nan, mass_flux_kg_per_m2_s=nan, velocity_m_per_s=nan,
            throat_speed_of_sound_m_per_s=nan, isentropic_exponent=k, ideal_critical_pressure_ratio=ideal_p,
            ideal_critical_temperature_ratio=ideal_t, converged=False, message=msg, warnings=tuple(notes),
            basis=basis, component_ids=ids)

    stag = fluid.flash_pt(t0, p0)
    if not stag.converged:
        return failed(f"stagnation flash failed: {stag.message}")
    h0, s0 = stag.h, stag.s
    rho0, _ = _mixture_density(fluid, stag)
    k = nan
    if stag.phase in ("vapour", "supercritical"):
        k = float(phase_state(fluid.mixture, t0, p0, fluid.zs, "gibbs",
                              volume_shift=fluid.volume_translation).isentropic_exponent)
    else:
        notes.append(f"stagnation state is {stag.phase}: the ideal-gas critical flow ratio does not apply")
    ideal_p, ideal_t = _ideal_ratios(k)

    # -- scan G(P) along the isentrope ---------------------------------------------------------
    states: list[_PathState] = []
    t_prev = t0

    def scan(pressures: np.ndarray) -> None:
        nonlocal t_prev
        for p in pressures:
            st = _path_state(fluid, float(p), s0, h0, t_prev, t0)
            if st.converged:
                t_prev = st.T
            states.append(st)

    scan(np.linspace(p0, SCAN_LOW_FRACTION * p0, SCAN_POINTS + 1)[1:])
    bad = [st for st in states if not st.converged]
    if bad:
        return failed(f"isentrope scan failed: {bad[0].message}", stag, rho0, k)
    G = np.array([st.G for st in states])
    if int(np.argmax(G)) == len(states) - 1:
        p_ext = min(SCAN_EXTENDED_LOW_FRACTION * p0, pb)
        scan(np.geomspace(SCAN_LOW_FRACTION * p0, p_ext, SCAN_POINTS // 2 + 1)[1:])
        bad = [st for st in states if not st.converged]
        if bad:
            return failed(f"extended isentrope scan failed: {bad[0].message}", stag, rho0, k)
        G = np.array([st.G for st in states])
    i = int(np.argmax(G))

    crit: _PathState | None = None
    if i == len(states) - 1:
        p_lowest = states[-1].P
        if pb < p_lowest * (1.0 - 1e-12):
            return failed(f"the isentropic mass flux still rises at {p_lowest:.6g} Pa "
                          f"({p_lowest / p0:.3g} p0): no critical pressure found above the back pressure",
                          stag, rho0, k)
        notes.append(f"the isentropic mass flux still rises at {p_lowest:.6g} Pa ({p_lowest / p0:.3g} p0): the "
                     "critical pressure is lower and was not determined; the flow is not choked")
    else:
        # -- refine the maximum between the scan points beside the largest G -------------------
        p_hi = p0 if i == 0 else states[i - 1].P
        p_lo = states[i + 1].P
        t_near = {"T": states[i].T}
        failures: list[str] = []

        def neg_g(p: float) -> float:
            st = _path_state(fluid, float(p), s0, h0, t_near["T"], t0)
            if not st.converged:
                failures.append(st.message)
                return 0.0
            return -st.G

        opt = minimize_scalar(neg_g, bounds=(p_lo, p_hi), method="bounded",
                              options={"xatol": P_CRITICAL_XTOL * p0, "maxiter": 200})
        best = _path_state(fluid, float(opt.x), s0, h0, states[i].T, t0)
        if not best.converged:
            return failed(f"critical pressure search failed: {best.message}", stag, rho0, k)
        if failures:
            notes.append(f"{len(failures)} PS flash(es) failed during the critical pressure search; the best "
                         "converged point was kept")
        crit = best if best.G >= states[i].G else states[i]

    choked = crit is not None and pb <= crit.P
    if choked:
        throat = crit
    else:
        # the temperature guess: the scanned state nearest the back pressure
        j = int(np.argmin([abs(st.P - pb) for st in states]))
        throat = _path_state(fluid, pb, s0, h0, states[j].T, t0)
        if not throat.converged:
            return failed(f"throat flash at the back pressure failed: {throat.message}", stag, rho0, k)
    notes += _throat_warnings(fluid, throat)
    if choked:
        msg = (f"choked: critical pressure {marks.P(crit.P)} ({crit.P / p0:.4f} p0) at or above the back pressure "
               f"{marks.P(pb)}")
    else:
        msg = f"not choked: throat at the back pressure {marks.P(pb)}"
    return NozzleFlow(
        p0_pa=p0, t0_k=t0, p_back_pa=pb, stagnation_phase=stag.phase, stagnation_vapor_fraction=stag.beta,
        stagnation_h_j_per_mol=h0, stagnation_s_j_per_mol_k=s0, stagnation_density_kg_per_m3=rho0,
        molar_mass_kg_per_mol=fluid.molar_mass, choked=choked,
        p_critical_pa=crit.P if crit is not None else nan, t_critical_k=crit.T if crit is not None else nan,
        critical_pressure_ratio=crit.P / p0 if crit is not None else nan,
        critical_temperature_ratio=crit.T / t0 if crit is not None else nan,
        p_throat_pa=throat.P, t_throat_k=throat.T, throat_phase=throat.phase, throat_vapor_fraction=throat.beta,
        throat_density_kg_per_m3=throat.density, mass_flux_kg_per_m2_s=throat.G, velocity_m_per_s=throat.velocity,
        throat_speed_of_sound_m_per_s=throat.speed_of_sound, isentropic_exponent=k,
        ideal_critical_pressure_ratio=ideal_p, ideal_critical_temperature_ratio=ideal_t, converged=True,
        message=msg, warnings=tuple(notes), basis=basis, component_ids=ids)


# ---------------------------------------------------------------------------------------------
# downstream and the whole case
# ---------------------------------------------------------------------------------------------

def downstream_of_relief(fluid: Fluid, p_relieving_pa: float, t_relieving_k: float,
                         p_back_pa: float) -> LetdownResult:
    """State in the outlet piping once the relief jet has slowed.

    With no heat exchange and negligible velocity downstream, the fluid arrives at the back pressure
    with the stagnation enthalpy: an isenthalpic letdown from the relieving state, solved by
    :func:`jtcheck.letdown.letdown`.

    Parameters
    ----------
    fluid : Fluid
    p_relieving_pa : float
        Relieving pressure, absolute [Pa], > 0.
    t_relieving_k : float
        Relieving temperature [K], 0 to 2000.
    p_back_pa : float
        Back pressure, absolute [Pa], above 0 and below ``p_relieving_pa``.

    Returns
    -------
    jtcheck.letdown.LetdownResult
        ``t_out`` is the outlet-piping temperature [K]; ``converged`` False when a flash failed.

    Raises
    ------
    jtcheck.errors.InputError
        For bad input; the message names the field.
    """
    fluid = check_fluid(fluid)
    p1 = positive("p_relieving_pa", p_relieving_pa, "relieving pressure (absolute)", "Pa")
    t1 = _temperature("t_relieving_k", t_relieving_k, "relieving temperature")
    pb = positive("p_back_pa", p_back_pa, "back pressure (absolute)", "Pa")
    if pb >= p1:
        raise InputError("p_back_pa", f"back pressure {pb:g} Pa must be below the relieving pressure {p1:g} Pa")
    return letdown(fluid, p1, t1, pb)


@dataclass(frozen=True)
class ReliefValveResult:
    """Low-temperature screening of one relief-valve case.  All values SI.

    Attributes
    ----------
    set_pressure_pa : float
        Set pressure, absolute [Pa].
    overpressure_fraction : float
        Allowable overpressure, fraction of the set gauge pressure [-].
    p_atm_pa : float
        Atmospheric pressure used for gauge conversion [Pa].
    p_relieving_pa : float
        Relieving pressure P1, absolute [Pa].
    t_relieving_k : float
        Relieving temperature [K].
    superimposed_back_pressure_pa : float
        Superimposed back pressure, absolute [Pa].
    built_up_back_pressure_pa : float
        Built-up back pressure, a difference [Pa].
    p_back_pa : float
        Total back pressure, absolute [Pa].
    nozzle : NozzleFlow
        Isentropic nozzle flow from P1, T1 to the back pressure (throat state, choking).
    downstream : jtcheck.letdown.LetdownResult
        Isenthalpic state in the outlet piping at the back pressure.
    t_throat_k : float
        Static temperature at the nozzle throat [K] (local to the valve; can be warmer or colder than
        the outlet piping).
    t_downstream_k : float
        Outlet-piping temperature after the jet has slowed [K].
    downstream_phase : str
    downstream_vapor_fraction : float
        Vapour mole fraction downstream [-].
    outlet_limit_k : float or None
        Lowest allowed temperature of the outlet piping [K], when given.
    outlet_margin_k : float
        t_downstream_k - outlet_limit_k [K] (negative: below the limit); NaN without a limit or a result.
    below_outlet_limit : bool or None
        Whether the downstream temperature is below the outlet limit; None without a limit or a result.
    header_limit_k, header_margin_k, below_header_limit
        The same for the flare header's lowest allowed temperature.
    converged : bool
        True only when both the nozzle and the downstream calculation converged.
    message : str
    warnings : tuple of str
    """

    set_pressure_pa: float
    overpressure_fraction: float
    p_atm_pa: float
    p_relieving_pa: float
    t_relieving_k: float
    superimposed_back_pressure_pa: float
    built_up_back_pressure_pa: float
    p_back_pa: float
    nozzle: NozzleFlow
    downstream: LetdownResult
    t_throat_k: float
    t_downstream_k: float
    downstream_phase: str
    downstream_vapor_fraction: float
    outlet_limit_k: float | None
    outlet_margin_k: float
    below_outlet_limit: bool | None
    header_limit_k: float | None
    header_margin_k: float
    below_header_limit: bool | None
    converged: bool
    message: str
    warnings: tuple[str, ...] = field(default=())

    def to_dict(self) -> dict:
        """Plain-JSON representation (SI units; NaN becomes None; nozzle and downstream nested)."""
        return {f.name: _plain(getattr(self, f.name)) for f in fields(self)}


def _limit(name: str, value: Any) -> float | None:
    if value is None:
        return None
    return _temperature(name, value, "temperature limit")


def _margin(t: float, limit: float | None) -> tuple[float, bool | None]:
    if limit is None or not math.isfinite(t):
        return math.nan, None
    m = t - limit
    return m, m < 0.0


def relief_valve_case(fluid: Fluid, set_pressure_pa: float, overpressure_fraction: float, t_relieving_k: float,
                      superimposed_back_pressure_pa: float, built_up_back_pressure_pa: float,
                      p_atm_pa: float = P_ATM_STANDARD_PA, outlet_limit_k: float | None = None,
                      header_limit_k: float | None = None) -> ReliefValveResult:
    """Relieving state, nozzle flow and outlet temperature of a relief valve, against temperature limits.

    P1 from :func:`relieving_pressure_pa`, the back pressure from :func:`back_pressure_pa`, the throat
    from :func:`nozzle_flow` and the outlet piping from :func:`downstream_of_relief`; the margins are
    t_downstream - limit for the outlet piping and the flare header.

    Parameters
    ----------
    fluid : Fluid
    set_pressure_pa : float
        Set pressure, **absolute** [Pa], above ``p_atm_pa``.
    overpressure_fraction : float
        Allowable overpressure, fraction of the set gauge pressure [-], 0 to 1 (0.10, 0.16, 0.21).
    t_relieving_k : float
        Relieving temperature [K], 0 to 2000.
    superimposed_back_pressure_pa : float
        Superimposed back pressure, absolute [Pa], > 0.
    built_up_back_pressure_pa : float
        Built-up back pressure, a difference [Pa], >= 0.
    p_atm_pa : float, optional
        Atmospheric pressure [Pa], 50 000 to 120 000.
    outlet_limit_k, header_limit_k : float, optional
        Lowest allowed temperature of the outlet piping and of the flare header [K].

    Returns
    -------
    ReliefValveResult

    Raises
    ------
    jtcheck.errors.InputError
        For bad input, including a total back pressure at or above the relieving pressure (named
        ``superimposed_back_pressure_pa`` when that alone reaches it, else
        ``built_up_back_pressure_pa``).
    """
    fluid = check_fluid(fluid)
    p1 = relieving_pressure_pa(set_pressure_pa, overpressure_fraction, p_atm_pa)
    try:
        pb = back_pressure_pa(superimposed_back_pressure_pa, built_up_back_pressure_pa)
    except InputError as exc:
        name = {"superimposed_pa": "superimposed_back_pressure_pa",
                "built_up_pa": "built_up_back_pressure_pa"}.get(exc.field, exc.field)
        raise InputError(name, exc.message) from None
    sup = float(superimposed_back_pressure_pa)
    if pb >= p1:
        name = "superimposed_back_pressure_pa" if sup >= p1 else "built_up_back_pressure_pa"
        raise InputError(name, f"total back pressure {pb:g} Pa (superimposed + built-up) must be below the "
                               f"relieving pressure {p1:g} Pa")
    t1 = _temperature("t_relieving_k", t_relieving_k, "relieving temperature")
    out_lim = _limit("outlet_limit_k", outlet_limit_k)
    head_lim = _limit("header_limit_k", header_limit_k)

    noz = nozzle_flow(fluid, p1, t1, pb)
    down = downstream_of_relief(fluid, p1, t1, pb)
    t_down = down.t_out if down.converged else math.nan
    out_m, out_below = _margin(t_down, out_lim)
    head_m, head_below = _margin(t_down, head_lim)

    notes: list[str] = []
    for w in noz.warnings + down.warnings:
        if w not in notes:
            notes.append(w)
    if noz.converged and out_lim is not None and noz.t_throat_k < out_lim:
        notes.append(f"the static temperature at the nozzle throat ({marks.T(noz.t_throat_k)}) is below the outlet "
                     f"limit ({marks.T(out_lim)}); the outlet piping sees the downstream temperature once the jet "
                     "has slowed, but the valve body and outlet flange see the colder jet")
    converged = bool(noz.converged and down.converged)
    parts = []
    if not noz.converged:
        parts.append(f"nozzle: {noz.message}")
    if not down.converged:
        parts.append(f"downstream: {down.message}")
    if converged:
        below = [name for name, flag in (("outlet piping", out_below), ("flare header", head_below)) if flag]
        msg = f"{noz.message}; downstream {marks.T(t_down)} at {marks.P(pb)}"
        if below:
            msg += f"; below the limit of the {' and the '.join(below)}"
    else:
        msg = "; ".join(parts)
    return ReliefValveResult(
        set_pressure_pa=float(set_pressure_pa), overpressure_fraction=float(overpressure_fraction),
        p_atm_pa=float(p_atm_pa), p_relieving_pa=p1, t_relieving_k=t1, superimposed_back_pressure_pa=sup,
        built_up_back_pressure_pa=float(built_up_back_pressure_pa), p_back_pa=pb, nozzle=noz, downstream=down,
        t_throat_k=noz.t_throat_k if noz.converged else math.nan, t_downstream_k=t_down,
        downstream_phase=down.phase, downstream_vapor_fraction=down.vapor_fraction if down.converged else math.nan,
        outlet_limit_k=out_lim, outlet_margin_k=out_m, below_outlet_limit=out_below, header_limit_k=head_lim,
        header_margin_k=head_m, below_header_limit=head_below, converged=converged, message=msg,
        warnings=tuple(notes))
