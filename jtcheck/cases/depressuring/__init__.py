"""The vessel depressuring case kind: one vessel or isolated segment blown down through its orifices, in time.

The case's quantity fields give the initial state of the vessel (``inlet_pressure_pa``, ``inlet_temperature_k``)
and the back pressure at the blowdown valve outlet (``outlet_pressure_pa``, the flare header); the structured
inputs ``vessel``, ``orifices``, ``heat_input`` and ``run`` give the rest (:mod:`.inputs`).  The run is
:func:`jtcheck.blowdown.depressure` with the model the run names (``run.model``: the equilibrium model, the
default, mass and energy balances with a UV flash each stage, real-fluid nozzle, wall conduction; or the two-zone
model, gas and liquid zones at their own temperatures; Haque, Richardson, Saville and Chamberlain, Process Saf.
Environ. Prot. 70 (1992) 3-17; Speranza and Terenzi, Ind. Eng. Chem. Res. 44 (2005) 1054).  The coldest inner
wall (gas- and liquid-wetted) and the blowdown valve outlet are screened along their pressure-temperature paths
and the time to the depressuring target is checked (:mod:`.screen`).

The screening is stored as a :class:`~jtcheck.screening.screen.Screening` without letdown conditions; its
``answers["depressuring"]`` holds the key numbers and the curves (:func:`.screen.stored_run`).
"""
from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

from jtcheck import marks
from jtcheck.blowdown import depressure
from jtcheck.cases.depressuring.inputs import (
    check_depressuring,
    heat_input_of,
    orifices_of,
    run_of,
    vessel_of,
)
from jtcheck.cases.depressuring.screen import screen_run, stored_run
from jtcheck.cases.kind import CaseKind
from jtcheck.cases.letdown import LETDOWN_FIELDS, cold_limits
from jtcheck.errors import InputError
from jtcheck.screening.screen import Condition, Screening
from jtcheck.thermo.fluid import Fluid

#: The condition a depressuring case computes (one run).
RUN_CONDITION = "depressuring run"
#: Times at which the blowdown valve's outlet temperature is computed.
VALVE_POINTS = 30
#: Computing-time budget of a register case's run [s]: it computes inside the web request, whose worker is stopped
#: at the server timeout (deploy/gunicorn.conf.py, 60 s by default); past this budget the run stops, not converged
#: and not screened, with the reason, well before the request is cut.
REGISTER_BUDGET_S = 20.0
#: Where the engine's errors name an input, and where the case holds it.
_ENGINE_FIELDS = {"liquid_level": "vessel.liquid_level_m", "t0": "inlet_temperature_k", "p0": "inlet_pressure_pa",
                  "back_pressure": "outlet_pressure_pa", "wall_t0": "vessel.wall_t0_k", "model": "run.model"}
#: The quantity fields: the initial pressure and temperature of the vessel and the back pressure (the register's
#: inlet and outlet fields, so that a case of any kind has them).
DEPRESSURING_FIELDS = LETDOWN_FIELDS[:3]


class VesselDepressuringKind(CaseKind):
    """A vessel or isolated segment depressured through blowdown valves or restriction orifices."""

    name = "vessel_depressuring"
    label = "vessel depressuring"
    cases_phrase = "vessel depressuring cases"
    devices = ("vessel_depressuring",)
    fields = DEPRESSURING_FIELDS
    parameters = ("vessel", "orifices", "heat_input", "run")
    method = ("vessel depressuring in time, equilibrium model or two-zone model (gas and liquid zones at their own "
              "temperatures; Haque et al. 1992, Speranza and Terenzi 2005) as chosen in the run "
              "(jtcheck.blowdown.depressure: mass and energy "
              "balances with a UV flash of the inventory each stage, real-fluid isentropic nozzle, inside natural "
              "convection and boiling, 1-D wall conduction; Haque et al. 1992); the inner walls and the blowdown "
              "valve outlet screened along their pressure-temperature paths (jtcheck.screening.mdmt)")
    remedies_sentence = ("Where the metal gets too cold or the target is missed it shows when and at what pressure, "
                         "so that the orifice, the initial state or the material can be reconsidered.")
    input_sections = ("cases/kinds/depressuring_inputs.html",)
    page_sections = ("cases/kinds/depressuring_result.html",)
    record_sections = ("kinds/depressuring_record.html",)
    #: Pages show no letdown conditions table for this kind: the run's curves and key numbers instead.
    shows_conditions = False

    def check(self, values: Mapping[str, Any]) -> None:
        check_depressuring(values)

    def conditions(self, values: Mapping[str, Any]) -> list[Condition]:
        return [Condition(RUN_CONDITION, values["inlet_pressure_pa"], values["inlet_temperature_k"],
                          values["outlet_pressure_pa"])]

    def compute(self, fluid: Fluid, values: Mapping[str, Any], *, compare_models: bool = True,
                answers: bool = True, sweep: bool = True) -> Screening:
        """Run the depressuring and screen it (one model, the case's EOS: ``compare_models`` does not apply, and
        there is no sweep or answer search)."""
        vessel, extra = vessel_of(values)
        orifices = orifices_of(values)
        plan = run_of(values, orifices)
        try:
            result = depressure(fluid, p0_pa=values["inlet_pressure_pa"], t0_k=values["inlet_temperature_k"],
                                vessel=vessel, orifices=orifices, liquid_level_m=extra["liquid_level_m"],
                                wall_material=extra["wall_material"], wall_t0_k=extra["wall_t0_k"],
                                heat_input=heat_input_of(values), end_time_s=plan.end_time_s,
                                end_pressure_pa=plan.end_pressure_pa, target_pressure_pa=plan.target_pressure_pa,
                                target_time_s=plan.target_time_s, valve_points=VALVE_POINTS, model=plan.model,
                                max_seconds=REGISTER_BUDGET_S)
        except InputError as exc:   # an input the fluid's state refuses (a liquid level in a gas): named as entered
            raise InputError(_ENGINE_FIELDS.get(exc.field, exc.field), exc.message) from None
        limits = cold_limits(values)
        outcome, findings, paths = screen_run(result, limits, values.get("material_spec"), plan, values["p_atm_pa"])
        t_min, where = (None, "")
        colds = [(float(ex.value), words, ex) for words, ex in (
            ("gas-wetted inner wall", result.min_wall_gas_t), ("liquid-wetted inner wall", result.min_wall_liquid_t),
            ("blowdown valve outlet", result.min_valve_outlet_t)) if math.isfinite(ex.value)]
        if result.converged and colds:
            t, words, ex = min(colds, key=lambda c: c[0])
            t_min, where = t, f"{words} at {ex.time_s:.0f} s (vessel at {marks.P(ex.pressure_pa, 'inlet_pressure')})"
        return Screening(outcome=outcome, limits=limits, t_out_min_k=t_min, coldest_condition=where,
                         models=(fluid.eos.value,), conditions=(), findings=tuple(findings),
                         answers={"depressuring": stored_run(result, plan, paths)})

    def result_entries(self, screening: Screening, values: Mapping[str, Any]) -> list[dict[str, Any]]:
        """The stored condition entry of the run: the initial state, the back pressure, the coldest valve outlet."""
        run = screening.answers.get("depressuring") or {}
        converged = bool(run.get("converged"))
        outlet = (run.get("min_valve_outlet_t") or {}).get("value") if converged else None
        t0 = values["inlet_temperature_k"]
        return [{"condition": RUN_CONDITION, "p_in": values["inlet_pressure_pa"], "t_in": t0,
                 "p_out": values["outlet_pressure_pa"], "t_out": outlet,
                 "dt": None if outlet is None else outlet - t0, "vapor_fraction": None,
                 "phase": "unknown", "converged": converged and outlet is not None,
                 "message": str(run.get("message") or ""), "warnings": list(run.get("warnings") or []),
                 "t_screen_k": screening.t_out_min_k if converged else None,
                 "governing_model": screening.models[0] if screening.models else "", "screen_message": "",
                 "solids": None, "t_out_by_model": {}}]


VESSEL_DEPRESSURING = VesselDepressuringKind()

__all__ = ["DEPRESSURING_FIELDS", "RUN_CONDITION", "VESSEL_DEPRESSURING", "VesselDepressuringKind"]
