"""``depressure``: one vessel or isolated segment depressured through its orifices, stepped in time.

See :mod:`jtcheck.blowdown` for the model and its references.
"""
from __future__ import annotations

import math
from collections.abc import Callable, Sequence

import numpy as np

from jtcheck.blowdown import heat, integrate
from jtcheck.blowdown.contents import Contents, InsideHeatTransfer
from jtcheck.blowdown.geometry import Vessel
from jtcheck.blowdown.inputs import MODELS, HeatInput, Orifice, number
from jtcheck.blowdown.result import DepressureResult, Extreme, extreme, screen
from jtcheck.blowdown.twozone import METHOD as TWO_ZONE_METHOD
from jtcheck.blowdown.twozone import TwoZoneContents, initial_zones
from jtcheck.blowdown.wall import material
from jtcheck.errors import InputError
from jtcheck.letdown.checks import check_fluid
from jtcheck.letdown.throttle import letdown
from jtcheck.screening.cold_metal import ColdLimits
from jtcheck.screening.findings import Outcome
from jtcheck.thermo.fluid import Fluid
from jtcheck.thermo.kernels.flash_uv import phase_props as props
from jtcheck.thermo.kernels.saturation import pure_saturation_T
from jtcheck.thermo.models.conventions import GIBBS, LIQUID, VAPOUR

R = 8.314462618
#: A pure fluid with a liquid level starts saturated; the given temperature may differ from the saturation
#: temperature by this much [K].
SATURATION_TOLERANCE_K = 1.0

METHOD = ("equilibrium model: mass and energy balances of the vessel contents, a UV flash of the inventory at each "
          "stage (Michelsen 1999), valves drawing the vapour through a real-fluid isentropic nozzle (API 520 Part I "
          "Annex B direct integration, homogeneous equilibrium), inside natural convection Nu = 0.13 (Gr Pr)^(1/3) "
          "(McAdams 1954; Haque et al. 1992) and nucleate boiling (Mostinski 1963), 1-D wall conduction (backward "
          "Euler), Bogacki-Shampine 3(2) adaptive steps")


def _orifices(value) -> tuple[Orifice, ...]:
    if isinstance(value, Orifice):
        return (value,)
    if isinstance(value, dict):
        return (Orifice(**value),)
    if isinstance(value, Sequence) and value and not isinstance(value, str):
        return tuple(o if isinstance(o, Orifice) else Orifice(**o) for o in value)
    raise InputError("orifices", "give one Orifice (diameter, discharge coefficient, back pressure) or a list of them")


def _inside(value) -> InsideHeatTransfer:
    if value is None or value == "correlation":
        return InsideHeatTransfer("correlation")
    if value == "none":
        return InsideHeatTransfer("none")
    h = number("inside_heat_transfer", value, "inside heat-transfer coefficient", "W/(m^2 K)", 0.0, 1e6,
               lo_open=False)
    return InsideHeatTransfer("fixed", h)


def _phase_u_v(fluid: Fluid, t: float, p: float, x: np.ndarray) -> tuple[float, float]:
    """(u [J/mol], translated v [m^3/mol]) of one phase of composition x at t, p."""
    pr = props(fluid.mixture.kernel_params, t, p, np.ascontiguousarray(x, float), GIBBS)
    c = float(x @ fluid.vol_shifts) if fluid.volume_translation else 0.0
    return pr[2] - p * pr[1], pr[1] - c


def _pure_with_level(fluid: Fluid, vessel: Vessel, p0: float, t0: float,
                     liquid_level_m: float) -> tuple[np.ndarray, float, list[str]]:
    """A pure fluid with a liquid level: saturated liquid and vapour at p0 (t0 must be the saturation temperature)."""
    prm = fluid.mixture.kernel_params
    z = np.ones(1)
    t_sat = float(pure_saturation_T(prm, p0, z, 0))
    if not np.isfinite(t_sat):
        raise InputError("liquid_level", f"{fluid.names[0]} has no liquid at {p0:g} Pa (above its critical pressure)")
    if abs(t0 - t_sat) > SATURATION_TOLERANCE_K:
        raise InputError("t0", f"a pure {fluid.names[0]} with a liquid level is saturated: at {p0:g} Pa it boils at "
                               f"{t_sat:.3f} K; give that initial temperature (within {SATURATION_TOLERANCE_K:g} K)")
    level = number("liquid_level", liquid_level_m, "liquid level", "m", 0.0,
                   vessel.inner_diameter_m if vessel.orientation == "horizontal" else vessel.length_m, lo_open=False)
    c = float(fluid.vol_shifts[0]) if fluid.volume_translation else 0.0
    pl = props(prm, t_sat, p0, z, LIQUID)
    pv = props(prm, t_sat, p0, z, VAPOUR)
    v_liq = vessel.liquid_volume_m3(level)
    n_l = v_liq / (pl[1] - c)
    n_v = (vessel.volume_m3 - v_liq) / (pv[1] - c)
    u = n_l * (pl[2] - p0 * pl[1]) + n_v * (pv[2] - p0 * pv[1])
    note = f"pure {fluid.names[0]} with liquid: saturated at {p0:g} Pa, {t_sat:.3f} K (the given {t0:g} K replaced)"
    return np.array([n_l + n_v]), u, [note]


def initial_inventory(fluid: Fluid, vessel: Vessel, p0: float, t0: float,
                      liquid_level_m: float | None) -> tuple[np.ndarray, float, list[str]]:
    """(component moles [mol], internal energy [J], notes) of the vessel at its initial state."""
    res = fluid.flash_pt(t0, p0)
    if not res.converged:
        raise InputError("t0", f"the initial state {p0:g} Pa, {t0:g} K could not be flashed: {res.message}")
    notes: list[str] = []
    zs = np.asarray(fluid.zs, float)
    if liquid_level_m not in (None, 0, 0.0) and len(zs) == 1:
        return _pure_with_level(fluid, vessel, p0, t0, liquid_level_m)
    if res.phase == "two-phase":
        uv, vv = _phase_u_v(fluid, t0, p0, np.asarray(res.y))
        ul, vl = _phase_u_v(fluid, t0, p0, np.asarray(res.x))
        if liquid_level_m is None:
            v = res.beta * vv + (1.0 - res.beta) * vl
            n = vessel.volume_m3 / v
            notes.append(f"initial fluid is two-phase (vapour fraction {res.beta:.4g}): the vessel holds it at that "
                         "split (give a liquid level to set the liquid volume instead)")
            return zs * n, n * (res.beta * uv + (1.0 - res.beta) * ul), notes
        level = number("liquid_level", liquid_level_m, "liquid level", "m", 0.0,
                       vessel.inner_diameter_m if vessel.orientation == "horizontal" else vessel.length_m,
                       lo_open=False)
        v_liq = vessel.liquid_volume_m3(level)
        v_gas = vessel.volume_m3 - v_liq
        n_l = v_liq / vl
        n_v = v_gas / vv
        return n_l * np.asarray(res.x) + n_v * np.asarray(res.y), n_l * ul + n_v * uv, notes
    if liquid_level_m not in (None, 0, 0.0):
        raise InputError("liquid_level", f"the fluid is {res.phase} at the initial state ({p0:g} Pa, {t0:g} K): a "
                                         "liquid level needs a two-phase initial state; leave it empty")
    u, v = _phase_u_v(fluid, t0, p0, zs)
    n = vessel.volume_m3 / v
    return zs * n, n * u, notes


def depressure(fluid: Fluid, *, p0_pa: float, t0_k: float, vessel: Vessel | dict, orifices,
               liquid_level_m: float | None = None, wall_material="carbon steel", wall_t0_k: float | None = None,
               wall_nodes: int = 4, heat_input: HeatInput | str | dict = "none", model: str = "equilibrium",
               end_time_s: float = 900.0, end_pressure_pa: float | None = None,
               target_pressure_pa: float | None = None, target_time_s: float | None = 900.0,
               inside_heat_transfer=None, cold_limits: ColdLimits | None = None, rtol: float = 1e-4,
               max_step_s: float | None = None, valve_points: int = 40,
               max_steps: int = integrate.MAX_STEPS, max_seconds: float = integrate.MAX_SECONDS,
               progress: Callable[[float, float], None] | None = None) -> DepressureResult:
    """Depressure a vessel through its orifices and follow pressure, fluid and wall temperatures in time.

    Parameters
    ----------
    fluid : Fluid
        The vessel's fluid (composition and equation of state).
    p0_pa, t0_k : float
        Initial pressure, absolute [Pa], and temperature [K].
    vessel : Vessel or dict
        Geometry and wall thickness (:class:`jtcheck.blowdown.geometry.Vessel`).
    orifices : Orifice, dict or list of them
        Blowdown valves / restriction orifices drawing the vapour space to their back pressures.
    liquid_level_m : float, optional
        Initial liquid height [m]; needs a two-phase initial state (the phases' compositions come from the PT
        flash).  Without it a two-phase fluid fills the vessel at its equilibrium split.
    wall_material : str or WallMaterial
        "carbon steel", "stainless steel" or a :class:`jtcheck.blowdown.wall.WallMaterial`.
    wall_t0_k : float, optional
        Initial wall temperature [K]; the fluid's if not given.
    wall_nodes : int
        Cells across the wall thickness, 1 to 20.
    heat_input : HeatInput, "none", "ambient" or "fire"
    model : {"equilibrium", "two-zone"}
    end_time_s : float
        Stop at this time [s] (up to 24 h).
    end_pressure_pa : float, optional
        Stop at this pressure [Pa]; above every back pressure.
    target_pressure_pa, target_time_s : float, optional
        The depressuring target (for example :func:`jtcheck.blowdown.inputs.api521_target_pressure_pa`) and the
        time to reach it [s].
    inside_heat_transfer : None, "none" or float
        None: the correlations; "none": adiabatic inside (no heat between wall and fluid); a number: that
        coefficient [W/(m^2 K)] on both zones.
    cold_limits : ColdLimits, optional
        MDMT / cold limit and margin for the screening; without one the result is "not screened".
    rtol : float
        Local error tolerance of the time stepping [-], 1e-8 to 1e-2.
    max_step_s : float, optional
        Largest time step [s] (default end_time / 100).
    valve_points : int
        Times at which the valve outlet temperature is computed (letdowns), 2 to 500.
    max_steps : int
        Budget of accepted time steps, 1 to 10^6; a run that needs more stops, not converged and not screened.
    max_seconds : float
        Budget of computing time [s], above 0 and at most 3600; a run that exceeds it stops, not converged and
        not screened, with the reason.
    progress : callable(time_s, pressure_pa), optional
        Called after each accepted step.

    Returns
    -------
    DepressureResult

    Raises
    ------
    jtcheck.errors.InputError
        For bad input; the message names the field.
    """
    fluid = check_fluid(fluid)
    p0 = number("p0", p0_pa, "initial pressure (absolute)", "Pa", 0.0, 1e9)
    t0 = number("t0", t0_k, "initial temperature", "K", 20.0, 1000.0)
    if isinstance(vessel, dict):
        vessel = Vessel(**vessel)
    if not isinstance(vessel, Vessel):
        raise InputError("vessel", "give a Vessel (orientation, inner diameter, length, wall thickness)")
    orfs = _orifices(orifices)
    pb_max = max(o.back_pressure_pa for o in orfs)
    if pb_max >= p0:
        raise InputError("back_pressure", f"every back pressure must lie below the initial pressure {p0:g} Pa")
    if model not in MODELS:
        raise InputError("model", f"must be one of {', '.join(MODELS)}, got {model!r}")
    if isinstance(heat_input, str):
        heat_input = HeatInput(kind=heat_input)
    elif isinstance(heat_input, dict):
        heat_input = HeatInput(**heat_input)
    if not isinstance(heat_input, HeatInput):
        raise InputError("heat_input", "give none, ambient, fire or a HeatInput")
    mat = material(wall_material)
    tw0 = t0 if wall_t0_k is None else number("wall_t0", wall_t0_k, "initial wall temperature", "K", 20.0, 1000.0)
    if isinstance(wall_nodes, bool) or not isinstance(wall_nodes, (int, np.integer)) or not 1 <= wall_nodes <= 20:
        raise InputError("wall_nodes", f"must be a whole number from 1 to 20, got {wall_nodes!r}")
    t_end = number("end_time", end_time_s, "end time", "s", 0.0, 86400.0)
    p_end = 0.0 if end_pressure_pa is None else number("end_pressure", end_pressure_pa, "end pressure", "Pa", 0.0, p0)
    if end_pressure_pa is not None and p_end <= pb_max:
        raise InputError("end_pressure", f"the end pressure {p_end:g} Pa must lie above the back pressure {pb_max:g} "
                                         "Pa (the vessel only approaches the back pressure)")
    p_target = None if target_pressure_pa is None else number("target_pressure", target_pressure_pa,
                                                              "target pressure (absolute)", "Pa", 0.0, p0)
    t_target = None if target_time_s is None or p_target is None else number("target_time", target_time_s,
                                                                             "target time", "s", 0.0, 86400.0)
    tol = number("rtol", rtol, "tolerance", "-", 1e-8, 1e-2, lo_open=False)
    dt_max = t_end / 100.0 if max_step_s is None else number("max_step", max_step_s, "largest step", "s", 0.0, t_end)
    if isinstance(valve_points, bool) or not isinstance(valve_points, (int, np.integer)) or \
            not 2 <= valve_points <= 500:
        raise InputError("valve_points", f"must be a whole number from 2 to 500, got {valve_points!r}")
    if isinstance(max_steps, bool) or not isinstance(max_steps, (int, np.integer)) or not 1 <= max_steps <= 10**6:
        raise InputError("max_steps", f"must be a whole number from 1 to 1000000, got {max_steps!r}")
    budget_s = number("max_seconds", max_seconds, "computing-time budget", "s", 0.0, 3600.0)
    inside = _inside(inside_heat_transfer)
    N0, U0, notes = initial_inventory(fluid, vessel, p0, t0, liquid_level_m)
    if model == "two-zone":
        contents = TwoZoneContents(fluid, vessel, orfs, inside, N0 / N0.sum())
        y0 = initial_zones(fluid, vessel, N0, U0, p0, t0, liquid_level_m)
    else:
        contents = Contents(fluid, vessel, orfs, inside, N0 / N0.sum())
        y0 = np.concatenate([N0, [U0]])
    contents.t_guess, contents.p_guess = t0, p0
    run = integrate.run(contents, y0, tw0, vessel, mat, int(wall_nodes), heat_input, t_end, p_end, tol, dt_max,
                        progress, max_steps=int(max_steps), max_trials=2 * int(max_steps), max_seconds=budget_s)
    inputs = {"p0_pa": p0, "t0_k": t0, "vessel": vessel.to_dict(), "orifices": [o.to_dict() for o in orfs],
              "liquid_level_m": liquid_level_m, "wall_material": mat.to_dict(), "wall_t0_k": tw0,
              "wall_nodes": int(wall_nodes), "heat_input": heat_input.to_dict(), "model": model,
              "end_time_s": t_end, "end_pressure_pa": end_pressure_pa, "target_pressure_pa": p_target,
              "target_time_s": t_target, "inside_heat_transfer": inside.mode if inside.mode != "fixed"
              else inside.fixed_w_per_m2_k, "rtol": tol, "component_ids": list(fluid.ids),
              "composition": [float(v) for v in fluid.zs]}
    return assemble(fluid, run, orfs, inputs, notes, cold_limits, p_target, t_target, valve_points, model)


def _valve_outlet(fluid: Fluid, s: integrate.Series, orfs: tuple[Orifice, ...], npts: int):
    """Outlet temperatures of the blowdown valve(s) over time: letdowns of the drawn fluid to the back pressure."""
    time = np.asarray(s.time)
    t_fl = np.asarray(s.t_fluid)
    m = len(time)
    if m == 0:
        return np.array([]), np.array([]), (), []
    idx = set(np.unique(np.linspace(0, m - 1, min(npts, m)).round().astype(int)).tolist())
    idx.add(int(np.nanargmin(t_fl)))
    idx_sorted = sorted(idx)
    pb = min(o.back_pressure_pa for o in orfs)   # the lowest back pressure: the coldest outlet
    times, temps, phases, notes = [], [], [], []
    zs = np.asarray(fluid.zs, float)
    for i in idx_sorted:
        p = s.pressure[i]
        if p <= pb:
            continue
        y = s.outflow_y[i]
        fl = fluid if np.allclose(y, zs, atol=1e-12, rtol=0.0) else \
            fluid.with_composition(list(zip(fluid.ids, np.maximum(y, 0.0), strict=True)))
        r = letdown(fl, float(p), float(s.t_fluid[i]), pb)
        times.append(float(time[i]))
        temps.append(r.t_out if r.converged else math.nan)
        phases.append(r.phase)
        if not r.converged:
            notes.append(f"valve outlet letdown at {time[i]:.0f} s did not converge: {r.message}")
    return np.asarray(times), np.asarray(temps), tuple(phases), notes


def assemble(fluid: Fluid, run: integrate.RunOutcome, orfs: tuple[Orifice, ...], inputs: dict, notes: list[str],
             cold_limits: ColdLimits | None, p_target: float | None, t_target: float | None, valve_points: int,
             model: str, basis_extra: dict | None = None) -> DepressureResult:
    """The result object from a run's series (shared by both models)."""
    s = run.series
    time = np.asarray(s.time, float)
    pres = np.asarray(s.pressure, float)
    vt, vT, vph, vnotes = _valve_outlet(fluid, s, orfs, valve_points)
    notes = list(fluid.warnings) + list(notes) + vnotes
    converged = run.converged and not vnotes
    mass_closure = abs(run.mass0_kg - run.mass_end_kg - run.mass_released_kg) / run.mass0_kg
    energy_closure = abs(run.u0_j + run.heat_in_j - run.enthalpy_released_j - run.u_end_flash_j) / \
        (run.n0_mol * R * run.t0_k) if math.isfinite(run.u_end_flash_j) else math.nan
    t_to_target = None
    met = None
    if p_target is not None:
        below = np.where(pres <= p_target)[0]
        if below.size:
            j = int(below[0])
            if j == 0:
                t_to_target = 0.0
            else:
                # log-linear interpolation between the steps around the crossing
                lp0, lp1 = math.log(pres[j - 1]), math.log(pres[j])
                f = (math.log(p_target) - lp0) / (lp1 - lp0) if lp1 != lp0 else 1.0
                t_to_target = float(time[j - 1] + f * (time[j] - time[j - 1]))
        if t_target is not None:
            met = t_to_target is not None and t_to_target <= t_target
            if not run.converged and not met:
                met = None
    vt_p = np.interp(vt, time, pres) if vt.size else vt
    mins = {
        "min_fluid_t": extreme(np.asarray(s.t_fluid, float), time, pres),
        "min_gas_t": extreme(np.asarray(s.t_gas, float), time, pres),
        "min_liquid_t": extreme(np.asarray(s.t_liquid, float), time, pres),
        "min_wall_gas_t": extreme(np.asarray(s.t_wall_gas, float), time, pres),
        "min_wall_liquid_t": extreme(np.asarray(s.t_wall_liquid, float), time, pres),
        "min_valve_outlet_t": extreme(vT, vt, vt_p) if vt.size else Extreme(math.nan, math.nan, math.nan),
    }
    outcome, findings = screen(converged, cold_limits, mins["min_wall_gas_t"], mins["min_wall_liquid_t"],
                               mins["min_valve_outlet_t"])
    if not converged:
        outcome = Outcome.NOT_SCREENED
    basis = dict(fluid.basis())
    basis["method"] = METHOD if model == "equilibrium" else TWO_ZONE_METHOD
    basis["fire"] = heat.API521_CLAUSE
    basis["liquid_natural_convection_floor_w_per_m2_k"] = heat.LIQUID_NC_W_PER_M2_K
    basis["valves_draw"] = "vapour space (the liquid's composition stays in the vessel)"
    if basis_extra:
        basis.update(basis_extra)
    message = run.message if not run.converged else f"completed: {run.stop_reason}"
    if not run.converged:
        message = f"not converged, the run stopped: {run.message}. Not screened."
    return DepressureResult(
        time=time, pressure=pres, t_fluid=np.asarray(s.t_fluid, float), t_gas=np.asarray(s.t_gas, float),
        t_liquid=np.asarray(s.t_liquid, float), t_wall_gas=np.asarray(s.t_wall_gas, float),
        t_wall_liquid=np.asarray(s.t_wall_liquid, float), mass_flow=np.asarray(s.mdot, float),
        inventory=np.asarray(s.mass, float), vapour_fraction=np.asarray(s.vapour_fraction, float),
        liquid_level=np.asarray(s.liquid_level, float), valve_time=vt, valve_outlet_t=vT, valve_outlet_phase=vph,
        converged=converged, message=message, stop_reason=run.stop_reason, outcome=outcome,
        findings=tuple(findings), target_pressure_pa=p_target, target_time_s=t_target, time_to_target_s=t_to_target,
        target_met=met, peak_mass_flow=extreme(np.asarray(s.mdot, float), time, pres, largest=True),
        mass_closure=float(mass_closure), energy_closure=float(energy_closure), steps=run.steps,
        rejected_steps=run.rejected, flashes=run.flashes, inputs=inputs, basis=basis, warnings=tuple(notes), **mins)
