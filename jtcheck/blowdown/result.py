"""The result of a depressurisation: time series (SI arrays), the summary a practitioner needs, and the screening.

Screening: the coldest inner wall temperature (gas-wetted and liquid-wetted) and the coldest blowdown valve
outlet are screened against the case's cold limits with the letdown's outcomes (fail, margin eroded, pass,
not screened; :func:`jtcheck.screening.cold_metal.screen_cold_metal`), each with its coincident pressure (the
vessel pressure at that moment) so that a cold state reached at low pressure is shown as such.  The limit at a
pressure comes from :func:`cold_limits_at_pressure`, today the typed limit at every pressure (pressure-dependent
material limits are a separate issue).  A run that did not converge is "not screened", whatever its curves.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field, fields

import numpy as np

from jtcheck.screening.cold_metal import ColdLimits, screen_cold_metal
from jtcheck.screening.findings import Finding, Outcome


def cold_limits_at_pressure(limits: ColdLimits, p_pa: float) -> ColdLimits:
    """The cold limits that apply to metal at pressure ``p_pa`` [Pa].

    The place for a limit-versus-pressure rule (for example a reduced MDMT at a low stress ratio, ASME BPVC VIII
    Div. 1 UCS-66.1): today the typed limit applies at every pressure, unchanged."""
    return limits


def _arr(values) -> np.ndarray:
    return np.asarray(values, dtype=float)


@dataclass(frozen=True)
class Extreme:
    """A minimum (or maximum) of a time series: value, time [s] and the coincident vessel pressure [Pa]."""

    value: float
    time_s: float
    pressure_pa: float

    def to_dict(self) -> dict:
        return {k: (None if not math.isfinite(v) else v) for k, v in
                (("value", self.value), ("time_s", self.time_s), ("pressure_pa", self.pressure_pa))}


def extreme(series: np.ndarray, time: np.ndarray, pressure: np.ndarray, largest: bool = False) -> Extreme:
    """The smallest (or largest) finite value of ``series`` with its time and pressure; NaNs if none."""
    ok = np.isfinite(series)
    if not ok.any():
        return Extreme(math.nan, math.nan, math.nan)
    idx = np.where(ok)[0]
    i = int(idx[np.argmax(series[ok])] if largest else idx[np.argmin(series[ok])])
    return Extreme(float(series[i]), float(time[i]), float(pressure[i]))


@dataclass(frozen=True)
class DepressureResult:
    """A vessel depressurisation in time.  All values SI (s, Pa absolute, K, kg, kg/s).

    Attributes
    ----------
    time : numpy.ndarray
        Times of the accepted steps [s], from 0.
    pressure : numpy.ndarray
        Vessel pressure [Pa].
    t_fluid, t_gas, t_liquid : numpy.ndarray
        Fluid temperature; gas and liquid zone temperatures [K] (equilibrium model: both equal the fluid
        temperature; NaN for the liquid when there is none).
    t_wall_gas, t_wall_liquid : numpy.ndarray
        Inner wall temperature of the gas-wetted and the liquid-wetted wall [K] (NaN where that zone is absent).
    mass_flow : numpy.ndarray
        Total mass flow through the orifices [kg/s].
    inventory : numpy.ndarray
        Mass left in the vessel [kg].
    vapour_fraction, liquid_level : numpy.ndarray
        Vapour mole fraction of the inventory [-] and liquid height [m].
    valve_time, valve_outlet_t, valve_outlet_phase :
        The blowdown valve's outlet temperature over time [K]: isenthalpic letdowns of the drawn fluid from the
        vessel state to the back pressure (:func:`jtcheck.letdown.letdown`) at up to ``valve_points`` times
        including the coldest vessel state.
    converged : bool
        False when a step failed: the curves stop there, ``message`` says why, and the screening is
        "not screened".
    outcome : Outcome
    findings : tuple of Finding
    time_to_target_s : float or None
        First time the pressure is at or below ``target_pressure_pa`` [s]; None if not reached.
    target_met : bool or None
        ``time_to_target_s`` <= ``target_time_s``; None without a target.
    peak_mass_flow : Extreme
    min_fluid_t, min_gas_t, min_liquid_t, min_wall_gas_t, min_wall_liquid_t, min_valve_outlet_t : Extreme
    mass_closure, energy_closure : float
        |m0 - m_end - released| / m0 and |U0 + Q_in - H_released - U_end| / (n0 R T0) [-].
    steps, rejected_steps, flashes : int
    inputs, basis : dict
    warnings : tuple of str
    """

    time: np.ndarray
    pressure: np.ndarray
    t_fluid: np.ndarray
    t_gas: np.ndarray
    t_liquid: np.ndarray
    t_wall_gas: np.ndarray
    t_wall_liquid: np.ndarray
    mass_flow: np.ndarray
    inventory: np.ndarray
    vapour_fraction: np.ndarray
    liquid_level: np.ndarray
    valve_time: np.ndarray
    valve_outlet_t: np.ndarray
    valve_outlet_phase: tuple[str, ...]
    converged: bool
    message: str
    stop_reason: str
    outcome: Outcome
    findings: tuple[Finding, ...]
    target_pressure_pa: float | None
    target_time_s: float | None
    time_to_target_s: float | None
    target_met: bool | None
    peak_mass_flow: Extreme
    min_fluid_t: Extreme
    min_gas_t: Extreme
    min_liquid_t: Extreme
    min_wall_gas_t: Extreme
    min_wall_liquid_t: Extreme
    min_valve_outlet_t: Extreme
    mass_closure: float
    energy_closure: float
    steps: int
    rejected_steps: int
    flashes: int
    inputs: dict = field(default_factory=dict)
    basis: dict = field(default_factory=dict)
    warnings: tuple[str, ...] = field(default=())

    SERIES = ("time", "pressure", "t_fluid", "t_gas", "t_liquid", "t_wall_gas", "t_wall_liquid", "mass_flow",
              "inventory", "vapour_fraction", "liquid_level")

    def to_dict(self) -> dict:
        """Plain JSON (SI; NaN becomes None; arrays become lists)."""
        out: dict = {}
        for f in fields(self):
            v = getattr(self, f.name)
            if isinstance(v, np.ndarray):
                out[f.name] = [None if not math.isfinite(x) else float(x) for x in v]
            elif isinstance(v, Extreme):
                out[f.name] = v.to_dict()
            elif isinstance(v, Outcome):
                out[f.name] = v.value
            elif f.name == "findings":
                out[f.name] = [fd.to_dict() for fd in v]
            elif isinstance(v, float) and not math.isfinite(v):
                out[f.name] = None
            elif isinstance(v, tuple):
                out[f.name] = list(v)
            else:
                out[f.name] = v
        return out


def _cond(what: str, ex: Extreme) -> str:
    return f"{what} at {ex.time_s:.0f} s, {ex.pressure_pa / 1e5:.4g} bara"


def screen(converged: bool, limits: ColdLimits | None, wall_gas: Extreme, wall_liq: Extreme,
           outlet: Extreme) -> tuple[Outcome, list[Finding]]:
    """Outcome and findings of the coldest wall and valve outlet against the cold limits (see the module text)."""
    limits = limits or ColdLimits()
    findings: list[Finding] = []
    worst = None
    order = [Outcome.NOT_SCREENED, Outcome.FAIL, Outcome.MARGIN_ERODED, Outcome.PASS]
    for what, ex in (("coldest gas-wetted inner wall", wall_gas), ("coldest liquid-wetted inner wall", wall_liq),
                     ("coldest blowdown valve outlet", outlet)):
        if what.endswith("liquid-wetted inner wall") and not math.isfinite(ex.value) and converged:
            continue  # no liquid-wetted wall in this run
        t = ex.value if converged and math.isfinite(ex.value) else None
        name = _cond(what, ex) if math.isfinite(ex.time_s) else what
        at_p = cold_limits_at_pressure(limits, ex.pressure_pa) if math.isfinite(ex.pressure_pa) else limits
        outcome, finding = screen_cold_metal([(name, t)], at_p)
        findings.append(finding)
        if worst is None or order.index(outcome) < order.index(worst):
            worst = outcome
    return worst or Outcome.NOT_SCREENED, findings
