"""``POST /api/v1/letdown``: compute and screen one letdown without storing it."""
from __future__ import annotations

import math
import numbers
from collections.abc import Mapping
from typing import Any

from flask import jsonify

from jtcheck import Fluid, itemlists, letdown
from jtcheck.cases.fields import WATER_CONTENT_RANGE_KG_PER_SM3
from jtcheck.cases.letdown import LETDOWN, check_short, letdown_values
from jtcheck.cases.relief import RELIEF_VALVE
from jtcheck.errors import InputError
from jtcheck.letdown.throttle import check_letdown_inputs
from jtcheck.notices import CAUTION
from jtcheck.records import service
from jtcheck.records.errors import NotFound
from jtcheck.records.fields import MAX_ID
from jtcheck.records.models import FluidRecord, KijMode
from jtcheck.reports.screening_display import DisplayUnits, key_numbers
from jtcheck.screening.cold_metal import ColdLimits
from jtcheck.screening.hydrates import Inhibitor
from jtcheck.screening.mdmt import MaterialColdSpec
from jtcheck.screening.screen import Screening
from jtcheck.units import (
    MATERIAL_OPTION_OF,
    MATERIAL_OPTIONS,
    TextUnits,
    material_options,
    parse_pressure,
    parse_temperature,
    parse_temperature_difference,
    parse_water_content,
    pressure_from_pa,
    temperature_from_k,
)
from jtcheck.web.api.blueprint import api, body, unknown_keys
from jtcheck.web.database import db_session
from jtcheck.web.quantities import (
    MASS_FLOW_UNIT,
    canonical_unit,
    parse_p_atm,
    quantity_text,
    unit_word,
)
from jtcheck.web.security import require_viewer


# -- computing without storing -------------------------------------------------------------------
def _fluid_from_spec(spec: Any) -> tuple[Fluid, str]:
    if not isinstance(spec, Mapping):
        raise InputError("fluid", "must be an object {\"composition\": ..., \"eos\": \"PR\", \"kij\": \"table\"}")
    unknown_keys(spec, ("composition", "eos", "kij"))
    composition = spec.get("composition")
    if composition is None:
        raise InputError("fluid.composition", "a composition is required, e.g. {\"methane\": 0.9, \"ethane\": 0.1}")
    if isinstance(composition, list):
        if not all(isinstance(p, list | tuple) and len(p) == 2 for p in composition):
            raise InputError("fluid.composition", "a list must hold [name, amount] pairs")
        composition = [tuple(p) for p in composition]
    elif not isinstance(composition, Mapping | str):
        raise InputError("fluid.composition", "give an object of name: amount, a list of [name, amount] pairs or "
                                              "'name=amount, ...' text")
    kij_text = spec.get("kij", "table")
    try:
        kij_mode = KijMode(kij_text)
    except ValueError:
        raise InputError("fluid.kij", f"unknown kij choice {kij_text!r}; allowed: table, zero") from None
    try:
        fluid = Fluid(composition, eos=spec.get("eos", "PR"), kij=kij_mode.fluid_kij())
    except InputError as exc:
        raise InputError(f"fluid.{exc.field}", exc.message) from None
    return fluid, kij_mode.value


def _q(data: Mapping[str, Any], key: str, example: str, required: bool = True) -> str | None:
    text = quantity_text(data.get(key), key, example)
    if text is None and required:
        raise InputError(key, f"required, with its unit, e.g. {example!r}")
    return text


RELIEF_KEYS = ("set_pressure", "overpressure", "superimposed_back_pressure", "built_up_back_pressure",
               "header_limit", "relieving_t_min", "header_sections", "other_sources")
#: Every key of a letdown request.
_LETDOWN_KEYS = ("fluid", "fluid_id", "p_in", "t_in", "p_out", "p_atm", "units", "limit", "mdmt", "margin",
                 "p_in_max", "t_in_min", "p_out_min", "water_saturated", "inhibitor", "mass_flow", "compare_models",
                 "heater_off_t", "ambient_t_min", "settle_out_volumes", "credible_off", "water_content",
                 "water_dew_point", *RELIEF_KEYS, *MATERIAL_OPTIONS)



def _generated_inputs(data: Mapping[str, Any], p_atm_pa: float) -> dict[str, Any]:
    """The inputs of the generated credible cases (register keys, SI), only those given: the temperature
    upstream of the heater, the minimum ambient, the settle-out volumes and the cases switched off."""
    out: dict[str, Any] = {}
    for key, name, example in (("heater_upstream_temperature_k", "heater_off_t", "5 degC"),
                               ("ambient_temperature_min_k", "ambient_t_min", "-20 degC")):
        text = _q(data, name, example, required=False)
        if text is not None:
            out[key] = parse_temperature(text, name)
    if data.get("settle_out_volumes") is not None:
        out["settle_out_volumes"] = itemlists.settle_out_volumes(data["settle_out_volumes"], "settle_out_volumes",
                                                                 p_atm_pa)
    if data.get("credible_off") is not None:
        out["credible_off"] = itemlists.credible_off(data["credible_off"], "credible_off")
    return out


def _relief_inputs(data: Mapping[str, Any], p_atm_pa: float) -> dict[str, Any]:
    """The relief-valve inputs of a request (register keys, SI), only those given; as ``jtcheck letdown`` reads its
    relief options."""
    out: dict[str, Any] = {}
    for key, name in (("set_pressure_pa", "set_pressure"), ("superimposed_back_pressure_pa",
                                                            "superimposed_back_pressure")):
        text = _q(data, name, "60 barg", required=False)
        if text is not None:
            out[key] = parse_pressure(text, name, p_atm_pa).pa
    text = _q(data, "built_up_back_pressure", "2 bar", required=False)
    if text is not None:     # a difference: no atmospheric offset
        out["built_up_back_pressure_pa"] = parse_pressure(text, "built_up_back_pressure", 0.0).pa
    over = data.get("overpressure")
    if over is not None:
        number, sign, rest = str(over).strip().partition("%")
        try:
            if not sign or rest.strip():
                raise ValueError
            out["overpressure_fraction"] = float(number) / 100.0
        except ValueError:
            raise InputError("overpressure", f"give a percentage with its unit, e.g. '10 %', got {over!r}") from None
    for key, name in (("header_limit_k", "header_limit"), ("relieving_temperature_min_k", "relieving_t_min")):
        text = _q(data, name, "-46 degC", required=False)
        if text is not None:
            out[key] = parse_temperature(text, name)
    if data.get("header_sections") is not None:
        out["header_sections"] = itemlists.header_sections(data["header_sections"], "header_sections", p_atm_pa)
    if data.get("other_sources") is not None:
        out["other_sources"] = itemlists.other_sources(data["other_sources"], "other_sources", p_atm_pa)
    if out and "set_pressure_pa" not in out:
        raise InputError("set_pressure", "relief-valve inputs need set_pressure as well")
    return out


def _flag(data: Mapping[str, Any], key: str, default: bool) -> bool:
    value = data.get(key)
    if value is None:
        return default
    if not isinstance(value, bool):
        raise InputError(key, f"must be true or false, got {value!r}")
    return value


def _inhibitor(value: Any) -> str:
    if value is None:
        return Inhibitor.METHANOL.value
    allowed = [i.value for i in Inhibitor]
    if isinstance(value, str):
        for name in allowed:
            if value.strip().lower() == name.lower():
                return name
    raise InputError("inhibitor", f"unknown hydrate inhibitor {value!r}; allowed: {', '.join(allowed)}")


def _mass_flow(value: Any) -> float | None:
    """Mass flow [kg/s] from a number (kg/s), ``"12 kg/s"`` or ``{"value": 12, "unit": "kg/s"}``; None if absent."""
    if value is None:
        return None
    number: Any = value
    if isinstance(value, Mapping):
        if set(value) != {"value", "unit"} or str(value.get("unit", "")).strip() != MASS_FLOW_UNIT:
            raise InputError("mass_flow", f"give {{\"value\": number, \"unit\": \"{MASS_FLOW_UNIT}\"}}; "
                                          f"{MASS_FLOW_UNIT} is the only unit")
        number = value["value"]
    elif isinstance(value, str):
        text = value.strip()
        if text.endswith(MASS_FLOW_UNIT):
            text = text[: -len(MASS_FLOW_UNIT)].strip()
        try:
            number = float(text)
        except ValueError:
            raise InputError("mass_flow", f"{value!r} is not a mass flow in {MASS_FLOW_UNIT} (e.g. '12 kg/s'); "
                                          f"{MASS_FLOW_UNIT} is the only unit") from None
    if isinstance(number, bool) or not isinstance(number, numbers.Real):
        raise InputError("mass_flow", f"must be a number in {MASS_FLOW_UNIT} or text such as '12 kg/s', "
                                      f"got {value!r}")
    flow = float(number)
    lo, hi, _ = service.MASS_FLOW_RANGE_KG_PER_S
    if not math.isfinite(flow) or not lo < flow < hi:
        raise InputError("mass_flow", f"mass flow {value!r} is out of range; allowed: above {lo:g} and below "
                                      f"{hi:g} {MASS_FLOW_UNIT}")
    return flow


def _water(data: Mapping[str, Any]) -> dict[str, float]:
    """The water the gas carries (issue 13): ``water_content`` ("110 mg/Sm3", "7 lb/MMscf") or ``water_dew_point``
    ("-10 degC", at the outlet pressure); neither: saturated at the inlet."""
    out: dict[str, float] = {}
    content = _q(data, "water_content", "110 mg/Sm3", required=False)
    if content is not None:
        value, _ = parse_water_content(content, "water_content")
        lo, hi, _ = WATER_CONTENT_RANGE_KG_PER_SM3
        if not lo < value <= hi:
            raise InputError("water_content", f"water content {content!r} is out of range; allowed: above 0 and up "
                                              f"to {hi * 1e6:g} mg/Sm3")
        out["water_content_kg_per_sm3"] = value
    dew = _q(data, "water_dew_point", "-10 degC", required=False)
    if dew is not None:
        out["water_dew_point_k"] = parse_temperature(dew, "water_dew_point")
    if len(out) == 2:
        raise InputError("water_dew_point", "give the water content or the water dew point, not both")
    return out


def _cold_limits(data: Mapping[str, Any]) -> ColdLimits:
    limit = _q(data, "limit", "-29 degC", required=False)
    mdmt = _q(data, "mdmt", "-46 degC", required=False)
    margin = _q(data, "margin", "5 K", required=False) or "0 K"
    return ColdLimits(mdmt_k=None if mdmt is None else parse_temperature(mdmt, "mdmt"),
                      user_limit_k=None if limit is None else parse_temperature(limit, "limit"),
                      margin_k=parse_temperature_difference(margin, "margin"),
                      mdmt_source="entered" if mdmt is not None else "")


def _material_spec(data: Mapping[str, Any], mdmt_k: float | None) -> MaterialColdSpec | None:
    """The downstream material by its exemption curve ("curve", "thickness", ...; None without them); "mdmt" is then
    its typed limit (the warmer governs).  Its MDMT is found at the outlet pressure."""
    try:
        return MaterialColdSpec.from_options(material_options(data), "material given in the request", mdmt_k)
    except InputError as err:
        raise InputError(MATERIAL_OPTION_OF.get(err.field, err.field), err.message) from None


def _ranges(data: Mapping[str, Any], p_atm_pa: float) -> tuple[float | None, float | None, float | None]:
    """The credible extremes (p_in_max, t_in_min, p_out_min) [Pa, K, Pa], each None when not given (their
    relations to the operating point are the letdown kind's checks, in :func:`compute_letdown`)."""
    text = _q(data, "p_in_max", "120 bara", required=False)
    p_in_max = None if text is None else parse_pressure(text, "p_in_max", p_atm_pa).pa
    text = _q(data, "t_in_min", "0 degC", required=False)
    t_in_min = None if text is None else parse_temperature(text, "t_in_min")
    text = _q(data, "p_out_min", "5 barg", required=False)
    p_out_min = None if text is None else parse_pressure(text, "p_out_min", p_atm_pa).pa
    return p_in_max, t_in_min, p_out_min


def _screening_notes(screening: Screening) -> list[str]:
    notes = []
    if screening.limits.governing_k is None:
        notes.append("no cold limit given ('limit' or 'mdmt'): the outcome is not screened; the findings stand")
    for key, what in (("preheat", "preheat"), ("outlet_pressure_limit", "outlet-pressure limit")):
        part = screening.answers.get(key)
        if part and not part.get("all_converged"):
            notes.append(f"the {what} answer is incomplete: a calculation did not converge for at least one "
                         "condition or model; check the cases listed under screening.answers")
    return notes


@api.route("/letdown", "POST", summary="Compute and screen one letdown without storing it", tag="compute",
           request="LetdownRequest", response="LetdownResponse", errors=(403, 404))
def compute_letdown():
    """Isenthalpic letdown from the inlet state to the outlet pressure, screened for cold hazards.

    The credible conditions (normal; with "t_in_min" and "p_in_max" also the minimum inlet temperature,
    the maximum inlet pressure and both) are let down with the chosen EOS and, unless "compare_models"
    is false, the other of PR and SRK; the colder outlet is screened.  With a range ("p_in_max",
    "t_in_min", "p_out_min") a sweep adds the coldest combination inside it.  "limit" and/or "mdmt"
    (the warmer governs) plus "margin" give the outcome: pass, margin eroded, fail, or not screened
    (no limit, or a calculation did not converge: never pass).  On fail or margin eroded the answers
    give the preheat and the lowest outlet pressure that bring the outlet to limit + margin.
    The generated credible cases are screened too: start-up into a depressured outlet (the atmosphere) from
    every inlet state, always unless "credible_off" switches it off with a reason; loss of the upstream
    heater ("heater_off_t"), minimum ambient ("ambient_t_min") and settle-out ("settle_out_volumes") when
    their inputs are given; screening.answers.generated_cases lists each with its reasoning.
    Nothing is stored.
    """
    require_viewer("compute letdowns")
    data = body()
    unknown_keys(data, _LETDOWN_KEYS)
    if ("fluid" in data) == ("fluid_id" in data):
        raise InputError("fluid", "give either 'fluid' (a composition) or 'fluid_id' (a stored fluid)")
    if "fluid_id" in data:
        fid = data["fluid_id"]
        if isinstance(fid, bool) or not isinstance(fid, int):
            raise InputError("fluid_id", f"must be the integer id of a stored fluid, got {fid!r}")
        if not 1 <= fid <= MAX_ID:
            raise InputError("fluid_id", f"must be the id of a stored fluid, from 1 to {MAX_ID}; got {fid}")
        record = db_session().get(FluidRecord, fid)
        if record is None:
            raise NotFound("fluid", fid, "fluid_id")
        fluid, kij = record.to_fluid(), KijMode(record.kij_mode).value
    else:
        fluid, kij = _fluid_from_spec(data["fluid"])
    p_atm_text = _q(data, "p_atm", "1.01325 bar", required=False)
    p_atm_pa = parse_p_atm(p_atm_text)
    lo, hi, _ = service.P_ATM_RANGE_PA
    if not lo <= p_atm_pa <= hi:
        raise InputError("p_atm", f"atmospheric pressure {p_atm_text} is out of range; allowed: {lo / 1e5:g} to "
                                  f"{hi / 1e5:g} bar")
    p_in_text = _q(data, "p_in", "100 bara")
    t_in_text = _q(data, "t_in", "40 degC")
    p_out_text = _q(data, "p_out", "10 barg")
    p_in = parse_pressure(p_in_text, "p_in", p_atm_pa)
    t_in_k = parse_temperature(t_in_text, "t_in")
    p_out = parse_pressure(p_out_text, "p_out", p_atm_pa)
    check_letdown_inputs(p_in.pa, t_in_k, p_out.pa)
    units = data.get("units") or {}
    if not isinstance(units, Mapping):
        raise InputError("units", "must be an object {\"pressure\": \"barg\", \"temperature\": \"degC\"}")
    unknown_keys(units, ("pressure", "temperature"))
    p_unit = str(units.get("pressure") or canonical_unit(p_in.unit, "pressure"))
    t_unit = str(units.get("temperature") or canonical_unit(unit_word(t_in_text), "temperature"))
    try:
        pressure_from_pa(p_in.pa, p_unit, p_atm_pa)
    except InputError as exc:
        raise InputError("units.pressure", exc.message) from None
    try:
        temperature_from_k(t_in_k, t_unit)
    except InputError as exc:
        raise InputError("units.temperature", exc.message) from None
    limits = _cold_limits(data)
    p_in_max, t_in_min, p_out_min = _ranges(data, p_atm_pa)
    values = letdown_values(p_in_pa=p_in.pa, t_in_k=t_in_k, p_out_pa=p_out.pa, limits=limits, p_atm_pa=p_atm_pa,
                            p_in_max_pa=p_in_max, t_in_min_k=t_in_min, p_out_min_pa=p_out_min,
                            water_saturated=_flag(data, "water_saturated", False),
                            inhibitor=_inhibitor(data.get("inhibitor")), mass_flow_kg_per_s=_mass_flow(
                                data.get("mass_flow")))
    values.update(_generated_inputs(data, p_atm_pa))
    values.update(_water(data))
    relief = _relief_inputs(data, p_atm_pa)
    values.update(relief)
    check_short(values)     # the letdown kind's checks, naming the request's fields
    kind = RELIEF_VALVE if relief else LETDOWN
    if relief:
        try:
            kind.check(values)
        except InputError as err:
            name = err.field.split("[")[0]
            short = {"set_pressure_pa": "set_pressure", "overpressure_fraction": "overpressure",
                     "superimposed_back_pressure_pa": "superimposed_back_pressure",
                     "built_up_back_pressure_pa": "built_up_back_pressure", "header_limit_k": "header_limit",
                     "relieving_temperature_min_k": "relieving_t_min"}.get(name, name)
            raise InputError(short + err.field[len(name):], err.message) from None
    spec = _material_spec(data, limits.mdmt_k)
    if spec is not None:
        values["material_spec"] = spec
    screening = kind.compute(fluid, values, compare_models=_flag(data, "compare_models", True))
    result = screening.conditions[0].results.get(fluid.eos.value)
    if result is None:   # the letdown refused its inputs: answer with its reason (InputError naming the field)
        result = letdown(fluid, p_in=p_in.pa, t_in=t_in_k, p_out=p_out.pa)
    ok = bool(result.converged)
    shown = DisplayUnits(temperature=t_unit, inlet_pressure=p_unit, outlet_pressure=p_unit, p_atm_pa=p_atm_pa)
    p, t, dt = shown.P, shown.T, shown.DT

    gauge = p_in.gauge or p_out.gauge or p_unit.lower().endswith("g")
    notes = []
    if gauge:
        notes.append(f"gauge pressures converted with atmospheric pressure {p_atm_pa / 1e5:.6g} bar "
                     + ("(given)" if p_atm_text else "(default: standard atmosphere)"))
    notes += _screening_notes(screening)
    d = result.to_dict()
    screened = screening.to_dict()
    screened["display"] = key_numbers(screened, shown)
    si = {"p_in_pa": p_in.pa, "t_in_k": t_in_k, "p_out_pa": p_out.pa, "t_out_k": d["t_out"] if ok else None,
          "dt_k": d["dt"] if ok else None, "h_j_per_mol": d["h"], "p_atm_pa": p_atm_pa,
          "p_in_max_pa": p_in_max, "t_in_min_k": t_in_min, "p_out_min_pa": p_out_min}
    display = {"p_in": p(p_in.pa), "t_in": t(t_in_k), "p_out": p(p_out.pa), "t_out": t(d["t_out"] if ok else None),
               "dt": dt(d["dt"] if ok else None), "p_in_max": p(p_in_max), "t_in_min": t(t_in_min),
               "p_out_min": p(p_out_min)}
    words = TextUnits.typed({k: v for k, v in data.items() if isinstance(v, str)}, p_atm_pa)
    if data.get("units"):      # display units asked for: every quantity in them
        words = TextUnits(temperature=t_unit, pressure=p_unit, p_atm_pa=p_atm_pa)
    return jsonify(words.walk({
        "converged": ok, "message": result.message, "phase": result.phase, "inlet_phase": result.inlet_phase,
        "vapor_fraction": d["vapor_fraction"] if ok else None, "inlet_vapor_fraction": d["inlet_vapor_fraction"],
        "warnings": list(result.warnings),
        "outcome": screening.outcome.value, "outcome_sentence": screening.outcome.sentence,
        "si": si, "display": display,
        "fluid": {"composition": {i: float(z) for i, z in zip(fluid.ids, fluid.zs, strict=True)},
                  "eos": fluid.eos.value, "kij": kij},
        "screening": screened, "basis": d["basis"], "notes": notes, "caution": CAUTION}))
