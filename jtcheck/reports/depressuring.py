"""A stored vessel depressuring run as the result page and the record show it: the key numbers, the curves against
time and a table of the time series, in the units the case was entered in.

The run is the one stored with the result (``screening["answers"]["depressuring"]``, written by
:func:`jtcheck.cases.depressuring.screen.stored_run`); nothing is computed again.  The chart draws pressure,
fluid temperature, inner wall temperatures (gas- and liquid-wetted) with the blowdown valve outlet and the cold
limit, mass flow and inventory against time (:mod:`jtcheck.reports.charts` styles).
"""
from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

import numpy as np
from matplotlib.figure import Figure

from jtcheck.reports.charts import DRAW_LOCK, PRINT, SCREEN, ChartStyle, _finish
from jtcheck.reports.screening_display import DisplayUnits

CHART_TITLE = ("Vessel depressuring against time: pressure, fluid and inner wall temperatures with the blowdown valve "
               "outlet and the cold limit, mass flow and inventory")
#: Rows of the time-series table of the record and the page.
TABLE_ROWS = 16
#: Words of the paths screened (jtcheck.cases.depressuring.screen.PATHS).
PATH_WORDS = {"wall_gas": "Gas-wetted inner wall", "wall_liquid": "Liquid-wetted inner wall",
              "valve_outlet": "Blowdown valve outlet"}


def run_of(screening: Mapping[str, Any] | None) -> Mapping[str, Any] | None:
    """The stored run of a result's screening (None for another kind)."""
    run = ((screening or {}).get("answers") or {}).get("depressuring")
    return run if isinstance(run, Mapping) else None


def _f(v: Any) -> float | None:
    return float(v) if isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v) else None


def _when(units: DisplayUnits, ex: Mapping[str, Any] | None) -> str:
    ex = ex or {}
    t, p = _f(ex.get("time_s")), _f(ex.get("pressure_pa"))
    if t is None:
        return ""
    pv = units.P(p)
    return f"at {t:.0f} s ({t / 60:.1f} min), vessel at {pv['value']:.4g} {pv['unit']}" if p is not None else \
        f"at {t:.0f} s"


def depressuring_view(screening: Mapping[str, Any] | None, units: DisplayUnits) -> dict[str, Any] | None:
    """The key numbers, the screened paths and the time-series table of a stored run, in ``units``
    (``{"value", "unit"}`` pairs; times in s and min); None when the result holds no run."""
    run = run_of(screening)
    if run is None:
        return None
    plan = run.get("run") or {}
    t_target = _f(run.get("time_to_target_s"))
    key = [
        {"what": "Depressuring target", "value": units.P(_f(plan.get("target_pressure_pa"))),
         "note": (f"within {plan['target_time_s'] / 60:.3g} min" if _f(plan.get("target_time_s")) else "none given")
         + f"; {plan.get('target_basis') or ''}"},
        {"what": "Time to the target", "value": {"value": None if t_target is None else t_target / 60, "unit": "min"},
         "note": ("met" if run.get("target_met") else "missed" if run.get("target_met") is False else
                  "not checked") + (f" ({t_target:.0f} s)" if t_target is not None else "")},
        {"what": "Peak mass flow (to flare)", "value": {"value": _f((run.get("peak_mass_flow") or {}).get("value")),
                                                        "unit": "kg/s"},
         "note": _when(units, run.get("peak_mass_flow"))},
        {"what": "Minimum fluid temperature", "value": units.T(_f((run.get("min_fluid_t") or {}).get("value"))),
         "note": _when(units, run.get("min_fluid_t"))},
        {"what": "Minimum gas-wetted inner wall temperature",
         "value": units.T(_f((run.get("min_wall_gas_t") or {}).get("value"))),
         "note": _when(units, run.get("min_wall_gas_t"))},
        {"what": "Minimum liquid-wetted inner wall temperature",
         "value": units.T(_f((run.get("min_wall_liquid_t") or {}).get("value"))),
         "note": _when(units, run.get("min_wall_liquid_t")) or "no liquid in the vessel"},
        {"what": "Minimum blowdown valve outlet temperature",
         "value": units.T(_f((run.get("min_valve_outlet_t") or {}).get("value"))),
         "note": _when(units, run.get("min_valve_outlet_t"))},
        {"what": "Initial inventory", "value": {"value": _f(run.get("initial_mass_kg")), "unit": "kg"}, "note": ""},
        {"what": "End of the run", "value": {"value": None if _f(run.get("end_time_s")) is None
                                             else run["end_time_s"] / 60, "unit": "min"},
         "note": f"vessel at {units.P(_f(run.get('end_pressure_pa')))['value'] or 0:.4g} "
                 f"{units.P(_f(run.get('end_pressure_pa')))['unit']}; stopped: {run.get('stop_reason') or '-'}"},
    ]
    paths = []
    for name, entry in (run.get("paths") or {}).items():
        paths.append({"what": PATH_WORDS.get(name, name), "outcome": str(entry.get("outcome") or ""),
                      "t": units.T(_f(entry.get("t_k"))), "allowable": units.T(_f(entry.get("allowable_k"))),
                      "p": units.P(_f(entry.get("p_pa"))), "time_s": _f(entry.get("time_s")),
                      "margin": units.DT(_f(entry.get("least_margin_k"))), "message": str(entry.get("message") or "")})
    series = run.get("series") or {}
    times = series.get("time_s") or []
    n = len(times)
    rows = []
    for i in (sorted(set(np.linspace(0, n - 1, min(TABLE_ROWS, n)).round().astype(int).tolist())) if n else []):
        rows.append({"time_s": times[i], "p": units.P(series["pressure_pa"][i]),
                     "t_fluid": units.T(series["t_fluid_k"][i]), "t_wall_gas": units.T(series["t_wall_gas_k"][i]),
                     "t_wall_liquid": units.T(series["t_wall_liquid_k"][i]),
                     "mass_flow": _f(series["mass_flow_kg_per_s"][i]), "inventory": _f(series["inventory_kg"][i])})
    valve = run.get("valve") or {}
    vrows = [{"time_s": t, "t": units.T(v), "phase": ph} for t, v, ph in
             zip(valve.get("time_s") or [], valve.get("t_k") or [], valve.get("phase") or [], strict=False)]
    step = max(1, len(vrows) // TABLE_ROWS)
    inputs = run.get("inputs") or {}
    return {"converged": bool(run.get("converged")), "message": str(run.get("message") or ""), "key": key,
            "paths": paths, "rows": rows, "valve_rows": vrows[::step],
            "closure": {"mass": _f(run.get("mass_closure")), "energy": _f(run.get("energy_closure"))},
            "steps": run.get("steps"), "flashes": run.get("flashes"), "steps_stored": run.get("steps_stored"),
            "method": str(run.get("method") or ""), "fire_basis": str(run.get("fire_basis") or ""),
            "valves_draw": str(run.get("valves_draw") or ""), "warnings": [str(w) for w in run.get("warnings") or ()],
            "vessel": inputs.get("vessel") or {}, "orifices": inputs.get("orifices") or [],
            "heat_input": inputs.get("heat_input") or {},
            "wall_material": (inputs.get("wall_material") or {}).get("name"),
            "liquid_level_m": inputs.get("liquid_level_m"), "target_basis": str(plan.get("target_basis") or ""),
            "units": {"temperature": units.temperature, "pressure": units.inlet_pressure}}


def _arr(values: Any) -> np.ndarray:
    return np.array([np.nan if v is None else v for v in values or []], dtype=float)


def draw_depressuring_chart(screening: Mapping[str, Any] | None, units: DisplayUnits, *,
                            limit_k: float | None = None, target_k: float | None = None,
                            style: ChartStyle = SCREEN, text_as_paths: bool = True,
                            css_class: str = "depressuring-chart", figsize: tuple[float, float] = (7.5, 8.4),
                            margins: tuple[float, float, float, float] | None = None) -> str | None:
    """The run's curves against time [min] as an ``<svg>`` element (None without a run or a curve).

    Four panels: pressure (the case's pressure unit); fluid temperature, inner wall temperatures and the valve
    outlet (the case's temperature unit) with the governing cold limit ``limit_k`` [K] and the limit plus margin
    ``target_k`` [K]; mass flow [kg/s]; inventory [kg]."""
    run = run_of(screening)
    series = (run or {}).get("series") or {}
    if not series.get("time_s"):
        return None
    t_min = _arr(series["time_s"]) / 60.0
    tu = units.temperature

    def temp(values: Any) -> np.ndarray:
        return np.array([np.nan if v is None else units.t(v) for v in values or []], dtype=float)

    with DRAW_LOCK:
        fig = Figure(figsize=figsize, dpi=100)
        axes = fig.subplots(4, 1, sharex=True)
        ink = style.sweep_lines
        ax = axes[0]
        ax.plot(t_min, [units.p_in(v) if v is not None else np.nan for v in series["pressure_pa"]], color=ink[0],
                linewidth=1.5, label="vessel pressure")
        target = _f(((run or {}).get("run") or {}).get("target_pressure_pa"))
        if target is not None:
            ax.axhline(units.p_in(target), color=style.target, linestyle="-.", linewidth=1.2, label="target pressure")
        ax.set_ylabel(f"pressure [{units.inlet_pressure}]", color=style.ink, fontsize=8)
        ax = axes[1]
        ax.plot(t_min, temp(series.get("t_fluid_k")), color=ink[0], linewidth=1.5, label="fluid")
        ax.plot(t_min, temp(series.get("t_wall_gas_k")), color=ink[1 % len(ink)], linewidth=1.5,
                linestyle=style.sweep_styles[1 % len(style.sweep_styles)], label="inner wall, gas-wetted")
        wl = temp(series.get("t_wall_liquid_k"))
        if np.isfinite(wl).any():
            ax.plot(t_min, wl, color=ink[2 % len(ink)], linewidth=1.5,
                    linestyle=style.sweep_styles[2 % len(style.sweep_styles)], label="inner wall, liquid-wetted")
        valve = (run or {}).get("valve") or {}
        if valve.get("time_s"):
            ax.plot(_arr(valve["time_s"]) / 60.0, temp(valve.get("t_k")), color=ink[3 % len(ink)], linewidth=0,
                    marker="v", markersize=3.5, label="blowdown valve outlet")
        if limit_k is not None:
            ax.axhline(units.t(limit_k), color=style.cold_limit, linestyle="--", linewidth=1.3, label="cold limit")
            if target_k is not None and target_k != limit_k:
                ax.axhline(units.t(target_k), color=style.target, linestyle="-.", linewidth=1.1,
                           label="cold limit + margin")
        ax.set_ylabel(f"temperature [{tu}]", color=style.ink, fontsize=8)
        ax = axes[2]
        ax.plot(t_min, _arr(series.get("mass_flow_kg_per_s")), color=ink[0], linewidth=1.5, label="mass flow")
        ax.set_ylabel("mass flow [kg/s]", color=style.ink, fontsize=8)
        ax = axes[3]
        ax.plot(t_min, _arr(series.get("inventory_kg")), color=ink[0], linewidth=1.5, label="inventory")
        ax.set_ylabel("inventory [kg]", color=style.ink, fontsize=8)
        ax.set_xlabel("time [min]", color=style.ink)
        for a in axes[:-1]:
            a.grid(True, color=style.grid, linewidth=0.6)
            a.tick_params(colors=style.ink, labelsize=7)
            for spine in a.spines.values():
                spine.set_color(style.spine)
        for a in axes[:2]:
            a.legend(loc="upper left", bbox_to_anchor=(1.01, 1.0), fontsize=7, frameon=False, borderaxespad=0.0)
        axes[-1].tick_params(labelsize=7)
        return _finish(fig, axes[-1], style, "jtcheck-depressuring", text_as_paths, css_class, CHART_TITLE, margins)


__all__ = ["CHART_TITLE", "PRINT", "SCREEN", "depressuring_view", "draw_depressuring_chart", "run_of"]
