"""The JSON API, ``/api/v1``: token authentication (``Authorization: Bearer <token>``), explicit units.

Every route is registered through :data:`api` (an :class:`~jtcheck.web.openapi.ApiRegistry`) so that it
appears in the OpenAPI document at ``/api/v1/openapi.json``.  Errors are
``{"error": {"field": ..., "message": ...}}`` with 400 (not JSON), 401, 403, 404, 409 or 422.
"""
from __future__ import annotations

import math
import numbers
from collections.abc import Callable, Mapping
from typing import Any

from flask import Blueprint, Response, jsonify, request, url_for

from jtcheck import Fluid, __version__, letdown
from jtcheck.errors import InputError
from jtcheck.letdown.throttle import check_letdown_inputs
from jtcheck.notices import CAUTION
from jtcheck.records import service
from jtcheck.records.errors import NotFound
from jtcheck.records.models import FluidRecord, KijMode
from jtcheck.screening.cold_metal import ColdLimits
from jtcheck.screening.hydrates import Inhibitor
from jtcheck.screening.screen import OperatingRanges, Screening, ScreeningOptions, credible_conditions, screen_letdown
from jtcheck.units import (
    parse_pressure,
    parse_temperature,
    parse_temperature_difference,
    pressure_from_pa,
    temperature_difference_from_k,
    temperature_from_k,
)
from jtcheck.web import api_schemas, removal
from jtcheck.web.caseinput import FieldInputError, api_field, changed_only, convert
from jtcheck.web.database import db_session
from jtcheck.web.errors import ApiError
from jtcheck.web.openapi import ApiRegistry, QueryParam
from jtcheck.web.quantities import MASS_FLOW_UNIT, canonical_unit, parse_p_atm, quantity_text, unit_word
from jtcheck.web.security import require_editor, require_viewer
from jtcheck.web.serialize import audit_json, case_json, fluid_json, material_json, result_json, site_json

bp = Blueprint("api", __name__, url_prefix="/api/v1")
api = ApiRegistry(bp, "jtcheck API", __version__,
                  "Low-temperature screening of pressure letdowns. Quantities carry explicit units; answers give "
                  "SI values (unit in the key) and the same values in the units chosen. " + CAUTION)
api_schemas.register(api)

_CASE_FILTERS = (
    QueryParam("q", "Text in the tag or service description."),
    QueryParam("site_id", "Site id.", {"type": "integer"}),
    QueryParam("unit_id", "Unit id.", {"type": "integer"}),
    QueryParam("kind", "Kind of letdown (control_valve, relief_valve, blowdown_valve, choke, other)."),
    QueryParam("status", "Case status (draft ...)."),
    QueryParam("outcome", "Screening outcome of the latest result, or 'not computed'."),
    QueryParam("limit", "At most this many cases (1-1000, default 500).", {"type": "integer"}),
    QueryParam("offset", "Skip this many cases.", {"type": "integer"}),
)


# -- helpers -------------------------------------------------------------------------------------
def body() -> dict[str, Any]:
    """The request's JSON object; 400 if the body is not JSON or not an object."""
    if not request.is_json:
        raise ApiError(400, "send a JSON object with 'Content-Type: application/json'")
    data = request.get_json(silent=True)
    if not isinstance(data, dict):
        raise ApiError(400, "the body is not a JSON object")
    return data


def _unknown(data: Mapping[str, Any], allowed: tuple[str, ...]) -> None:
    for key in data:
        if key not in allowed:
            raise InputError(str(key), f"unknown field; allowed: {', '.join(allowed)}")


def _field_errors(exc: FieldInputError) -> ApiError:
    field, message = exc.first()
    return ApiError(422, message, field)


def _int_arg(name: str) -> int | None:
    raw = request.args.get(name)
    if raw is None or raw == "":
        return None
    try:
        return int(raw)
    except ValueError:
        raise InputError(name, f"must be an integer, got {raw!r}") from None


def _created(payload: dict[str, Any], location: str) -> Response:
    resp = jsonify(payload)
    resp.status_code = 201
    resp.headers["Location"] = location
    return resp


# -- document ------------------------------------------------------------------------------------
@api.route("/openapi.json", "GET", summary="This OpenAPI document", tag="meta", response="OpenAPI")
def openapi():
    """The OpenAPI 3.1 description of this API, generated from the routes."""
    require_viewer("read the API description")
    return jsonify(api.document(request.host_url.rstrip("/") + bp.url_prefix))


# -- computing without storing -------------------------------------------------------------------
def _fluid_from_spec(spec: Any) -> tuple[Fluid, str]:
    if not isinstance(spec, Mapping):
        raise InputError("fluid", "must be an object {\"composition\": ..., \"eos\": \"PR\", \"kij\": \"table\"}")
    _unknown(spec, ("composition", "eos", "kij"))
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


#: Every key of a letdown request.
_LETDOWN_KEYS = ("fluid", "fluid_id", "p_in", "t_in", "p_out", "p_atm", "units", "limit", "mdmt", "margin",
                 "p_in_max", "t_in_min", "p_out_min", "water_saturated", "inhibitor", "mass_flow", "compare_models")


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


def _cold_limits(data: Mapping[str, Any]) -> ColdLimits:
    limit = _q(data, "limit", "-29 degC", required=False)
    mdmt = _q(data, "mdmt", "-46 degC", required=False)
    margin = _q(data, "margin", "5 K", required=False) or "0 K"
    return ColdLimits(mdmt_k=None if mdmt is None else parse_temperature(mdmt, "mdmt"),
                      user_limit_k=None if limit is None else parse_temperature(limit, "limit"),
                      margin_k=parse_temperature_difference(margin, "margin"),
                      mdmt_source="entered" if mdmt is not None else "")


def _ranges(data: Mapping[str, Any], p_in_pa: float, t_in_k: float, p_out_pa: float, p_atm_pa: float
            ) -> tuple[float | None, float | None, float | None]:
    """The credible extremes (p_in_max, t_in_min, p_out_min) [Pa, K, Pa], each None when not given."""
    text = _q(data, "p_in_max", "120 bara", required=False)
    p_in_max = None if text is None else parse_pressure(text, "p_in_max", p_atm_pa).pa
    text = _q(data, "t_in_min", "0 degC", required=False)
    t_in_min = None if text is None else parse_temperature(text, "t_in_min")
    text = _q(data, "p_out_min", "5 barg", required=False)
    p_out_min = None if text is None else parse_pressure(text, "p_out_min", p_atm_pa).pa
    if p_in_max is not None and p_in_max < p_in_pa:
        raise InputError("p_in_max", f"maximum inlet pressure {p_in_max:g} Pa is below the inlet pressure "
                                     f"{p_in_pa:g} Pa; allowed: >= p_in")
    if t_in_min is not None and t_in_min > t_in_k:
        raise InputError("t_in_min", f"minimum inlet temperature {t_in_min:g} K is above the inlet temperature "
                                     f"{t_in_k:g} K; allowed: <= t_in")
    if p_out_min is not None and p_out_min > p_out_pa:
        raise InputError("p_out_min", f"minimum outlet pressure {p_out_min:g} Pa is above the outlet pressure "
                                      f"{p_out_pa:g} Pa; allowed: <= p_out")
    return p_in_max, t_in_min, p_out_min


def _governing(answers: Mapping[str, Any], key: str) -> Mapping[str, Any]:
    part = answers.get(key)
    gov = part.get("governing") if isinstance(part, Mapping) else None
    return gov if isinstance(gov, Mapping) else {}


def screening_display(screening: Mapping[str, Any], p: Callable[[float | None], dict[str, Any]],
                      t: Callable[[float | None], dict[str, Any]],
                      dt: Callable[[float | None], dict[str, Any]]) -> dict[str, Any]:
    """The key numbers of a screening (``Screening.to_dict()``) in display units, keyed as a stored case
    result's ``screening.display`` is (see :data:`jtcheck.web.api_schemas.SCREENING_DISPLAY`).

    ``p``, ``t`` and ``dt`` turn an SI pressure [Pa abs], temperature [K] and temperature difference [K]
    into ``{"value", "unit"}`` (value None stays None).
    """
    limits = screening.get("limits") or {}
    answers = screening.get("answers") or {}
    preheat = _governing(answers, "preheat")
    pressure = _governing(answers, "outlet_pressure_limit")
    sweep = answers.get("sweep") if isinstance(answers.get("sweep"), Mapping) else {}
    worst = sweep.get("worst") if isinstance(sweep.get("worst"), Mapping) else None
    relief = answers.get("relief_valve") if isinstance(answers.get("relief_valve"), Mapping) else {}
    duty = preheat.get("duty_w")
    return {
        "t_out_min": t(screening.get("t_out_min_k")), "governing_limit": t(limits.get("governing_k")),
        "target": t(limits.get("target_k")), "margin": dt(limits.get("margin_k")), "mdmt": t(limits.get("mdmt_k")),
        "preheat_t_in_required": t(preheat.get("t_in_required_k")),
        "preheat_temperature_rise": dt(preheat.get("temperature_rise_k")),
        "preheat_duty": {"value": None if duty is None else duty / 1e3, "unit": "kW"},
        "outlet_pressure_limit": p(pressure.get("p_out_min_pa")),
        "sweep_worst": None if worst is None else {"t_out": t(worst.get("t_out_k")), "p_in": p(worst.get("p_in_pa")),
                                                   "t_in": t(worst.get("t_in_k")), "p_out": p(worst.get("p_out_pa"))},
        "relief_t_downstream": t(relief.get("t_downstream_k")),
    }


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
    Nothing is stored.
    """
    require_viewer("compute letdowns")
    data = body()
    _unknown(data, _LETDOWN_KEYS)
    if ("fluid" in data) == ("fluid_id" in data):
        raise InputError("fluid", "give either 'fluid' (a composition) or 'fluid_id' (a stored fluid)")
    if "fluid_id" in data:
        fid = data["fluid_id"]
        if isinstance(fid, bool) or not isinstance(fid, int):
            raise InputError("fluid_id", f"must be the integer id of a stored fluid, got {fid!r}")
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
        raise InputError("p_atm", f"atmospheric pressure {p_atm_pa:g} Pa is out of range; allowed: {lo:g} to {hi:g} Pa")
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
    _unknown(units, ("pressure", "temperature"))
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
    p_in_max, t_in_min, p_out_min = _ranges(data, p_in.pa, t_in_k, p_out.pa, p_atm_pa)
    ranges = OperatingRanges((p_in.pa, p_in_max or p_in.pa), (t_in_min or t_in_k, t_in_k),
                             (p_out_min or p_out.pa, p_out.pa))
    options = ScreeningOptions(limits=limits, compare_models=_flag(data, "compare_models", True),
                               water_saturated=True if _flag(data, "water_saturated", False) else None,
                               inhibitor=_inhibitor(data.get("inhibitor")), mass_flow_kg_per_s=_mass_flow(
                                   data.get("mass_flow")), ranges=ranges if ranges.varies else None)
    screening = screen_letdown(fluid, credible_conditions(p_in.pa, t_in_k, p_out.pa, p_in_max, t_in_min), options)
    result = screening.conditions[0].results.get(fluid.eos.value)
    if result is None:   # the letdown refused its inputs: answer with its reason (InputError naming the field)
        result = letdown(fluid, p_in=p_in.pa, t_in=t_in_k, p_out=p_out.pa)
    ok = bool(result.converged)
    dt_unit = "degF" if t_unit.lower() in ("degf", "f") else "K"

    def p(pa: float | None) -> dict[str, Any]:
        return {"value": pressure_from_pa(pa, p_unit, p_atm_pa) if pa is not None else None, "unit": p_unit}

    def t(k: float | None) -> dict[str, Any]:
        return {"value": temperature_from_k(k, t_unit) if k is not None else None, "unit": t_unit}

    def dt(dk: float | None) -> dict[str, Any]:
        return {"value": temperature_difference_from_k(dk, dt_unit) if dk is not None else None, "unit": dt_unit}

    gauge = p_in.gauge or p_out.gauge or p_unit.lower().endswith("g")
    notes = []
    if gauge:
        notes.append(f"gauge pressures converted with atmospheric pressure {p_atm_pa / 1e5:.6g} bar "
                     + ("(given)" if p_atm_text else "(default: standard atmosphere)"))
    notes += _screening_notes(screening)
    d = result.to_dict()
    screened = screening.to_dict()
    screened["display"] = screening_display(screened, p, t, dt)
    si = {"p_in_pa": p_in.pa, "t_in_k": t_in_k, "p_out_pa": p_out.pa, "t_out_k": d["t_out"] if ok else None,
          "dt_k": d["dt"] if ok else None, "h_j_per_mol": d["h"], "p_atm_pa": p_atm_pa,
          "p_in_max_pa": p_in_max, "t_in_min_k": t_in_min, "p_out_min_pa": p_out_min}
    display = {"p_in": p(p_in.pa), "t_in": t(t_in_k), "p_out": p(p_out.pa), "t_out": t(d["t_out"] if ok else None),
               "dt": dt(d["dt"] if ok else None), "p_in_max": p(p_in_max), "t_in_min": t(t_in_min),
               "p_out_min": p(p_out_min)}
    return jsonify({
        "converged": ok, "message": result.message, "phase": result.phase, "inlet_phase": result.inlet_phase,
        "vapor_fraction": d["vapor_fraction"] if ok else None, "inlet_vapor_fraction": d["inlet_vapor_fraction"],
        "warnings": list(result.warnings),
        "outcome": screening.outcome.value, "outcome_sentence": screening.outcome.sentence,
        "si": si, "display": display,
        "fluid": {"composition": {i: float(z) for i, z in zip(fluid.ids, fluid.zs, strict=True)},
                  "eos": fluid.eos.value, "kij": kij},
        "screening": screened, "basis": d["basis"], "notes": notes, "caution": CAUTION})


# -- cases ---------------------------------------------------------------------------------------
def _case_or_404(case_id: int):
    user = require_viewer("view cases")
    return user, service.get_case(db_session(), user, case_id)


@api.route("/cases", "GET", summary="List cases", tag="cases", response="CaseList", query=_CASE_FILTERS,
           errors=(403, 422))
def list_cases():
    """Cases matching every filter given, by site, unit and tag."""
    user = require_viewer("view cases")
    session = db_session()
    limit = _int_arg("limit")
    cases = service.list_cases(
        session, user, site_id=_int_arg("site_id"), unit_id=_int_arg("unit_id"), kind=request.args.get("kind") or None,
        status=request.args.get("status") or None, outcome=request.args.get("outcome") or None,
        text=request.args.get("q") or None, limit=500 if limit is None else limit, offset=_int_arg("offset") or 0)
    latest = service.latest_results(session, [c.id for c in cases])
    return jsonify({"count": len(cases), "cases": [case_json(c, latest.get(c.id)) for c in cases]})


@api.route("/cases", "POST", summary="Create a case", tag="cases", request="CaseInput", response="Case", status=201,
           errors=(403, 409))
def create_case():
    """A new draft case; quantities with units (e.g. "72 barg"), stored in SI with the units kept for display."""
    user = require_editor("create cases")
    data = body()
    try:
        case = service.create_case(db_session(), user, convert(data))
    except FieldInputError as exc:
        raise _field_errors(exc) from None
    except InputError as exc:
        raise api_field(exc) from None
    return _created(case_json(case), url_for("api.get_case", case_id=case.id))


@api.route("/cases/<int:case_id>", "GET", summary="One case", tag="cases", response="Case", errors=(403, 404))
def get_case(case_id: int):
    """A case with its inputs in SI and in the units entered, and a summary of its latest result."""
    _, case = _case_or_404(case_id)
    # only the latest result (one row), not every stored result of the case
    latest = service.latest_results(db_session(), [case.id]).get(case.id)
    return jsonify(case_json(case, latest, service.result_is_current(case, latest) if latest else None))


@api.route("/cases/<int:case_id>", "PATCH", summary="Change a case's inputs", tag="cases", request="CasePatch",
           response="Case", errors=(403, 404, 409))
def update_case(case_id: int):
    """Only the fields sent are changed; send "version" to be refused (409) if someone saved in between."""
    user = require_editor("edit case inputs")
    data = body()
    session = db_session()
    version = data.pop("version", None)
    if version is not None and (isinstance(version, bool) or not isinstance(version, int)):
        raise InputError("version", f"must be the integer version you edited, got {version!r}")
    case = service.get_case(session, user, case_id)
    try:
        values = convert(data, current=case)
        case = service.update_case(session, user, case_id, changed_only(case, values), expected_version=version)
    except FieldInputError as exc:
        raise _field_errors(exc) from None
    except InputError as exc:
        raise api_field(exc) from None
    return jsonify(case_json(case))


@api.route("/cases/<int:case_id>", "DELETE", summary="Delete a case", tag="cases", status=204, errors=(403, 404))
def delete_case(case_id: int):
    """Admins may delete any case; engineers only drafts.  Stored results go with it; the audit log keeps a line."""
    user = require_editor("delete cases")
    removal.delete_case(db_session(), user, case_id)
    return Response(status=204)


@api.route("/cases/<int:case_id>/compute", "POST", summary="Compute a case and store the result", tag="cases",
           response="Result", status=201, errors=(403, 404))
def compute_case(case_id: int):
    """Every credible condition of the case (normal, minimum inlet temperature, maximum inlet pressure, both)."""
    user = require_viewer("compute cases")
    result = service.compute_case(db_session(), user, case_id)
    return _created(result_json(result, True), url_for("api.case_results", case_id=case_id))


@api.route("/cases/<int:case_id>/results", "GET", summary="Stored results of a case", tag="cases",
           response="ResultList", errors=(403, 404))
def case_results(case_id: int):
    """Newest first; "current" tells whether a result was computed from the case and fluid as stored now."""
    _, case = _case_or_404(case_id)
    return jsonify({"results": [result_json(r, service.result_is_current(case, r)) for r in reversed(case.results)]})


@api.route("/cases/<int:case_id>/audit", "GET", summary="Audit history of a case", tag="cases", response="AuditList",
           errors=(403, 404))
def case_audit(case_id: int):
    """Who changed what and when, oldest first."""
    user, case = _case_or_404(case_id)
    entries = service.audit_trail(db_session(), user, "case", case.id)
    return jsonify({"entries": [audit_json(e) for e in entries]})


# -- fluids --------------------------------------------------------------------------------------
_FLUID_KEYS = ("name", "composition", "eos", "kij", "notes")


def _fluid_values(data: Mapping[str, Any]) -> dict[str, Any]:
    _unknown(data, _FLUID_KEYS)
    out = {k: v for k, v in data.items() if k in ("name", "composition", "eos", "notes")}
    if "composition" in out and isinstance(out["composition"], list):
        if not all(isinstance(p, list | tuple) and len(p) == 2 for p in out["composition"]):
            raise InputError("composition", "a list must hold [name, amount] pairs")
        out["composition"] = [tuple(p) for p in out["composition"]]
    if "kij" in data:
        out["kij_mode"] = data["kij"]
    return out


def _fluid_or_404(fluid_id: int) -> FluidRecord:
    # the records service has no get_fluid; the role was checked by the caller
    record = db_session().get(FluidRecord, fluid_id)
    if record is None:
        raise NotFound("fluid", fluid_id)
    return record


@api.route("/fluids", "GET", summary="List fluids", tag="fluids", response="FluidList", errors=(403,))
def list_fluids():
    """Every stored fluid, by name."""
    user = require_viewer("view fluids")
    return jsonify({"fluids": [fluid_json(f) for f in service.list_fluids(db_session(), user)]})


@api.route("/fluids", "POST", summary="Create a fluid", tag="fluids", request="FluidInput", response="Fluid",
           status=201, errors=(403, 409))
def create_fluid():
    """A named composition with its equation of state and kij set."""
    user = require_editor("create fluids")
    values = _fluid_values(body())
    if "name" not in values or "composition" not in values:
        raise InputError("name" if "name" not in values else "composition", "required")
    record = service.create_fluid(db_session(), user, values["name"], values["composition"],
                                  values.get("eos", "PR"), values.get("kij_mode", "table"), values.get("notes", ""))
    return _created(fluid_json(record), url_for("api.get_fluid", fluid_id=record.id))


@api.route("/fluids/<int:fluid_id>", "GET", summary="One fluid", tag="fluids", response="Fluid", errors=(403, 404))
def get_fluid(fluid_id: int):
    """A stored fluid."""
    require_viewer("view fluids")
    return jsonify(fluid_json(_fluid_or_404(fluid_id)))


@api.route("/fluids/<int:fluid_id>", "PATCH", summary="Change a fluid", tag="fluids", request="FluidPatch",
           response="Fluid", errors=(403, 404, 409))
def update_fluid(fluid_id: int):
    """Results already stored keep the fluid they were computed with."""
    user = require_editor("edit fluids")
    record = service.update_fluid(db_session(), user, fluid_id, _fluid_values(body()))
    return jsonify(fluid_json(record))


@api.route("/fluids/<int:fluid_id>", "DELETE", summary="Delete a fluid no case uses", tag="fluids", status=204,
           errors=(403, 404, 409))
def delete_fluid(fluid_id: int):
    """Refused with 409 while a case uses the fluid."""
    user = require_editor("delete fluids")
    removal.delete_fluid(db_session(), user, fluid_id)
    return Response(status=204)


# -- reference data ------------------------------------------------------------------------------
@api.route("/materials", "GET", summary="List materials and their minimum metal temperatures", tag="reference",
           response="MaterialList", errors=(403,))
def list_materials():
    """Coldest limit first.  Shipped entries are typical values to verify against the applicable code."""
    user = require_viewer("view materials")
    return jsonify({"materials": [material_json(m) for m in service.list_materials(db_session(), user)]})


@api.route("/sites", "GET", summary="List sites and their units", tag="reference", response="SiteList",
           errors=(403,))
def list_sites():
    """Sites with their units (a case belongs to a unit)."""
    user = require_viewer("view sites")
    return jsonify({"sites": [site_json(s) for s in service.list_sites(db_session(), user)]})
