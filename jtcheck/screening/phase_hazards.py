"""Liquid dropout, external icing and the inverse Joule-Thomson effect of one letdown.

* Liquid dropout: the outlet is two-phase or liquid, or the isenthalpic path from inlet to outlet
  crosses into the two-phase region and out again (retrograde condensation in the valve trim or
  downstream piping).  The path is sampled by PH flashes at pressures between inlet and outlet.
* External icing and frost: bare pipe and valve bodies colder than 0 degC collect ice from the
  air's moisture (common practice: it hides the pipe, loads supports and can jam actuators and
  relief-valve outlets).
* Inverse Joule-Thomson: fluids such as hydrogen and helium near room temperature, and dense gases
  above their inversion pressure, warm on throttling.  Reported as information, never hidden.
"""
from __future__ import annotations

import math

import numpy as np

from jtcheck.letdown.throttle import LetdownResult, letdown
from jtcheck.marks import DT, P, T
from jtcheck.screening.findings import Finding, Severity, Topic
from jtcheck.thermo.envelope import dew_point_t
from jtcheck.thermo.fluid import Fluid

#: Freezing point of water at 1 atm [K].
T_ICE_K = 273.15
#: Pressures sampled along the letdown path (outlet and inlet excluded).
PATH_POINTS = 12


def _c(t_k: float) -> str:
    return f"{T(t_k)}"


def outlet_dew_point_k(fluid: Fluid, p_out_pa: float, t_guess_k: float | None = None) -> float | None:
    """Dew-point temperature of the feed at the outlet pressure [K], or None (e.g. above the cricondenbar).

    Michelsen-type saturation solve of :func:`jtcheck.thermo.envelope.dew_point_t`.
    """
    try:
        sat = dew_point_t(fluid.mixture, fluid.zs, p_out_pa, t_guess_k)
    except (ValueError, ArithmeticError):
        return None
    if not sat.converged or not math.isfinite(sat.t_k):
        return None
    return float(sat.t_k)


def path_two_phase(fluid: Fluid, result: LetdownResult, points: int = PATH_POINTS) -> tuple[bool, float, float]:
    """Sample the isenthalpic path of a converged letdown.

    Returns
    -------
    (crossed, max_liquid_fraction, p_at_max_pa)
        ``crossed`` is True if any sampled pressure between inlet and outlet is two-phase;
        the largest liquid mole fraction [-] seen there and its pressure [Pa].
    """
    if result.p_in - result.p_out < 1.0:
        return False, 0.0, result.p_out
    ps = np.linspace(result.p_out, result.p_in, points + 2)[1:-1]
    batch = letdown(fluid, np.full_like(ps, result.p_in), np.full_like(ps, result.t_in), ps)
    beta = np.asarray(batch.vapor_fraction, dtype=float)
    ok = np.asarray(batch.converged, dtype=bool) & np.isfinite(beta)
    two = ok & (beta > 0.0) & (beta < 1.0)
    if not two.any():
        return False, 0.0, result.p_out
    liquid = np.where(two, 1.0 - beta, 0.0)
    k = int(np.argmax(liquid))
    return True, float(liquid[k]), float(ps[k])


def liquid_dropout(fluid: Fluid, result: LetdownResult, condition: str = "") -> Finding | None:
    """A finding when liquid is present at the outlet or forms along the path; None otherwise."""
    if not result.converged:
        return None
    dew = outlet_dew_point_k(fluid, result.p_out, t_guess_k=None)
    numbers = {"p_out_pa": result.p_out, "t_out_k": result.t_out, "outlet_dew_point_k": dew,
               "outlet_liquid_fraction": None, "path_max_liquid_fraction": None}
    basis = "PH flashes along the isenthalpic path; dew point by a saturation solve at the outlet pressure"
    dew_text = f"; the feed's dew point at the outlet pressure is {_c(dew)}" if dew is not None else ""
    if result.phase == "two-phase":
        liq = 1.0 - result.vapor_fraction
        numbers["outlet_liquid_fraction"] = liq
        return Finding(Topic.LIQUID_DROPOUT, Severity.CAUTION,
                       f"Liquid drops out: the outlet is two-phase with {100 * liq:.2f} mol% liquid{dew_text}.",
                       numbers, basis, condition)
    if result.phase == "liquid":
        numbers["outlet_liquid_fraction"] = 1.0
        return Finding(Topic.LIQUID_DROPOUT, Severity.INFORMATION,
                       "The outlet is a single liquid phase (a liquid letdown); check the flashing and the "
                       "downstream design for liquid service.", numbers, basis, condition)
    crossed, max_liq, p_at = path_two_phase(fluid, result)
    if crossed:
        numbers.update(path_max_liquid_fraction=max_liq, path_pressure_at_max_pa=p_at)
        return Finding(Topic.LIQUID_DROPOUT, Severity.CAUTION,
                       f"Liquid forms along the letdown path (up to {100 * max_liq:.2f} mol% near "
                       f"{P(p_at)}) and re-evaporates before the outlet{dew_text}.",
                       numbers, basis, condition)
    return None


def two_phase_inlet(fluid: Fluid, result: LetdownResult, condition: str = "") -> Finding | None:
    """A caution when the inlet state itself is two-phase (0 < vapour fraction < 1); None otherwise.

    A gas letdown whose feed flashes to two phases at the entered inlet conditions either sees a two-phase feed
    (the valve, its trim and the downstream piping then handle liquid slugs, and a single-phase sizing does not
    hold) or was given a composition that is not the gas that flows (a separator's gas is at its dew point, and a
    water content above saturation leaves free water).  Both need the engineer's attention.
    """
    beta = result.inlet_vapor_fraction
    if result.inlet_phase != "two-phase" or not 0.0 < beta < 1.0:
        return None
    water = "water" in fluid.ids and float(fluid.zs[fluid.ids.index("water")]) > 0.0
    why = ("the composition holds more water than the gas can carry at the inlet (free water): give the gas's water "
           "content or declare it water-saturated instead of adding water to the composition"
           if water else "a separator's gas is at its dew point: check that the composition is the gas that flows")
    return Finding(Topic.INLET_PHASE, Severity.CAUTION,
                   f"The inlet is two-phase ({100 * (1.0 - beta):.1f} mol% liquid, vapour fraction {beta:.3f}): the "
                   f"valve sees a two-phase feed, or the composition is suspect ({why}).",
                   {"inlet_vapour_fraction": beta, "p_in_pa": result.p_in, "t_in_k": result.t_in},
                   "PT flash of the inlet", condition)


def icing(result: LetdownResult, condition: str = "") -> Finding | None:
    """External icing and frost on bare pipe when the outlet is below 0 degC; None otherwise."""
    if not result.converged or result.t_out >= T_ICE_K:
        return None
    return Finding(Topic.ICING, Severity.CAUTION,
                   f"The outlet is {_c(result.t_out)}: bare pipe and the valve body will frost and ice over from "
                   "the air's moisture (ice loads supports, hides the pipe and can jam actuators and drains).",
                   {"t_out_k": result.t_out, "t_ice_k": T_ICE_K}, "outlet below 0 degC (common practice)", condition)


def inverse_joule_thomson(result: LetdownResult, condition: str = "") -> Finding | None:
    """Information when the fluid warms on letdown; None otherwise."""
    if not result.converged or not result.t_out > result.t_in + 1e-6:
        return None
    return Finding(Topic.INVERSE_JT, Severity.INFORMATION,
                   f"The fluid warms by {DT(result.t_out - result.t_in, 2)} on letdown (inverse Joule-Thomson "
                   "effect: the inlet is above the inversion temperature or pressure).",
                   {"t_in_k": result.t_in, "t_out_k": result.t_out, "dt_k": result.t_out - result.t_in},
                   "isenthalpic letdown", condition)
