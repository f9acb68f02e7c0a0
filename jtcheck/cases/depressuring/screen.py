"""Screening a depressuring run: the coldest metal along its pressure-temperature paths, and the target.

Three paths are screened with :func:`jtcheck.screening.mdmt.screen_pressure_path` against the allowable metal
temperature at each coincident pressure, with the letdown's outcomes (fail, margin eroded, pass, not screened):

* the gas-wetted inner wall: (vessel pressure, wall temperature) at every step;
* the liquid-wetted inner wall, where there is liquid;
* the blowdown valve outlet: (back pressure, outlet temperature) at the times the valve letdown was computed;
  the outlet piping stands at the back pressure, and the case's material and limits are taken for it.

The allowable temperature at a pressure is the case's typed limit (the warmer of its MDMT and its cold limit) at
every pressure, or, for a material with an exemption curve, the curve's limit at the coincident stress ratio (a
colder metal is allowed at a low pressure: ASME BPVC VIII-1 UCS-66.1 / B31.3 323.2.2), never colder than a typed
limit.  A run that did not converge, or a point that is not finite, is "not screened" (fail closed).  The time to
the depressuring target is checked: a miss, or a target not reached in the run, is a hazard finding.
"""
from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

import numpy as np

from jtcheck.blowdown.result import DepressureResult, Extreme
from jtcheck.cases.depressuring.inputs import RunPlan
from jtcheck.marks import P, T
from jtcheck.screening.cold_metal import ColdLimits
from jtcheck.screening.findings import Finding, Outcome, Severity, Topic, sort_findings
from jtcheck.screening.mdmt import MaterialColdSpec, PathScreening, screen_pressure_path

#: Points of a path screened at most (the coldest point is always among them) and of each stored curve.
PATH_POINTS = 400
CURVE_POINTS = 240
_SEVERITY = {Outcome.FAIL: Severity.HAZARD, Outcome.MARGIN_ERODED: Severity.CAUTION,
             Outcome.NOT_SCREENED: Severity.CAUTION, Outcome.PASS: Severity.INFORMATION}
PATH_BASIS = ("pressure-temperature path against the allowable metal temperature at each coincident pressure "
              "(jtcheck.screening.mdmt.screen_pressure_path); bands as a letdown: fail below the allowable, margin "
              "eroded within the margin, pass above")
#: Words of the three paths, in screening order.
PATHS = (("wall_gas", "gas-wetted inner wall"), ("wall_liquid", "liquid-wetted inner wall"),
         ("valve_outlet", "blowdown valve outlet"))


def path_spec(limits: ColdLimits, spec: MaterialColdSpec | None) -> MaterialColdSpec:
    """The material limit the paths are screened against: the curve of ``spec`` (with the case's typed limits as a
    floor) or the case's governing typed limit at every pressure (no limit: the spec says so, not screened)."""
    if spec is not None and spec.has_curve:
        floors = [v for v in (spec.typed_limit_k, limits.user_limit_k) if v is not None]
        return MaterialColdSpec(**{**spec.to_dict(), "typed_limit_k": max(floors) if floors else None})
    return MaterialColdSpec(name=spec.name if spec is not None else "", typed_limit_k=limits.governing_k)


def sample(n: int, keep: list[int], most: int) -> np.ndarray:
    """Indices 0..n-1 thinned to about ``most`` evenly spread, always with the ends and ``keep``."""
    if n <= most:
        return np.arange(n)
    idx = set(np.unique(np.linspace(0, n - 1, most).round().astype(int)).tolist())
    idx.update(i for i in keep if 0 <= i < n)
    return np.array(sorted(idx))


def _argmin(a: np.ndarray) -> int | None:
    ok = np.isfinite(a)
    return int(np.where(ok)[0][np.argmin(a[ok])]) if ok.any() else None


def _path(p: np.ndarray, t: np.ndarray, converged: bool, spec: MaterialColdSpec, limits: ColdLimits,
          p_atm_pa: float) -> PathScreening:
    i = _argmin(t)
    idx = sample(len(t), [] if i is None else [i], PATH_POINTS)
    return screen_pressure_path(p[idx], t[idx], spec, p_atm_pa=p_atm_pa, margin_k=limits.total_margin_k,
                                converged=[converged] * len(idx))


def _c(t_k: float) -> str:
    return f"{T(t_k)}"


def screen_run(result: DepressureResult, limits: ColdLimits, spec: MaterialColdSpec | None, plan: RunPlan,
               p_atm_pa: float) -> tuple[Outcome, list[Finding], dict[str, Any]]:
    """Outcome, findings (hazards first) and the screened paths (``PathScreening.to_dict()`` without the
    arrays, with the time of the worst point) of a depressuring run."""
    use = path_spec(limits, spec)
    ok = bool(result.converged)
    time, pres = np.asarray(result.time, float), np.asarray(result.pressure, float)
    pb = min(float(o["back_pressure_pa"]) for o in result.inputs.get("orifices") or [{"back_pressure_pa": p_atm_pa}])
    series = {
        "wall_gas": (time, pres, np.asarray(result.t_wall_gas, float)),
        "wall_liquid": (time, pres, np.asarray(result.t_wall_liquid, float)),
        "valve_outlet": (np.asarray(result.valve_time, float), np.full(len(result.valve_time), pb),
                         np.asarray(result.valve_outlet_t, float)),
    }
    findings: list[Finding] = []
    paths: dict[str, Any] = {}
    worst = None
    for key, words in PATHS:
        tt, pp, temps = series[key]
        if key != "valve_outlet" and ok:               # a wall zone that is absent at a time is NaN there
            there = np.isfinite(temps)
            if key == "wall_liquid" and not there.any():
                continue                              # no liquid in this run: no liquid-wetted wall
            tt, pp, temps = tt[there], pp[there], temps[there]
        if len(temps) == 0:
            screened = PathScreening(Outcome.NOT_SCREENED, (), (), (), None, limits.total_margin_k,
                                     "Not screened: no point of the path was computed.")
        else:
            screened = _path(pp, temps, ok, use, limits, p_atm_pa)
        outcome = screened.outcome
        entry = {k: v for k, v in screened.to_dict().items() if k not in ("p_pa", "t_k", "allowable_k")}
        j = screened.worst_index
        if j is not None:
            i = _argmin(temps)
            idx = sample(len(temps), [] if i is None else [i], PATH_POINTS)
            entry.update(p_pa=screened.p_pa[j], t_k=screened.t_k[j], allowable_k=screened.allowable_k[j],
                         time_s=float(tt[idx[j]]))
        entry["words"] = words
        paths[key] = entry
        where = (f" at {entry['time_s']:.0f} s" if "time_s" in entry else "")
        findings.append(Finding(
            Topic.COLD_METAL, _SEVERITY[outcome], f"{words[:1].upper()}{words[1:]}{where}: {screened.message}",
            numbers={k: entry.get(k) for k in ("t_k", "p_pa", "allowable_k", "time_s", "least_margin_k", "margin_k")},
            basis=PATH_BASIS, condition=words))
        if worst is None or outcome.rank > worst.rank:
            worst = outcome
    outcome = worst or Outcome.NOT_SCREENED
    if not ok:
        outcome = Outcome.NOT_SCREENED
        findings.append(Finding(Topic.CONVERGENCE, Severity.CAUTION,
                                f"The depressuring run did not converge: {result.message} The curves stop there; "
                                "the case is not screened.", basis="fail closed (jtcheck.blowdown)"))
    findings.append(target_finding(result, plan))
    return outcome, sort_findings(findings), paths


def target_finding(result: DepressureResult, plan: RunPlan) -> Finding:
    """The depressuring target: met (information), missed or not reached (hazard), not checked (caution)."""
    if plan.target_pressure_pa is None or plan.target_time_s is None:
        return Finding(Topic.DEPRESSURING, Severity.CAUTION, "The time to a depressuring target is not checked: no "
                       "design pressure and no target pressure are given.", basis=plan.target_basis)
    numbers = {"target_pressure_pa": plan.target_pressure_pa, "target_time_s": plan.target_time_s,
               "time_to_target_s": result.time_to_target_s}
    aim = f"{P(plan.target_pressure_pa)} within {plan.target_time_s / 60:.3g} min"
    t = result.time_to_target_s
    if t is not None and result.target_met:
        return Finding(Topic.DEPRESSURING, Severity.INFORMATION, f"The vessel reaches the depressuring target {aim} "
                       f"in {t / 60:.3g} min ({t:.0f} s).", numbers=numbers, basis=plan.target_basis)
    if t is not None:
        return Finding(Topic.DEPRESSURING, Severity.HAZARD, f"The depressuring target {aim} is missed: the vessel "
                       f"reaches it only after {t / 60:.3g} min ({t:.0f} s).", numbers=numbers,
                       basis=plan.target_basis)
    if not result.converged:
        return Finding(Topic.DEPRESSURING, Severity.CAUTION, f"The depressuring target {aim} is not checked: the "
                       "run did not converge.", numbers=numbers, basis=plan.target_basis)
    end = float(result.time[-1]) if len(result.time) else 0.0
    return Finding(Topic.DEPRESSURING, Severity.HAZARD, f"The depressuring target {aim} is not reached in the run "
                   f"({end / 60:.3g} min, stopped: {result.stop_reason}).", numbers=numbers, basis=plan.target_basis)


def _extreme(ex: Extreme) -> dict[str, Any]:
    return ex.to_dict()


def _list(a: Any) -> list[float | None]:
    return [None if not math.isfinite(float(x)) else float(x) for x in np.asarray(a, float)]


def stored_run(result: DepressureResult, plan: RunPlan, paths: Mapping[str, Any]) -> dict[str, Any]:
    """What a case keeps of a run (``answers["depressuring"]``): the key numbers and the curves (thinned to about
    :data:`CURVE_POINTS` points, the extremes kept; the key numbers come from every step), SI."""
    n = len(result.time)
    keep = [i for i in (_argmin(np.asarray(a, float)) for a in (result.t_fluid, result.t_wall_gas,
                                                                result.t_wall_liquid, -np.asarray(result.mass_flow)))
            if i is not None]
    idx = sample(n, keep, CURVE_POINTS)
    series = {"time_s": result.time, "pressure_pa": result.pressure, "t_fluid_k": result.t_fluid,
              "t_wall_gas_k": result.t_wall_gas, "t_wall_liquid_k": result.t_wall_liquid,
              "mass_flow_kg_per_s": result.mass_flow, "inventory_kg": result.inventory,
              "vapour_fraction": result.vapour_fraction}
    return {
        "converged": bool(result.converged), "message": result.message, "stop_reason": result.stop_reason,
        "series": {k: _list(np.asarray(v, float)[idx]) if n else [] for k, v in series.items()},
        "steps_stored": int(len(idx)) if n else 0,
        "valve": {"time_s": _list(result.valve_time), "t_k": _list(result.valve_outlet_t),
                  "phase": list(result.valve_outlet_phase)},
        "run": plan.to_dict(), "time_to_target_s": result.time_to_target_s, "target_met": result.target_met,
        "peak_mass_flow": _extreme(result.peak_mass_flow), "min_fluid_t": _extreme(result.min_fluid_t),
        "min_wall_gas_t": _extreme(result.min_wall_gas_t), "min_wall_liquid_t": _extreme(result.min_wall_liquid_t),
        "min_valve_outlet_t": _extreme(result.min_valve_outlet_t),
        "initial_mass_kg": float(result.inventory[0]) if n else None,
        "end_time_s": float(result.time[-1]) if n else None,
        "end_pressure_pa": float(result.pressure[-1]) if n else None,
        "mass_closure": result.mass_closure if math.isfinite(result.mass_closure) else None,
        "energy_closure": result.energy_closure if math.isfinite(result.energy_closure) else None,
        "steps": result.steps, "rejected_steps": result.rejected_steps, "flashes": result.flashes,
        "paths": dict(paths), "inputs": result.inputs, "warnings": list(result.warnings),
        "method": str(result.basis.get("method") or ""), "fire_basis": str(result.basis.get("fire") or ""),
        "valves_draw": str(result.basis.get("valves_draw") or ""),
    }
