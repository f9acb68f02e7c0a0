"""Preheat needed upstream of a letdown so that the outlet stays at or above a target temperature.

Method: a throttle is isenthalpic, h_out(P_out, T_out) = h_in(P_in, T_in) (Joule-Thomson expansion), so
the outlet ends exactly at the target when the inlet carries the target outlet state's enthalpy:

    h_target = h(T_target, P_out)                      (stability-tested PT flash)
    T_in,required: h(T_in,required, P_in) = h_target    (PH flash at the inlet pressure, Michelsen,
                                                         Fluid Phase Equilib. 33 (1987) 13-27)

At fixed pressure the equilibrium enthalpy rises monotonically with temperature, so the outlet temperature
rises monotonically with the inlet temperature and ``T_in,required`` is the lowest inlet (heater outlet)
temperature that meets the target.  The answer is checked by letting the required inlet state down again.
The heater duty is Q = (m / M) (h_target - h_in) with m the mass flow and M the mean molar mass.

The fluid's own options (equation of state, kij, volume translation) apply to every flash.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field

from jtcheck.errors import InputError
from jtcheck.letdown.checks import T_MAX_K, check_fluid, positive
from jtcheck.letdown.plain import PlainResult
from jtcheck.letdown.throttle import letdown
from jtcheck.thermo.fluid import Fluid

#: The re-check letdown from the required inlet must land on the target within this [K].
CHECK_TOL_K = 0.01


@dataclass(frozen=True)
class PreheatResult(PlainResult):
    """Preheat needed so that a letdown's outlet ends at a target temperature.  All values SI.

    Attributes
    ----------
    needed : bool
        True when the current outlet is colder than the target (heat must be added).
    p_in_pa, p_out_pa : float
        Inlet and outlet pressure, absolute [Pa].
    t_in_k : float
        Current inlet temperature [K].
    t_in_required_k : float
        Inlet (heater outlet) temperature whose letdown ends exactly at ``t_target_k`` [K]; the lowest
        inlet temperature that meets the target.  NaN when not converged.
    temperature_rise_k : float
        max(0, t_in_required_k - t_in_k) [K].
    h_in_j_per_mol : float
        Molar enthalpy of the current inlet state [J/mol].
    h_required_j_per_mol : float
        Molar enthalpy of the required inlet state = that of the target outlet state [J/mol].
    duty_w : float or None
        Heater duty (mass flow / molar mass) x (h_required - h_in) [W], 0 when no heat is needed;
        None when no mass flow was given.
    mass_flow_kg_per_s : float or None
        Mass flow [kg/s] used for the duty.
    molar_mass_kg_per_mol : float
        Mean molar mass of the fluid [kg/mol].
    t_out_current_k : float
        Outlet temperature of the letdown from the current inlet [K].
    t_target_k : float
        Target outlet temperature [K].
    t_out_check_k : float
        Outlet temperature of a letdown from the required inlet state, a check on the answer [K].
    inlet_phase_required : str
        Phase of the required inlet state ("vapour", "liquid", "two-phase", "supercritical", "unknown").
    outlet_phase_target : str
        Phase of the target outlet state.
    converged : bool
        False when any flash failed or the check missed the target; then the temperatures and duty
        must not be used and ``message`` says why.
    message : str
    warnings : tuple of str
        Fluid and state warnings of the current letdown (e.g. inverse Joule-Thomson effect).
    basis : dict
        Model choices (EOS, kij set, volume translation, data versions).
    """

    needed: bool
    p_in_pa: float
    p_out_pa: float
    t_in_k: float
    t_in_required_k: float
    temperature_rise_k: float
    h_in_j_per_mol: float
    h_required_j_per_mol: float
    duty_w: float | None
    mass_flow_kg_per_s: float | None
    molar_mass_kg_per_mol: float
    t_out_current_k: float
    t_target_k: float
    t_out_check_k: float
    inlet_phase_required: str
    outlet_phase_target: str
    converged: bool
    message: str
    warnings: tuple[str, ...] = field(default=())
    basis: dict = field(default_factory=dict)


def required_preheat(fluid: Fluid, p_in_pa: float, t_in_k: float, p_out_pa: float, t_target_k: float,
                     mass_flow_kg_per_s: float | None = None) -> PreheatResult:
    """Lowest inlet temperature whose isenthalpic letdown to ``p_out_pa`` ends at ``t_target_k``.

    The target outlet state is a PT flash at (t_target_k, p_out_pa), giving h_target; the required inlet
    temperature is the PH flash at ``p_in_pa`` with h_target (Michelsen 1987).  Because the outlet
    temperature of a letdown rises monotonically with the inlet temperature, this is the lowest heater
    outlet temperature that meets the target.  When the fluid warms on letdown (inverse Joule-Thomson
    effect) the required inlet temperature lies below the target.

    Parameters
    ----------
    fluid : Fluid
        The flowing fluid.
    p_in_pa : float
        Inlet pressure, absolute [Pa].
    t_in_k : float
        Current inlet temperature [K].
    p_out_pa : float
        Outlet pressure, absolute [Pa]; not above ``p_in_pa``.
    t_target_k : float
        Lowest acceptable outlet temperature [K].
    mass_flow_kg_per_s : float, optional
        Mass flow [kg/s]; gives the heater duty.

    Returns
    -------
    PreheatResult
        ``needed`` False (rise 0, duty 0) when the current outlet already meets the target.

    Raises
    ------
    jtcheck.errors.InputError
        For non-finite or non-positive inputs, temperatures at or above 2000 K, or p_out > p_in; the
        message names the field.
    """
    check_fluid(fluid)
    p_in = positive("p_in_pa", p_in_pa, "inlet pressure", "Pa")
    t_in = positive("t_in_k", t_in_k, "inlet temperature", "K", T_MAX_K)
    p_out = positive("p_out_pa", p_out_pa, "outlet pressure", "Pa")
    t_target = positive("t_target_k", t_target_k, "target outlet temperature", "K", T_MAX_K)
    if p_out > p_in:
        raise InputError("p_out_pa", f"outlet pressure {p_out:g} Pa is above the inlet pressure {p_in:g} Pa; "
                                     "a letdown needs p_out <= p_in")
    m_dot = None
    if mass_flow_kg_per_s is not None:
        m_dot = positive("mass_flow_kg_per_s", mass_flow_kg_per_s, "mass flow", "kg/s")
    molar_mass = fluid.molar_mass
    nan = math.nan

    def failed(message: str, **known) -> PreheatResult:
        values = dict(needed=False, p_in_pa=p_in, p_out_pa=p_out, t_in_k=t_in, t_in_required_k=nan,
                      temperature_rise_k=nan, h_in_j_per_mol=nan, h_required_j_per_mol=nan, duty_w=None,
                      mass_flow_kg_per_s=m_dot, molar_mass_kg_per_mol=molar_mass, t_out_current_k=nan,
                      t_target_k=t_target, t_out_check_k=nan, inlet_phase_required="unknown",
                      outlet_phase_target="unknown", converged=False, message=message,
                      warnings=tuple(fluid.warnings), basis=fluid.basis())
        values.update(known)
        return PreheatResult(**values)

    current = letdown(fluid, p_in, t_in, p_out)
    if not current.converged:
        return failed(f"letdown from the current inlet did not converge: {current.message}", h_in_j_per_mol=current.h)
    known = dict(h_in_j_per_mol=current.h, t_out_current_k=current.t_out, warnings=current.warnings)
    needed = current.t_out < t_target

    target = fluid.flash_pt(t_target, p_out)
    if not target.converged:
        return failed(f"PT flash of the target outlet state ({t_target:.2f} K, {p_out:g} Pa) did not converge: "
                      f"{target.message}", needed=needed, **known)
    h_target = target.h
    guess = t_in + (t_target - current.t_out)   # the letdown's temperature change carried over
    inlet = fluid.flash_ph(p_in, h_target, t_guess_k=guess if guess > 0.0 else t_in)
    if not inlet.converged:
        return failed(f"PH flash at the inlet pressure with the target enthalpy did not converge: {inlet.message} "
                      f"(residual {inlet.residual:.3g} J/mol)", needed=needed, h_required_j_per_mol=h_target,
                      outlet_phase_target=target.phase, **known)
    t_req = inlet.T
    check = letdown(fluid, p_in, t_req, p_out) if t_req < T_MAX_K else None
    t_check = check.t_out if check is not None and check.converged else nan
    if not math.isfinite(t_check) or abs(t_check - t_target) > CHECK_TOL_K:
        return failed(f"a letdown from the required inlet {t_req:.3f} K ends at {t_check:.3f} K, not at the target "
                      f"{t_target:.3f} K; the inlet temperature could not be established", needed=needed,
                      h_required_j_per_mol=h_target, outlet_phase_target=target.phase, t_out_check_k=t_check,
                      inlet_phase_required=inlet.phase, **known)

    if needed:
        rise = max(0.0, t_req - t_in)
        duty = None if m_dot is None else m_dot / molar_mass * (h_target - current.h)
        msg = (f"preheat needed: raise the inlet from {t_in:.2f} K to {t_req:.2f} K (+{rise:.2f} K) for an outlet "
               f"of {t_target:.2f} K (now {current.t_out:.2f} K)")
    else:
        rise = 0.0
        duty = None if m_dot is None else 0.0
        msg = (f"no preheat needed: the outlet is {current.t_out:.2f} K, at or above the target {t_target:.2f} K "
               f"(the target would be met down to an inlet of {t_req:.2f} K)")
    if current.t_out > t_in:
        msg += "; the fluid warms on letdown (inverse Joule-Thomson effect)"
    return PreheatResult(
        needed=needed, p_in_pa=p_in, p_out_pa=p_out, t_in_k=t_in, t_in_required_k=t_req, temperature_rise_k=rise,
        h_in_j_per_mol=current.h, h_required_j_per_mol=h_target, duty_w=duty, mass_flow_kg_per_s=m_dot,
        molar_mass_kg_per_mol=molar_mass, t_out_current_k=current.t_out, t_target_k=t_target, t_out_check_k=t_check,
        inlet_phase_required=inlet.phase, outlet_phase_target=target.phase, converged=True, message=msg,
        warnings=current.warnings, basis=current.basis)
