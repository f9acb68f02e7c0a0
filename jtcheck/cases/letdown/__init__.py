"""The letdown case kind: a control valve, pressure-reduction station, choke, blowdown valve or other letdown.

Each credible condition (normal; minimum inlet temperature; maximum inlet pressure; both) is let down
isenthalpically to the outlet pressure and screened by :func:`jtcheck.screening.screen.screen_letdown`,
with the operating sweep over the entered ranges and, for a failing case, the preheat and the
outlet-pressure limit as answers.

To the user's conditions :meth:`LetdownKind.compute` adds the credible cases generated from the operating
data (:mod:`jtcheck.cases.credible`): settle-out after shutdown, start-up into a depressured outlet (always),
loss of the upstream heater and the minimum ambient for an uninsulated inlet.  What was generated, switched
off or not generated, each with its reasoning or reason, is in ``answers["generated_cases"]``.

Kind parameters beside the quantity fields (:data:`LETDOWN_FIELDS`), structured values in SI:

``settle_out_volumes``
    list of ``{"name": str, "volume_m3": float [m^3], "p_pa": float [Pa abs], "t_k": float [K]}``: the volumes
    connected to the inlet after a shutdown, with their states before they settle out.
``credible_off``
    ``{"settle_out" | "start_up" | "heater_loss" | "ambient": reason}``: generated cases switched off, each with
    the reason (required); they are listed in the result and not computed.
"""
from __future__ import annotations

from collections.abc import Mapping
from dataclasses import replace
from typing import Any

from jtcheck import marks
from jtcheck.cases.credible import GeneratedCases, check_credible_off, check_settle_out_volumes, generated_conditions
from jtcheck.cases.fields import (
    INLET_TEMPERATURE_RANGE_K,
    LIMIT_TEMPERATURE_RANGE_K,
    MASS_FLOW_RANGE_KG_PER_S,
    PRESSURE_RANGE_PA,
    WATER_CONTENT_RANGE_KG_PER_SM3,
    Field,
)
from jtcheck.cases.kind import CaseKind
from jtcheck.errors import InputError
from jtcheck.letdown.relief import P_ATM_STANDARD_PA
from jtcheck.screening.cold_metal import ColdLimits, material_limit_working
from jtcheck.screening.findings import Topic
from jtcheck.screening.screen import (
    Condition,
    OperatingRanges,
    Screening,
    ScreeningOptions,
    credible_conditions,
    screen_letdown,
)
from jtcheck.thermo.fluid import Fluid

#: The operating inputs of a letdown, in the order they are checked and shown.
LETDOWN_FIELDS: tuple[Field, ...] = (
    Field("inlet_pressure", "inlet_pressure_pa", "pressure", "inlet pressure", "Inlet pressure", PRESSURE_RANGE_PA,
          required=True),
    Field("inlet_temperature", "inlet_temperature_k", "temperature", "inlet temperature", "Inlet temperature",
          INLET_TEMPERATURE_RANGE_K, required=True),
    Field("outlet_pressure", "outlet_pressure_pa", "pressure", "outlet pressure", "Outlet pressure",
          PRESSURE_RANGE_PA, required=True),
    Field("inlet_temperature_min", "inlet_temperature_min_k", "temperature", "minimum credible inlet temperature",
          "Minimum credible inlet temperature", INLET_TEMPERATURE_RANGE_K),
    Field("inlet_pressure_max", "inlet_pressure_max_pa", "pressure", "maximum credible inlet pressure",
          "Maximum credible inlet pressure", PRESSURE_RANGE_PA),
    Field("outlet_pressure_min", "outlet_pressure_min_pa", "pressure", "minimum credible outlet pressure",
          "Minimum credible outlet pressure", PRESSURE_RANGE_PA),
    Field("mass_flow", "mass_flow_kg_per_s", "mass_flow", "mass flow", "Mass flow", MASS_FLOW_RANGE_KG_PER_S),
    Field("heater_upstream_temperature", "heater_upstream_temperature_k", "temperature",
          "temperature upstream of the heater (heater off)", "Temperature upstream of the heater (heater off)",
          INLET_TEMPERATURE_RANGE_K),
    Field("ambient_temperature_min", "ambient_temperature_min_k", "temperature", "minimum ambient temperature",
          "Minimum ambient temperature", LIMIT_TEMPERATURE_RANGE_K),
    # water the gas carries (issue 13): neither given means saturated at the inlet (the default, conservative)
    Field("water_content", "water_content_kg_per_sm3", "water_content", "water content of the gas",
          "Water content of the gas", WATER_CONTENT_RANGE_KG_PER_SM3),
    Field("water_dew_point", "water_dew_point_k", "temperature", "water dew point at the outlet pressure",
          "Water dew point at the outlet pressure", LIMIT_TEMPERATURE_RANGE_K),
)
#: Hydrate inhibitors a case may name (jtcheck.screening.hydrates.Inhibitor; a dose is given for methanol and MEG).
HYDRATE_INHIBITORS = ("methanol", "MEG", "ethanol", "DEG", "TEG")


def check_letdown(values: Mapping[str, Any], names: Mapping[str, str] | None = None) -> None:
    """Relations between the letdown fields: outlet <= inlet pressure and the extremes on the right side.

    ``names`` (register key -> name) words the "allowed" part in the caller's names (``"p_in"``);
    by default in words (``"the normal inlet pressure"``).
    """
    def ref(key: str, words: str) -> str:
        return names.get(key, words) if names else words

    def bar(pa: float, field: str) -> str:      # in the unit the user typed the field in (marked), as typed
        return marks.P(pa, field, 6)

    def deg(k: float, field: str) -> str:
        return marks.T(k, field, 6)

    p_in, p_out = values["inlet_pressure_pa"], values["outlet_pressure_pa"]
    if p_out > p_in:
        raise InputError("outlet_pressure_pa",
                         f"outlet pressure {bar(p_out, 'outlet_pressure')} is above the inlet pressure "
                         f"{bar(p_in, 'inlet_pressure')}; allowed: {ref('outlet_pressure_pa', 'outlet')} <= "
                         f"{ref('inlet_pressure_pa', 'inlet pressure')} (a letdown)")
    t_min = values.get("inlet_temperature_min_k")
    if t_min is not None and t_min > values["inlet_temperature_k"]:
        raise InputError("inlet_temperature_min_k",
                         f"minimum credible inlet temperature {deg(t_min, 'inlet_temperature_min')} is above the "
                         f"normal inlet temperature {deg(values['inlet_temperature_k'], 'inlet_temperature')}; "
                         f"allowed: <= {ref('inlet_temperature_k', 'the normal inlet temperature')}")
    p_max = values.get("inlet_pressure_max_pa")
    if p_max is not None and p_max < p_in:
        raise InputError("inlet_pressure_max_pa",
                         f"maximum credible inlet pressure {bar(p_max, 'inlet_pressure_max')} is below the normal "
                         f"inlet pressure {bar(p_in, 'inlet_pressure')}; "
                         f"allowed: >= {ref('inlet_pressure_pa', 'the normal inlet pressure')}")
    p_out_min = values.get("outlet_pressure_min_pa")
    if p_out_min is not None and p_out_min > p_out:
        raise InputError("outlet_pressure_min_pa",
                         f"minimum credible outlet pressure {bar(p_out_min, 'outlet_pressure_min')} is above the "
                         f"normal outlet pressure {bar(p_out, 'outlet_pressure')}; "
                         f"allowed: <= {ref('outlet_pressure_pa', 'the normal outlet pressure')}")
    inhibitor = values.get("hydrate_inhibitor", "methanol")
    if inhibitor not in HYDRATE_INHIBITORS:
        raise InputError("hydrate_inhibitor", f"unknown hydrate inhibitor {inhibitor!r}; allowed: "
                                              f"{', '.join(HYDRATE_INHIBITORS)}")
    if values.get("water_content_kg_per_sm3") is not None and values.get("water_dew_point_k") is not None:
        raise InputError("water_dew_point_k", "give the water content or the water dew point, not both; allowed: one "
                                              "of them, or neither (the gas saturated with water at the inlet)")
    check_settle_out_volumes(values.get("settle_out_volumes"))
    check_credible_off(values.get("credible_off"))


#: Short names of the letdown inputs, as the ``jtcheck letdown`` options and the JSON API's letdown request
#: call them; errors found by :func:`check_short` name these.
SHORT_NAMES = {"inlet_pressure_pa": "p_in", "inlet_temperature_k": "t_in", "outlet_pressure_pa": "p_out",
               "inlet_temperature_min_k": "t_in_min", "inlet_pressure_max_pa": "p_in_max",
               "outlet_pressure_min_pa": "p_out_min", "mass_flow_kg_per_s": "mass_flow",
               "hydrate_inhibitor": "inhibitor", "heater_upstream_temperature_k": "heater_off_t",
               "ambient_temperature_min_k": "ambient_t_min"}


def letdown_values(*, p_in_pa: float, t_in_k: float, p_out_pa: float, limits: ColdLimits, p_atm_pa: float,
                   p_in_max_pa: float | None = None, t_in_min_k: float | None = None,
                   p_out_min_pa: float | None = None, mass_flow_kg_per_s: float | None = None,
                   water_saturated: bool = False, inhibitor: str = "methanol") -> dict[str, Any]:
    """A letdown typed in directly (CLI, JSON API) as the register holds one: register keys, SI.

    Pressures [Pa] absolute, temperatures [K], mass flow [kg/s]; ``limits`` gives the MDMT, the user's
    cold limit and the margin.
    """
    return {"inlet_pressure_pa": p_in_pa, "inlet_temperature_k": t_in_k, "outlet_pressure_pa": p_out_pa,
            "inlet_temperature_min_k": t_in_min_k, "inlet_pressure_max_pa": p_in_max_pa,
            "outlet_pressure_min_pa": p_out_min_pa, "mass_flow_kg_per_s": mass_flow_kg_per_s,
            "mdmt_k": limits.mdmt_k, "cold_limit_k": limits.user_limit_k, "margin_k": limits.margin_k,
            "mdmt_source": limits.mdmt_source, "p_atm_pa": p_atm_pa, "water_saturated": water_saturated,
            "hydrate_inhibitor": inhibitor}


def water_options(values: Mapping[str, Any]) -> dict[str, Any]:
    """The water inputs of the screening (:class:`ScreeningOptions`): a water content [kg/Sm3, stored] or a water
    dew point [K] when given, else none (the screening then takes the gas saturated at each condition's inlet)."""
    content = values.get("water_content_kg_per_sm3")
    dew = values.get("water_dew_point_k")
    if content is not None:
        return {"water_basis": "water content", "water_content_mg_per_sm3": content * 1e6}
    if dew is not None:
        return {"water_basis": "water dew point", "water_dew_point_k": dew}
    return {}


def check_short(values: Mapping[str, Any]) -> None:
    """The register's range of each letdown field (:attr:`Field.si_range`) and :func:`check_letdown`, with errors
    naming the short inputs (:data:`SHORT_NAMES`)."""
    try:
        for f in LETDOWN_FIELDS:
            if values.get(f.key) is not None:
                f.check(values[f.key])
        check_letdown(values, SHORT_NAMES)
    except InputError as err:
        raise InputError(SHORT_NAMES.get(err.field, err.field), err.message) from None


def letdown_conditions(values: Mapping[str, Any]) -> list[Condition]:
    """The credible conditions of :func:`jtcheck.screening.screen.credible_conditions` for ``values``."""
    return credible_conditions(values["inlet_pressure_pa"], values["inlet_temperature_k"],
                               values["outlet_pressure_pa"], values.get("inlet_pressure_max_pa"),
                               values.get("inlet_temperature_min_k"))


#: The coincident pressure of a letdown's cold outlet, in words.
COINCIDENT_OUTLET = ("the normal outlet pressure (the highest outlet pressure of the credible conditions: a lower "
                     "pressure would allow a colder limit, so this is the conservative side)")


def cold_limits(values: Mapping[str, Any]) -> ColdLimits:
    """The cold limits of ``values``: MDMT (and where it came from), the user's limit and the margin [K].

    With ``material_spec`` (a :class:`~jtcheck.screening.mdmt.MaterialColdSpec` whose limit comes from an
    exemption curve or an impact test), the MDMT is found at the coincident pressure: the outlet pressure.
    """
    mdmt, source, working = values.get("mdmt_k"), values.get("mdmt_source") or "", None
    spec = values.get("material_spec")
    if spec is not None and spec.has_curve:
        p_out = values["outlet_pressure_pa"]
        p_top = max(p_out, values.get("inlet_pressure_max_pa") or values["inlet_pressure_pa"])
        mdmt, basis, working = material_limit_working(spec, p_out, values.get("p_atm_pa") or P_ATM_STANDARD_PA,
                                                      p_top, values.get("mdmt_table"), COINCIDENT_OUTLET)
        source = f"{source or 'material: ' + spec.name}; {basis} at the coincident outlet pressure"
    return ColdLimits(mdmt_k=mdmt, user_limit_k=values.get("cold_limit_k"),
                      margin_k=values.get("margin_k") or 0.0, mdmt_source=source,
                      margin_source=values.get("margin_source") or "", mdmt_working=working)


def operating_ranges(values: Mapping[str, Any]) -> OperatingRanges:
    """The ranges of the operating sweep: inlet pressure normal to maximum, inlet temperature minimum to
    normal, outlet pressure minimum to normal (equal ends where no extreme is given)."""
    p_in, t_in, p_out = values["inlet_pressure_pa"], values["inlet_temperature_k"], values["outlet_pressure_pa"]
    return OperatingRanges(p_in_pa=(p_in, values.get("inlet_pressure_max_pa") or p_in),
                           t_in_k=(values.get("inlet_temperature_min_k") or t_in, t_in),
                           p_out_pa=(values.get("outlet_pressure_min_pa") or p_out, p_out))


def letdown_options(values: Mapping[str, Any], *, sweep: bool = True, **extra: Any) -> ScreeningOptions:
    """The screening a letdown asks for: limits, hydrate data, mass flow and (with ``sweep``) the operating
    ranges; ``extra`` goes to :class:`ScreeningOptions` as it is (``compare_models``, ``answers``, ``relief``)."""
    ranges = operating_ranges(values)
    return ScreeningOptions(limits=cold_limits(values), water_saturated=True if values.get("water_saturated") else None,
                            inhibitor=values.get("hydrate_inhibitor") or "methanol",
                            mass_flow_kg_per_s=values.get("mass_flow_kg_per_s"),
                            **water_options(values),
                            ranges=ranges if sweep and ranges.varies else None, **extra)


class LetdownKind(CaseKind):
    """Steady isenthalpic letdown through a valve, choke or restriction."""

    name = "letdown"
    label = "letdown"
    cases_phrase = "letdown cases"
    devices = ("control_valve", "blowdown_valve", "choke", "other")
    fields = LETDOWN_FIELDS
    flags = ("water_saturated", "hydrate_inhibitor")
    parameters = ("settle_out_volumes", "credible_off")
    remedies_sentence = ("Where the outlet is too cold it gives the preheat and the outlet-pressure limit that would "
                         "keep it above the limit plus margin.")
    page_sections = ("cases/kinds/hydrate_result.html", "cases/kinds/generated_cases.html")
    record_sections = ("kinds/hydrate_record.html", "kinds/generated_cases.html")
    method = ("isenthalpic letdown: PT flash of the inlet, PH flash at the outlet pressure, with the case's equation "
              "of state and the other of Peng-Robinson and Soave-Redlich-Kwong; screened against the cold limit, "
              "for liquid dropout, hydrates, CO2 solids and external icing")
    input_sections = ("cases/kinds/letdown_inputs.html",)
    screening_sections = ("cases/kinds/letdown_hydrates.html",)
    vectorised = True

    def check(self, values: Mapping[str, Any]) -> None:
        check_letdown(values)

    def conditions(self, values: Mapping[str, Any]) -> list[Condition]:
        return letdown_conditions(values)

    def options(self, values: Mapping[str, Any], **switches: bool) -> ScreeningOptions:
        """The :class:`ScreeningOptions` of ``values`` (``switches`` as for :meth:`compute`)."""
        return letdown_options(values, **switches)

    def compute(self, fluid: Fluid, values: Mapping[str, Any], *, compare_models: bool = True,
                answers: bool = True, sweep: bool = True) -> Screening:
        """Screen the user's conditions (:meth:`conditions`) and the generated credible cases
        (:func:`jtcheck.cases.credible.generated_conditions`); ``answers["generated_cases"]`` lists the latter."""
        options = self.options(values, compare_models=compare_models, answers=answers, sweep=sweep)
        generated = generated_conditions(fluid, values)
        screening = screen_letdown(fluid, [*self.conditions(values), *generated.conditions], options)
        return with_generated(screening, generated)


def with_generated(screening: Screening, generated: GeneratedCases) -> Screening:
    """``screening`` with ``answers["generated_cases"]`` (:meth:`GeneratedCases.entries`) and, for a generated
    condition whose starting state was not found (settle-out), its reason in the condition and the finding
    in place of the letdown's refusal of the missing state."""
    why = {g.condition.name: g.message for g in generated.unconverged}
    conditions = tuple(replace(cs, message=f"not converged: {why[cs.condition.name]}")
                       if cs.condition.name in why else cs for cs in screening.conditions)
    findings = tuple(replace(f, message=f"{f.condition}: not converged: {why[f.condition]}")
                     if f.topic is Topic.CONVERGENCE and f.condition in why else f for f in screening.findings)
    return replace(screening, conditions=conditions, findings=findings,
                   answers={**screening.answers, "generated_cases": generated.entries()})


LETDOWN = LetdownKind()
