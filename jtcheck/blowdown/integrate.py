"""Time stepping of a depressurisation: adaptive Runge-Kutta on the inventory, backward Euler on the wall.

The inventory y = (N_1..N_n, U) with dN/dt = -ndot y_out, dU/dt = -ndot h_0 + Q_gas + Q_liquid is stepped by
the embedded Runge-Kutta 3(2) pair of Bogacki and Shampine, Appl. Math. Lett. 2 (1989) 321-325 (first same as
last), with the local error held below ``rtol`` (component moles relative to the inventory, energy relative to
n R T).  The released mass and enthalpy and the heat from each wall zone are integrated with the same stages,
so the balances close to the flash tolerance.  Each step starts with the wall (backward Euler, the inside and
outside convection implicit, :func:`jtcheck.blowdown.wall.conduction_step_implicit`); the inside coefficient is
taken at the end-of-step wall superheat, scaled from its start value by the correlation's own power of the
superheat (natural convection 1/3, nucleate boiling 7/3), so a wall under a boiling film is not stiff: before,
a first liquid film's coefficient, held at its start value, drove the liquid-wetted wall cell by tens of kelvin
in a fraction of a second and the 3 K wall limit cut the step to ~0.1 s for minutes (issue 16).  The heat the
wall gives the fluid is held over the step, so wall and fluid exchange exactly the same energy.
The wall sees the fluid's end-of-step temperature: a first pass with the start temperature, then, when the wall
coupling matters, a second pass with the linearised fixed point (the wall's conductance against the fluid's
heat capacity), so that a thin, well-coupled wall neither lags nor oscillates.  A step is also kept below a 2 %
change of the inventory, 2 K change of the fluid temperature and 3 K change of any wall cell.

A trial state whose flash or nozzle solve fails shortens the step; when the step falls below ``MIN_STEP_S``
the run stops, reports why, and the result is not converged (never screened as a pass).  So does a run that
exceeds its budget of accepted steps, of trial steps or of computing time (``MAX_STEPS``, ``MAX_TRIALS``,
``MAX_SECONDS``): a register case computes inside a web request and must fail closed, not run for minutes.
"""
from __future__ import annotations

import math
import time
from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np

from jtcheck.blowdown import heat
from jtcheck.blowdown.contents import State, StepFailedError
from jtcheck.blowdown.geometry import Vessel
from jtcheck.blowdown.inputs import HeatInput
from jtcheck.blowdown.wall import WallMaterial, conduction_step, conduction_step_implicit

R = 8.314462618
MIN_STEP_S = 1e-6
MAX_INVENTORY_CHANGE = 0.02
MAX_WALL_CHANGE_K = 3.0
MAX_FLUID_CHANGE_K = 2.0
#: A second pass of a step, with the wall seeing the fluid's end-of-step temperature, when the first pass's
#: coupling estimate moves that temperature by more than this [K].
COUPLING_TOL_K = 0.2
MAX_STEPS = 20000
#: Budget of trial steps (accepted, rejected and shortened) and of computing time [s] of one run: a run that
#: exceeds either stops, not converged and not screened, with the reason (a register case computes inside a web
#: request and must not run for minutes).
MAX_TRIALS = 40000
MAX_SECONDS = 60.0

# Bogacki-Shampine 3(2) tableau
_B = (2.0 / 9.0, 1.0 / 3.0, 4.0 / 9.0)
_E = (-5.0 / 72.0, 1.0 / 12.0, 1.0 / 9.0, -1.0 / 8.0)


@dataclass
class Series:
    """Arrays recorded at each accepted step (lists while running)."""

    time: list = field(default_factory=list)
    pressure: list = field(default_factory=list)
    t_fluid: list = field(default_factory=list)
    t_gas: list = field(default_factory=list)
    t_liquid: list = field(default_factory=list)
    t_wall_gas: list = field(default_factory=list)
    t_wall_liquid: list = field(default_factory=list)
    t_wall_gas_outer: list = field(default_factory=list)
    t_wall_liquid_outer: list = field(default_factory=list)
    mdot: list = field(default_factory=list)
    mass: list = field(default_factory=list)
    vapour_fraction: list = field(default_factory=list)
    liquid_level: list = field(default_factory=list)
    throat_t: list = field(default_factory=list)
    outflow_y: list = field(default_factory=list)
    outflow_h: list = field(default_factory=list)
    h_gas: list = field(default_factory=list)
    h_liquid: list = field(default_factory=list)


@dataclass
class RunOutcome:
    series: Series
    converged: bool
    message: str
    steps: int
    rejected: int
    flashes: int
    mass_released_kg: float
    enthalpy_released_j: float
    heat_in_j: float
    mass0_kg: float
    mass_end_kg: float
    u0_j: float
    u_end_flash_j: float
    n0_mol: float
    t0_k: float
    stop_reason: str


def _record(s: Series, t: float, st: State, wg: np.ndarray, wl: np.ndarray, vessel: Vessel) -> None:
    s.time.append(t)
    s.pressure.append(st.p_pa)
    s.t_fluid.append(st.t_k)
    s.t_gas.append(st.t_gas_k)
    has_liq = st.liquid_volume_m3 > 0.0
    s.t_liquid.append(st.t_liquid_k if has_liq else math.nan)
    s.t_wall_gas.append(float(wg[0]) if st.area_gas_m2 > 0.0 else math.nan)
    s.t_wall_liquid.append(float(wl[0]) if has_liq else math.nan)
    s.t_wall_gas_outer.append(float(wg[-1]))
    s.t_wall_liquid_outer.append(float(wl[-1]) if has_liq else math.nan)
    s.mdot.append(st.mdot_kg_per_s)
    s.mass.append(st.mass_kg)
    s.vapour_fraction.append(st.beta)
    s.liquid_level.append(vessel.liquid_level_m(st.liquid_volume_m3))
    s.throat_t.append(st.throat_t_k)
    s.outflow_y.append(np.array(st.outflow_y, float))
    s.outflow_h.append(st.outflow_h_j_per_mol)
    s.h_gas.append(st.h_gas_w_per_m2_k)
    s.h_liquid.append(st.h_liquid_w_per_m2_k)


def _deriv(contents, st: State, q_gas: float, q_liq: float) -> np.ndarray:
    """d/dt of (inventory..., m_out, H_out, Q_gas, Q_liq) with the step's wall heat flows [W]."""
    inv = contents.rates(st, q_gas, q_liq)
    m = inv.size
    d = np.empty(m + 4)
    d[:m] = inv
    d[m] = st.mdot_kg_per_s
    d[m + 1] = st.ndot_mol_per_s * st.outflow_h_j_per_mol
    d[m + 2] = q_gas
    d[m + 3] = q_liq
    return d


def _coefficient_law(contents, h0: float, d0: float, zone_liquid: bool) -> Callable[[float], float] | None:
    """The inside coefficient [W/(m^2 K)] as a function of the wall superheat d [K], scaled from its value ``h0`` at
    the step's start superheat ``d0`` by the correlation's own power of the superheat: natural convection
    h ~ |d|^(1/3) (McAdams 1954), nucleate boiling h ~ d^(7/3) (Mostinski 1963, q = h d with h ~ q^0.7) above the
    liquid floor.  None where the coefficient does not depend on the superheat (a fixed coefficient, or none)."""
    if getattr(contents.inside, "mode", "correlation") != "correlation" or not h0 > 0.0 or d0 == 0.0:
        return None
    if not zone_liquid:
        return lambda d: h0 * (abs(d) / abs(d0)) ** (1.0 / 3.0)
    floor = heat.LIQUID_NC_W_PER_M2_K
    if d0 <= 0.0 or h0 <= floor:
        return None
    return lambda d: max(h0 * (d / d0) ** (7.0 / 3.0), floor) if d > 0.0 else floor


def _wall_step(w: np.ndarray, dt: float, vessel: Vessel, mat: WallMaterial, h_in: float, area: float, t_fluid: float,
               heat_input: HeatInput, zone_liquid: bool, area_liquid: float,
               law: Callable[[float], float] | None = None) -> tuple[np.ndarray, float]:
    """(new cell temperatures, mean heat flow to the fluid over the step [W]) of one wall zone; with ``law`` the
    inside coefficient is taken at the end-of-step superheat (fully implicit), else ``h_in`` is held."""
    if area <= 0.0:
        return w, 0.0
    h_o, q_o = _outside(heat_input, float(w[-1]), area_liquid, zone_liquid)
    if law is None:
        new = conduction_step(w, dt, vessel.wall_thickness_m, mat, h_in, t_fluid, h_o, heat_input.ambient_t_k, q_o)
    else:
        new, h_in = conduction_step_implicit(w, dt, vessel.wall_thickness_m, mat, law, t_fluid, h_o,
                                             heat_input.ambient_t_k, q_o, h_in)
    return new, h_in * area * (float(new[0]) - t_fluid)


def _outside(heat_input: HeatInput, t_outer: float, area_wet_m2: float, zone_liquid: bool) -> tuple[float, float]:
    """(h_out [W/(m^2 K)], imposed flux [W/m^2]) on a zone's outer surface."""
    if heat_input.kind == "none":
        return 0.0, 0.0
    h = heat.air_htc(t_outer, heat_input.ambient_t_k)
    if heat_input.kind == "fire" and zone_liquid and area_wet_m2 > 0.0:
        q = heat.api521_fire_heat_w(area_wet_m2, heat_input.environment_factor, heat_input.adequate_drainage)
        return 0.0, q / area_wet_m2
    return h, 0.0


def _move_metal(wg: np.ndarray, wl: np.ndarray, a_old: float, a_new: float,
                a_total: float) -> tuple[np.ndarray, np.ndarray]:
    """Carry the metal that changes zone with the liquid level: a rising level wets metal from the gas zone, a
    falling one leaves liquid-zone metal to the gas; each zone's cells take the area-weighted mean (the wall
    energy is conserved).  A zone without area follows the other; a liquid zone that vanishes gives its metal back to
    the gas zone (before, its cells were dropped and the gas zone's copied, which created wall energy each time a
    first film flickered in and out)."""
    if a_new <= 0.0:
        if a_old > 0.0 and a_total > 0.0:
            # the liquid zone vanished: its metal returns to the gas zone
            wg = (wg * (a_total - a_old) + wl * a_old) / a_total
        return wg, wg.copy()
    if a_old <= 0.0:
        return wg, wg.copy()
    if a_new > a_old:
        wl = (wl * a_old + wg * (a_new - a_old)) / a_new
    elif a_new < a_old:
        a_gas_new = a_total - a_new
        if a_gas_new > 0.0:
            wg = (wg * (a_total - a_old) + wl * (a_old - a_new)) / a_gas_new
    return wg, wl


@dataclass
class _Trial:
    wg: np.ndarray
    wl: np.ndarray
    y: np.ndarray
    state: State
    err: float
    conductance: tuple[float, float]
    flashes: int


def _attempt(contents, st: State, y: np.ndarray, dt: float, t_g: float, t_l: float, wg: np.ndarray, wl: np.ndarray,
             vessel: Vessel, mat: WallMaterial, heat_input: HeatInput) -> _Trial | None:
    """One trial step of length dt: the wall first (backward Euler, the gas-wetted wall seeing the gas at ``t_g``, the
    liquid-wetted wall the liquid at ``t_l``), its heat held over the Runge-Kutta stages of the fluid.  None when a
    wall cell would change by more than MAX_WALL_CHANGE_K; raises StepFailedError when a flash or nozzle solve fails."""
    m = contents.size
    law_g = _coefficient_law(contents, st.h_gas_w_per_m2_k, float(wg[0]) - st.t_gas_k, False)
    law_l = _coefficient_law(contents, st.h_liquid_w_per_m2_k, float(wl[0]) - st.t_liquid_k, True)
    wg_new, q_g = _wall_step(wg, dt, vessel, mat, st.h_gas_w_per_m2_k, st.area_gas_m2, t_g, heat_input, False,
                             st.area_liquid_m2, law_g)
    wl_new, q_l = _wall_step(wl, dt, vessel, mat, st.h_liquid_w_per_m2_k, st.area_liquid_m2, t_l, heat_input, True,
                             st.area_liquid_m2, law_l)
    dtw = max(float(np.max(np.abs(wg_new - wg))), float(np.max(np.abs(wl_new - wl))))
    if dtw > MAX_WALL_CHANGE_K and dt > 1e-3:
        return None
    # conductances: how each wall's heat to the fluid falls as the fluid temperature it sees rises [W/K]
    _, q_g1 = _wall_step(wg, dt, vessel, mat, st.h_gas_w_per_m2_k, st.area_gas_m2, t_g + 1.0, heat_input, False,
                         st.area_liquid_m2, law_g)
    _, q_l1 = _wall_step(wl, dt, vessel, mat, st.h_liquid_w_per_m2_k, st.area_liquid_m2, t_l + 1.0, heat_input, True,
                         st.area_liquid_m2, law_l)
    k1 = _deriv(contents, st, q_g, q_l)
    y2 = y + 0.5 * dt * k1
    k2 = _deriv(contents, contents.evaluate_y(y2[:m], wg[0], wl[0]), q_g, q_l)
    y3 = y + 0.75 * dt * k2
    k3 = _deriv(contents, contents.evaluate_y(y3[:m], wg[0], wl[0]), q_g, q_l)
    ynew = y + dt * (_B[0] * k1 + _B[1] * k2 + _B[2] * k3)
    contents.check(ynew[:m])
    stnew = contents.evaluate_y(ynew[:m], wg_new[0], wl_new[0])
    k4 = _deriv(contents, stnew, q_g, q_l)
    e = dt * (_E[0] * k1 + _E[1] * k2 + _E[2] * k3 + _E[3] * k4)
    err = contents.error(e[:m], y[:m], st)
    return _Trial(wg_new, wl_new, ynew, stnew, err, (q_g - q_g1, q_l - q_l1), 3 + stnew.flashes)


def run(contents, y0: np.ndarray, wall_t0_k: float, vessel: Vessel, mat: WallMaterial, wall_nodes: int,
        heat_input: HeatInput, end_time_s: float, end_pressure_pa: float, rtol: float, max_step_s: float,
        progress: Callable[[float, float], None] | None = None, max_steps: int = MAX_STEPS,
        max_trials: int = MAX_TRIALS, max_seconds: float = MAX_SECONDS) -> RunOutcome:
    """Step a vessel model from its inventory ``y0`` to ``end_time_s`` or ``end_pressure_pa``.

    ``contents`` is the model (:class:`jtcheck.blowdown.contents.Contents` for the equilibrium model,
    :class:`jtcheck.blowdown.twozone.TwoZoneContents` for the two-zone model): ``size``, ``evaluate_y(y, tw_gas,
    tw_liq)``, ``rates(state, q_gas, q_liq)``, ``error(e, y, state)``, ``check(y)``, ``settle(y, state)`` (what
    happens between steps), ``fixed_point(state, trial, dt)``, ``moles(y)``, ``mass(y)`` and ``energy(y)``.

    ``max_steps`` (accepted steps), ``max_trials`` (trial steps of any kind) and ``max_seconds`` (computing time
    [s]) bound the run: past any of them it stops, not converged, with the reason (fail closed)."""
    m = contents.size
    contents.rtol = rtol
    y = np.concatenate([np.asarray(y0, float), [0.0, 0.0, 0.0, 0.0]])
    u0 = contents.energy(y[:m])
    wg = np.full(wall_nodes, float(wall_t0_k))
    wl = np.full(wall_nodes, float(wall_t0_k))
    s = Series()
    t = 0.0
    st = contents.evaluate_y(y[:m], wg[0], wl[0])
    flashes = st.flashes
    n0 = contents.moles(y[:m])
    t0_k = st.t_k
    mass0 = st.mass_kg
    _record(s, t, st, wg, wl, vessel)
    dt = min(max_step_s, 1.0)
    dTdt = 0.0
    steps = rejected = trials = 0
    clock0 = time.perf_counter()
    message = ""
    stop = ""
    converged = True

    while True:
        if t >= end_time_s * (1.0 - 1e-12):
            stop = "end time"
            break
        if st.p_pa <= end_pressure_pa:
            stop = "end pressure"
            break
        if st.mdot_kg_per_s <= 0.0 and heat_input.kind != "fire":
            stop = "no flow: the vessel is at the back pressure"
            break
        if steps >= max_steps:
            converged, stop = False, "failed"
            message = f"stopped after {max_steps} steps at t = {t:.6g} s without reaching the end (step budget)"
            break
        if trials >= max_trials:
            converged, stop = False, "failed"
            message = (f"stopped after {trials} trial steps ({steps} accepted) at t = {t:.6g} s without reaching the "
                       "end (trial-step budget)")
            break
        if time.perf_counter() - clock0 > max_seconds:
            converged, stop = False, "failed"
            message = (f"stopped after {max_seconds:g} s of computing time at t = {t:.6g} s ({steps} steps) without "
                       "reaching the end (time budget)")
            break
        trials += 1
        # step limit: the inventory change
        rate = st.ndot_mol_per_s / contents.moles(y[:m])
        if rate > 0.0:
            dt = min(dt, MAX_INVENTORY_CHANGE / rate)
        dt = min(dt, max_step_s, end_time_s - t)
        if dt < MIN_STEP_S:
            converged, stop = False, "failed"
            message = message or f"time step fell below {MIN_STEP_S:g} s at t = {t:.6g} s"
            break
        if dTdt != 0.0:
            dt = min(dt, MAX_FLUID_CHANGE_K / abs(dTdt))
        try:
            trial = _attempt(contents, st, y, dt, st.t_gas_k, st.t_liquid_k, wg, wl, vessel, mat, heat_input)
            if trial is not None:
                # implicit coupling of wall and fluid: the walls should see the fluid's end-of-step temperatures;
                # the model gives the linearised fixed point (conductances against heat capacities)
                tg_fix, tl_fix = contents.fixed_point(st, trial.state, trial.conductance, dt)
                if max(abs(tg_fix - st.t_gas_k), abs(tl_fix - st.t_liquid_k)) > COUPLING_TOL_K:
                    flashes += trial.flashes
                    trial = _attempt(contents, st, y, dt, tg_fix, tl_fix, wg, wl, vessel, mat, heat_input)
        except StepFailedError as exc:
            rejected += 1
            message = f"at t = {t:.6g} s: {exc}"
            contents.t_guess, contents.p_guess = st.t_k, st.p_pa
            dt *= 0.25
            continue
        if trial is None:
            # a wall cell would change by more than MAX_WALL_CHANGE_K: shorten the step
            dt *= 0.5
            continue
        flashes += trial.flashes
        err = trial.err
        if err > 1.0:
            rejected += 1
            contents.t_guess, contents.p_guess = st.t_k, st.p_pa
            dt *= max(0.2, 0.9 * err ** (-1.0 / 3.0))
            continue
        wg_new, wl_new, ynew, stnew = trial.wg, trial.wl, trial.y, trial.state
        try:
            ynew[:m], stnew = contents.settle(ynew[:m], stnew, wg_new[0], wl_new[0])
        except StepFailedError as exc:
            # what happens between steps (the two-zone model's rain-out and flashing) failed: a shorter step
            rejected += 1
            message = f"at t = {t:.6g} s: {exc}"
            contents.t_guess, contents.p_guess = st.t_k, st.p_pa
            dt *= 0.25
            continue
        wg, wl = _move_metal(wg_new, wl_new, st.area_liquid_m2, stnew.area_liquid_m2, vessel.inner_area_m2)
        dTdt = max(abs(stnew.t_gas_k - st.t_gas_k), abs(stnew.t_liquid_k - st.t_liquid_k)) / dt
        t += dt
        y = ynew
        st = stnew
        steps += 1
        message = ""
        _record(s, t, st, wg, wl, vessel)
        if progress is not None:
            progress(t, st.p_pa)
        dt *= min(4.0, 0.9 * max(err, 1e-10) ** (-1.0 / 3.0))
    u_end = contents.energy_from_flash(y[:m]) if converged else math.nan
    return RunOutcome(series=s, converged=converged, message=message, steps=steps, rejected=rejected,
                      flashes=flashes, mass_released_kg=float(y[m]), enthalpy_released_j=float(y[m + 1]),
                      heat_in_j=float(y[m + 2] + y[m + 3]), mass0_kg=mass0, mass_end_kg=contents.mass(y[:m]),
                      u0_j=float(u0), u_end_flash_j=u_end, n0_mol=n0, t0_k=t0_k, stop_reason=stop)
