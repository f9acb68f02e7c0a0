"""The JSON API, ``/api/v1``: token authentication (``Authorization: Bearer <token>``), explicit units.

Every route is registered through :data:`api` (an :class:`~jtcheck.web.api.openapi.ApiRegistry`) so that it
appears in the OpenAPI document at ``/api/v1/openapi.json``.  Errors are
``{"error": {"field": ..., "message": ...}}`` with 400 (not JSON), 401, 403, 404, 409, 413 or 422.

Calculation records (:mod:`jtcheck.records.workflow`): ``/cases/<id>/revisions[/<rev>[/record.pdf]]`` to
read them, ``POST /cases/<id>/{submit,check,send-for-approval,approve,reject,void}`` for the review steps
on the case's current revision (each answered with the revision), ``/trust-root.pem`` and
``POST /records/verify`` to check a signed record.
"""
from __future__ import annotations

import math
import numbers
from collections.abc import Mapping
from typing import Any

from flask import Blueprint, Response, current_app, jsonify, request, url_for
from sqlalchemy import func, select
from sqlalchemy.orm import Session, defer

from jtcheck import Fluid, __version__, letdown
from jtcheck.errors import InputError
from jtcheck.letdown.throttle import check_letdown_inputs
from jtcheck.notices import CAUTION
from jtcheck.records import service, workflow
from jtcheck.records.errors import NotFound
from jtcheck.records.models import CaseRevision, FluidRecord, KijMode, User
from jtcheck.records.snapshot import record_number
from jtcheck.reports.issue import FullVerification, verify_against_register
from jtcheck.reports.screening_display import DisplayUnits, key_numbers
from jtcheck.screening.cold_metal import ColdLimits
from jtcheck.screening.hydrates import Inhibitor
from jtcheck.screening.screen import OperatingRanges, Screening, ScreeningOptions, credible_conditions, screen_letdown
from jtcheck.units import (
    parse_pressure,
    parse_temperature,
    parse_temperature_difference,
    pressure_from_pa,
    temperature_from_k,
)
from jtcheck.web import removal
from jtcheck.web.api import schemas
from jtcheck.web.api.openapi import ApiRegistry, QueryParam
from jtcheck.web.api.serialize import (
    audit_json,
    case_json,
    fluid_json,
    material_json,
    result_json,
    revision_json,
    site_json,
)
from jtcheck.web.cases.inputs import FieldInputError, api_field, changed_only, convert
from jtcheck.web.database import db_session
from jtcheck.web.downloads import attachment
from jtcheck.web.errors import ApiError
from jtcheck.web.quantities import MASS_FLOW_UNIT, canonical_unit, parse_p_atm, quantity_text, unit_word
from jtcheck.web.records import signer
from jtcheck.web.security import require_editor, require_viewer

bp = Blueprint("api", __name__, url_prefix="/api/v1")
api = ApiRegistry(bp, "jtcheck API", __version__,
                  "Low-temperature screening of pressure letdowns. Quantities carry explicit units; answers give "
                  "SI values (unit in the key) and the same values in the units chosen. Each case has "
                  "calculation records (revisions A, B ...; numbered 0, 1 ... when approved) that go through a "
                  "four-eyes review and are issued as signed PDFs. " + CAUTION)
schemas.register(api)

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


def _current_revisions(session: Session, case_ids: list[int]) -> dict[int, CaseRevision]:
    """The current (latest) revision of each case that has one (one query, without the PDFs and snapshots)."""
    if not case_ids:
        return {}
    latest = (select(func.max(CaseRevision.id)).where(CaseRevision.case_id.in_(case_ids))
              .group_by(CaseRevision.case_id))
    rows = session.scalars(select(CaseRevision).where(CaseRevision.id.in_(latest))
                           .options(defer(CaseRevision.record_pdf), defer(CaseRevision.snapshot)))
    return {r.case_id: r for r in rows}


def _case_answer(case, latest=None, current: bool | None = None) -> dict[str, Any]:
    """:func:`case_json` with the case's current revision read without its PDF."""
    return case_json(case, latest, current, revision=_current_revisions(db_session(), [case.id]).get(case.id))


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
    ids = [c.id for c in cases]
    latest = service.latest_results(session, ids)
    revisions = _current_revisions(session, ids)
    return jsonify({"count": len(cases), "cases": [case_json(c, latest.get(c.id), revision=revisions.get(c.id))
                                                   for c in cases]})


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
    return _created(_case_answer(case), url_for("api.get_case", case_id=case.id))


@api.route("/cases/<int:case_id>", "GET", summary="One case", tag="cases", response="Case", errors=(403, 404))
def get_case(case_id: int):
    """A case with its inputs in SI and in the units entered, and a summary of its latest result."""
    _, case = _case_or_404(case_id)
    # only the latest result (one row), not every stored result of the case
    latest = service.latest_results(db_session(), [case.id]).get(case.id)
    return jsonify(_case_answer(case, latest, service.result_is_current(case, latest) if latest else None))


@api.route("/cases/<int:case_id>", "PATCH", summary="Change a case's inputs", tag="cases", request="CasePatch",
           response="Case", errors=(403, 404, 409))
def update_case(case_id: int):
    """Only the fields sent are changed; send "version" to be refused (409) if someone saved in between.

    Refused (403) while the case's current calculation record is in review (for check, checked, for
    approval): reject it first.  A change to a case whose current record is issued (approved, superseded,
    voided) opens the next revision, a draft; the issued record stays as it was.
    """
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
    return jsonify(_case_answer(case))


@api.route("/cases/<int:case_id>", "DELETE", summary="Delete a case", tag="cases", status=204,
           errors=(403, 404, 409))
def delete_case(case_id: int):
    """Admins may delete any case; engineers only drafts.  Stored results go with it; the audit log keeps a line.

    A case with an issued calculation record (approved, superseded or voided), or whose current record is in
    review, is not deleted (409).
    """
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


# -- calculation records ---------------------------------------------------------------------------
def _review_body(*keys: str) -> dict[str, Any]:
    """The optional JSON body of a review step: only ``keys`` are allowed; no body at all is ``{}``."""
    if not request.get_data(cache=True):
        return {}
    data = body()
    _unknown(data, keys)
    return data


def _is_current(session: Session, revision: CaseRevision) -> bool:
    latest = session.scalar(select(func.max(CaseRevision.id)).where(CaseRevision.case_id == revision.case_id))
    return latest == revision.id


def _revision_answer(revision: CaseRevision, status: int = 200) -> Response:
    """A revision with its review steps (the answer of a review step and of GET .../revisions/<rev>)."""
    session = db_session()
    user = require_viewer("view calculation records")
    steps = workflow.revision_steps(session, user, revision.case_id, revision.label)
    resp = jsonify(revision_json(revision, steps, current=_is_current(session, revision)))
    resp.status_code = status
    if status == 201:
        resp.headers["Location"] = url_for("api.get_case_revision", case_id=revision.case_id, rev=revision.label)
    return resp


@api.route("/cases/<int:case_id>/revisions", "GET", summary="Calculation records (revisions) of a case",
           tag="records", response="RevisionList", errors=(403, 404))
def list_case_revisions(case_id: int):
    """Oldest first; the last is the case's current revision (its status is the case's status).

    A revision is labelled by its letter ("A", "B" ...) until approved, then by its number ("0" for the
    case's first approved revision, then "1" ...); both find it in the URL.
    """
    user = require_viewer("view calculation records")
    revisions = workflow.list_revisions(db_session(), user, case_id)
    last = revisions[-1].id if revisions else None
    return jsonify({"case_id": case_id, "record_number": record_number(case_id),
                    "revisions": [revision_json(r, current=r.id == last) for r in revisions]})


@api.route("/cases/<int:case_id>/revisions", "POST", summary="Open the next revision of an issued case",
           tag="records", request="ReviewComment", request_required=False, response="Revision", status=201,
           errors=(403, 404, 409))
def open_case_revision(case_id: int):
    """Open the next draft revision when the current one is issued (approved, superseded or voided), without
    editing the case (e.g. after a void, or to report a new computation).  Editing an issued case's inputs
    does this by itself.  Engineers and admins; 409 if the current revision is not issued."""
    user = require_editor("open a new revision")
    data = _review_body("comment")
    revision = workflow.new_revision(db_session(), user, case_id, data.get("comment") or "")
    return _revision_answer(revision, 201)


#: The revision in a URL.
_REV = {"rev": "The revision: its number once approved (\"0\", \"1\" ...) or its letter (\"A\", also after it was "
               "numbered)."}


@api.route("/cases/<int:case_id>/revisions/<rev>", "GET", summary="One calculation record with its review steps",
           tag="records", response="Revision", errors=(403, 404), path_help=_REV)
def get_case_revision(case_id: int, rev: str):
    """``rev`` is the revision's number once approved ("0") or its letter ("A", which keeps working after)."""
    user = require_viewer("view calculation records")
    return _revision_answer(workflow.get_revision(db_session(), user, case_id, rev))


@api.route("/cases/<int:case_id>/revisions/<rev>/record.pdf", "GET", summary="The signed record PDF of a revision",
           tag="records", response_media="application/pdf", errors=(403, 404), path_help=_REV)
def revision_record(case_id: int, rev: str):
    """The record with every signature given so far (the preparer's from submission, then the checker's and the
    approver's, each an incremental update): the bytes whose SHA-256 is the revision's ``record_sha256``.
    404 while the revision has no record (a draft).  Verify it with the trust root (``/trust-root.pem``)."""
    user = require_viewer("view calculation records")
    revision = workflow.get_revision(db_session(), user, case_id, rev)
    pdf = revision.record_pdf
    if pdf is None:
        raise ApiError(404, f"revision {revision.label} of case {case_id} has no record yet (it is "
                            f"{revision.status!s}); the record is made when the revision is submitted for check")
    resp = attachment(bytes(pdf), "application/pdf", f"{record_number(case_id)}-rev-{revision.label}.pdf")
    resp.headers["ETag"] = f'"{revision.record_sha256}"'
    return resp


def _sign(req: workflow.SigningRequest) -> bytes:
    """The workflow's signing callback: the app's signer, set up only when a signature is due."""
    return signer.app_signer()(req)


def _reviewer() -> User:
    return require_viewer("review calculation records")   # the workflow checks the roles of each step


def _comment_body() -> str:
    return _review_body("comment").get("comment", "")


def _reason_body() -> Any:
    return _review_body("reason").get("reason")   # required: the workflow names "reason" (422) when missing


_STEP_ERRORS = (403, 404, 409)


@api.route("/cases/<int:case_id>/submit", "POST", summary="Submit the current revision for check (preparer signs)",
           tag="records", request="ReviewComment", request_required=False, response="Revision", errors=_STEP_ERRORS)
def submit_case(case_id: int):
    """draft -> for check.  Engineers and admins; the caller becomes the preparer.  Freezes the case and its
    current result and makes the record PDF, signed by the preparer.  422 (field "result") if the case has no
    result computed from its inputs as they are now; 409 if the current revision is not a draft."""
    user = _reviewer()
    return _revision_answer(workflow.submit_for_check(db_session(), user, case_id, _sign, _comment_body()))


@api.route("/cases/<int:case_id>/check", "POST", summary="Check the current revision (checker signs)",
           tag="records", request="ReviewComment", request_required=False, response="Revision", errors=_STEP_ERRORS)
def check_case(case_id: int):
    """for check -> checked.  Checkers, approvers and admins, never the preparer (four-eyes rule: 403)."""
    user = _reviewer()
    return _revision_answer(workflow.check(db_session(), user, case_id, _sign, _comment_body()))


@api.route("/cases/<int:case_id>/send-for-approval", "POST", summary="Send the checked revision for approval",
           tag="records", request="ReviewComment", request_required=False, response="Revision", errors=_STEP_ERRORS)
def send_case_for_approval(case_id: int):
    """checked -> for approval (no signature).  The preparer, the checker, or an admin."""
    user = _reviewer()
    return _revision_answer(workflow.send_for_approval(db_session(), user, case_id, _comment_body()))


@api.route("/cases/<int:case_id>/approve", "POST", summary="Approve the current revision (approver signs)",
           tag="records", request="ReviewComment", request_required=False, response="Revision", errors=_STEP_ERRORS)
def approve_case(case_id: int):
    """for approval -> approved.  Approvers and admins, neither the preparer nor the checker (four-eyes rule:
    403).  The revision gets the case's next number (0 first) and an earlier approved revision is superseded."""
    user = _reviewer()
    return _revision_answer(workflow.approve(db_session(), user, case_id, _sign, _comment_body()))


@api.route("/cases/<int:case_id>/reject", "POST", summary="Send the revision in review back to draft",
           tag="records", request="ReviewReason", response="Revision", errors=_STEP_ERRORS)
def reject_case(case_id: int):
    """for check, checked or for approval -> draft; "reason" is required (422).  Checkers, approvers and admins,
    or the preparer (withdrawing it).  The snapshot and the record signed so far are discarded."""
    user = _reviewer()
    return _revision_answer(workflow.reject(db_session(), user, case_id, _reason_body()))


@api.route("/cases/<int:case_id>/void", "POST", summary="Void the case's approved revision", tag="records",
           request="ReviewReason", response="Revision", errors=_STEP_ERRORS)
def void_case(case_id: int):
    """approved -> voided; "reason" is required (422).  Approvers and admins.  The record itself is kept as it
    was; the answer is the voided revision."""
    user = _reviewer()
    return _revision_answer(workflow.void(db_session(), user, case_id, _reason_body()))


@api.route("/trust-root.pem", "GET", summary="The trust root that signed records chain to", tag="records",
           response_media="application/x-pem-file", errors=(403,))
def trust_root():
    """The instance's CA certificate (PEM): give it to a PDF reader or to ``jtcheck record verify`` to check
    the signatures of a record."""
    require_viewer("download the trust root")
    return attachment(signer.trust_root_pem(), "application/x-pem-file", "jtcheck-trust-root.pem")


#: Largest record PDF ``/records/verify`` reads (config ``RECORD_UPLOAD_MAX_BYTES``, as the verify page).
RECORD_VERIFY_MAX_BYTES = 20 * 1024 * 1024


def verification_json(result: FullVerification) -> dict[str, Any]:
    sigs = result.signatures
    reg = result.register

    def iso(value) -> str | None:
        return value.isoformat() if value is not None else None

    return {
        "ok": result.ok, "signatures_ok": sigs.ok, "file_sha256": sigs.file_sha256, "revisions": sigs.revisions,
        "signatures": [{"field": c.field, "role": c.role, "signer_name": c.signer_name, "signer_email": c.signer_email,
                        "signed_at": iso(c.signed_at), "timestamp_at": iso(c.timestamp_at),
                        "timestamp_trusted": c.timestamp_trusted, "intact": c.intact, "trusted": c.trusted,
                        "trusted_at_timestamp": c.trusted_at_timestamp, "covers_whole_file": c.covers_whole_file,
                        "modified_after": c.modified_after, "problems": list(c.problems)} for c in sigs.signatures],
        "register": {"found": reg.found, "record_number": reg.record_number, "revision": reg.revision,
                     "status": reg.status, "case_id": reg.case_id, "snapshot_sha256": reg.snapshot_sha256,
                     "message": reg.message},
        "problems": list(sigs.problems) + [p for p in result.problems if p not in sigs.problems],
    }


@api.route("/records/verify", "POST", summary="Verify a record PDF: signatures and register", tag="records",
           request_media="application/pdf", response="RecordVerification", errors=(403, 413))
def verify_record_pdf():
    """Send the PDF as the body (``Content-Type: application/pdf``).  Every signature is checked against this
    instance's trust root (intact, trusted, nothing changed after it) and the file's SHA-256 against the
    register.  "ok" only when all of that holds; "problems" says what does not, in plain words."""
    require_viewer("verify calculation records")
    request.max_content_length = int(current_app.config.get("RECORD_UPLOAD_MAX_BYTES") or RECORD_VERIFY_MAX_BYTES)
    if request.mimetype != "application/pdf":
        raise ApiError(400, "send the record as the body with 'Content-Type: application/pdf'", "Content-Type")
    pdf = request.get_data(cache=False)
    if not pdf:
        raise InputError("pdf", "the body is empty: send the record PDF")
    result = verify_against_register(db_session(), pdf, [signer.trust_root_pem()])
    return jsonify(verification_json(result))
