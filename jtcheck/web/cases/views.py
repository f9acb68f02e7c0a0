"""Pages of the case register: case list, case form, case and result views, audit history, sites and units.

The case page itself (:mod:`jtcheck.web.case_page`) also shows the review of its calculation records
(:mod:`jtcheck.web.records.review`): the current revision, the steps the user may take, the revisions with
their record PDFs and the review steps.
A case whose current record is in review cannot be edited: its edit page says so instead of offering the form.
"""
from __future__ import annotations

from typing import Any

from flask import Blueprint, flash, redirect, render_template, request, url_for
from sqlalchemy import select

from jtcheck.cases import form_sections
from jtcheck.errors import InputError
from jtcheck.records import service, workflow
from jtcheck.records.case_inputs import field_value
from jtcheck.records.demo import SITE_NAME as DEMO_SITE_NAME
from jtcheck.records.errors import ConcurrentEditError, NotFound, UnderReview
from jtcheck.records.models import Case, CaseKind, RevisionStatus
from jtcheck.units import TextUnits, parse_pressure, pressure_from_pa
from jtcheck.web import removal
from jtcheck.web.case_page import render_case_page
from jtcheck.web.cases.inputs import (
    HYDRATE_INHIBITORS,
    INPUT_FIELDS,
    LIST_FIELDS,
    SCREENING_FIELDS,
    FieldInputError,
    changed_only,
    convert,
    field_message,
    form_field,
    list_text,
)
from jtcheck.web.cases.results import (
    NOT_COMPUTED,
    OUTCOMES,
    conditions_of,
    outcome_of,
    units_of,
)
from jtcheck.web.database import db_session
from jtcheck.web.forms import FormState
from jtcheck.web.quantities import (
    CASE_QUANTITIES,
    P_ATM_CHOICES,
    display_unit,
    input_number,
    p_atm_unit_for,
    to_display,
)
from jtcheck.web.security import current_user, require_editor, require_viewer

bp = Blueprint("cases", __name__)

_TEXT_FIELDS = ("tag", "service", "kind", "unit_id", "fluid_id", "material_id", "basis", "references")
#: The kinds' list inputs the form shows as text areas (one item a line).
_LIST_FIELDS = tuple(k for k in LIST_FIELDS if k in INPUT_FIELDS)
CASE_FORM_FIELDS = (*_TEXT_FIELDS, *_LIST_FIELDS, *(q.name for q in CASE_QUANTITIES),
                    *(f"{q.name}_unit" for q in CASE_QUANTITIES),
                    "p_atm", "p_atm_unit", *SCREENING_FIELDS, "version")
#: Values of the outcome filter of the case list.
OUTCOME_FILTERS = (*OUTCOMES, NOT_COMPUTED)


# -- helpers -------------------------------------------------------------------------------------
def _choices(user) -> dict[str, Any]:
    session = db_session()
    return {"sites": service.list_sites(session, user), "fluids": service.list_fluids(session, user),
            "materials": service.list_materials(session, user), "kinds": list(CaseKind)}


def _allowed_units(case: Case | None) -> dict[str, list[str]]:
    """The unit choices of each quantity field: the usual ones, plus any unit the stored case was entered in."""
    out = {q.name: list(q.choices) for q in CASE_QUANTITIES}
    out["p_atm"] = list(P_ATM_CHOICES)
    if case is not None:
        for q in CASE_QUANTITIES:
            unit = (case.display_units or {}).get(q.name)
            if unit and unit not in out[q.name]:
                out[q.name].append(unit)
    return out


def _revision_notices(case: Case | None) -> dict[str, str | None]:
    """``frozen``: why the case cannot be edited now (its record is in review); ``reissue``: what saving a change
    does to an issued record (opens the next revision)."""
    out: dict[str, str | None] = {"frozen": None, "reissue": None}
    if case is None:
        return out
    current = workflow.current_revision(db_session(), case.id)
    if current is None:
        return out
    status = RevisionStatus(current.status)
    if status.under_review:
        out["frozen"] = str(UnderReview("edit case inputs", current.label, status.value))
    elif status.issued:
        out["reissue"] = (f"Revision {current.label} of this case is {status.value}. Saving a change opens the next "
                          "revision, a draft, which has to be computed, checked and approved again.")
    return out


def _form_words(form: FormState) -> TextUnits:
    """The units the form's quantities are typed in: its error messages quote values and ranges in them."""
    typed = {q.name: form.get(f"{q.name}_unit") for q in CASE_QUANTITIES if form.get(f"{q.name}_unit")}
    try:
        p_atm_pa = parse_pressure(f"{form.get('p_atm')} {form.get('p_atm_unit')}", "p_atm").pa
    except InputError:
        p_atm_pa = None
    return TextUnits.typed(typed, p_atm_pa)


def _render_form(form: FormState, user, case: Case | None, status: int = 200):
    return render_template("cases/form.html", form=form, case=case, quantities=CASE_QUANTITIES,
                           words=_form_words(form),
                           kind_sections=form_sections(), unit_options=_allowed_units(case),
                           demo_site_name=DEMO_SITE_NAME, **_revision_notices(case), **_choices(user)), status


def _new_form() -> FormState:
    values = {"kind": CaseKind.CONTROL_VALVE.value, "p_atm": "1.01325", "p_atm_unit": "bar", "water_saturated": "",
              "hydrate_inhibitor": HYDRATE_INHIBITORS[0]}
    for q in CASE_QUANTITIES:
        values[f"{q.name}_unit"] = q.default_unit
    return FormState.of(values)


def _form_of(case: Case) -> FormState:
    shown = dict(case.display_units or {})
    values = {"tag": case.tag, "service": case.service, "kind": CaseKind(case.kind).value,
              "unit_id": str(case.unit_id), "fluid_id": str(case.fluid_id),
              "material_id": "" if case.material_id is None else str(case.material_id),
              "basis": case.basis, "references": case.references, "version": str(case.version),
              "water_saturated": "on" if case.water_saturated else "",
              "hydrate_inhibitor": case.hydrate_inhibitor or HYDRATE_INHIBITORS[0]}
    for q in CASE_QUANTITIES:
        unit = display_unit(q, shown)
        values[q.name] = input_number(to_display(q, field_value(case, q.key), unit, case.p_atm_pa))
        values[f"{q.name}_unit"] = unit
    p_unit = p_atm_unit_for(shown)
    values["p_atm"] = input_number(pressure_from_pa(case.p_atm_pa, p_unit))
    values["p_atm_unit"] = p_unit
    for name in _LIST_FIELDS:
        values[name] = list_text(name, field_value(case, name), shown, case.p_atm_pa)
    return FormState.of(values)


def _raw_from_form(form: FormState, allowed_units: dict[str, list[str]]) -> dict[str, Any]:
    """The posted case as the mapping :func:`jtcheck.web.cases.inputs.convert` takes (quantities as "72 barg")."""
    raw: dict[str, Any] = {k: form.get(k) for k in (*_TEXT_FIELDS, *SCREENING_FIELDS, *_LIST_FIELDS)}
    for name in (*(q.name for q in CASE_QUANTITIES), "p_atm"):
        value, unit = form.get(name).strip(), form.get(f"{name}_unit").strip()
        if not value and not unit:     # an optional field the form did not send
            raw[name] = None
            continue
        if unit not in allowed_units[name]:
            form.add(name, f"{unit!r} is not offered; choose a unit from the list ({', '.join(allowed_units[name])})")
            continue
        raw[name] = f"{value} {unit}" if value else None
    return raw


def _apply_input_error(form: FormState, exc: InputError) -> None:
    field, message = form_field(exc.field), field_message(exc.field, _form_words(form).text(exc.message))
    base = field.split("[")[0].split(".")[0]
    if base != field and base in CASE_FORM_FIELDS:   # an item of a list input: shown at the list
        field, message = base, f"{field}: {message}"
    if field in CASE_FORM_FIELDS:
        form.add(field, message)
    else:
        form.general.append(f"{field}: {message}")


def _case(case_id: int) -> Case:
    return service.get_case(db_session(), require_viewer("view cases"), case_id)


# -- list ------------------------------------------------------------------------------------------
_FILTERS = ("q", "site_id", "unit_id", "kind", "status", "outcome")
#: Cases on one page of the case list.
CASES_PER_PAGE = 50


def _int_filter(name: str, form: FormState) -> int | None:
    raw = form.get(name).strip()
    if not raw:
        return None
    if not raw.isdigit():
        form.add(name, "choose one from the list")
        return None
    return int(raw)


@bp.route("/")
def home():
    return redirect(url_for("cases.index"))


@bp.route("/cases")
def index():
    user = require_viewer("view cases")
    session = db_session()
    form = FormState(values={k: request.args.get(k, "") for k in _FILTERS})
    kind = form.get("kind") or None
    if kind is not None and kind not in {k.value for k in CaseKind}:
        form.add("kind", "choose one from the list")
        kind = None
    filters = {"site_id": _int_filter("site_id", form), "unit_id": _int_filter("unit_id", form), "kind": kind,
               "status": form.get("status") or None, "outcome": form.get("outcome") or None,
               "text": form.get("q") or None}
    raw_page = request.args.get("page", "1").strip()
    page = int(raw_page) if raw_page.isdigit() and 1 <= int(raw_page) <= 100_000 else 1
    try:   # one case more than a page: whether there is a next page
        cases = service.list_cases(session, user, **filters, limit=CASES_PER_PAGE + 1,
                                   offset=(page - 1) * CASES_PER_PAGE)
    except InputError as exc:
        form.add({"text": "q"}.get(exc.field, exc.field), exc.message)
        cases = []
    has_next = len(cases) > CASES_PER_PAGE
    cases = cases[:CASES_PER_PAGE]
    latest = service.latest_results(session, [c.id for c in cases])
    rows = []
    for c in cases:
        r = latest.get(c.id)
        conds = conditions_of(r) if r is not None else []
        margins = [x.margin_to_cold_limit_k for x in conds if x.margin_to_cold_limit_k is not None]
        outcome = outcome_of(r)
        rows.append({"case": c, "result": r, "units": units_of(r) if r is not None else None,
                     "min_margin": min(margins) if margins else None,
                     "not_screened": any(not x.converged for x in conds), "outcome": outcome})
    statuses = [s.value for s in RevisionStatus]
    statuses += sorted(set(session.scalars(select(Case.status).distinct())) - set(statuses))   # older statuses
    args = {k: v for k, v in request.args.items() if k in _FILTERS and v}
    return render_template("cases/list.html", rows=rows, form=form, sites=service.list_sites(session, user),
                           kinds=list(CaseKind), statuses=statuses, outcomes=OUTCOME_FILTERS,
                           can_edit=service.can_edit_cases(user), page=page, has_next=has_next, args=args,
                           first=(page - 1) * CASES_PER_PAGE + 1)


# -- create and edit -------------------------------------------------------------------------------
@bp.route("/cases/new", methods=["GET", "POST"])
def new():
    user = require_editor("create cases")
    if request.method == "GET":
        return _render_form(_new_form(), user, None)
    form = FormState.from_request(CASE_FORM_FIELDS)
    raw = _raw_from_form(form, _allowed_units(None))
    if form.ok:
        try:
            case = service.create_case(db_session(), user, convert(raw, form=True))
        except FieldInputError as exc:
            for k, v in exc.errors.items():
                form.add(k, _form_words(form).text(v))
        except InputError as exc:
            _apply_input_error(form, exc)
        else:
            flash(f"Case {case.tag} saved (draft). Compute it to see the outlet state.")
            return redirect(url_for("cases.view", case_id=case.id))
    return _render_form(form, user, None, 422)


@bp.route("/cases/<int:case_id>/edit", methods=["GET", "POST"])
def edit(case_id: int):
    user = require_editor("edit case inputs")
    session = db_session()
    case = service.get_case(session, user, case_id)
    if request.method == "GET":
        return _render_form(_form_of(case), user, case)
    form = FormState.from_request(CASE_FORM_FIELDS)
    if _revision_notices(case)["frozen"]:
        return _render_form(form, user, case, 403)     # the page says why; the service would refuse the same
    raw = _raw_from_form(form, _allowed_units(case))
    version_text = form.get("version").strip()
    if not version_text.isdigit():
        form.general.append("the form lost its version number; reload the case and edit again")
    if form.ok:
        try:
            values = convert(raw, current=case, form=True)
            changes = changed_only(case, values)
            if not changes:
                flash("Nothing changed.")
                return redirect(url_for("cases.view", case_id=case.id))
            case = service.update_case(session, user, case_id, changes, expected_version=int(version_text))
        except FieldInputError as exc:
            for k, v in exc.errors.items():
                form.add(k, _form_words(form).text(v))
        except ConcurrentEditError as exc:
            form.general.append(str(exc))
            return _render_form(form, user, service.get_case(session, user, case_id), 409)
        except UnderReview:           # submitted for check meanwhile: the form page shows why
            return _render_form(form, user, service.get_case(session, user, case_id), 403)
        except InputError as exc:
            _apply_input_error(form, exc)
        else:
            flash(f"Case {case.tag} saved (version {case.version}).")
            return redirect(url_for("cases.view", case_id=case.id))
    return _render_form(form, user, case, 422)


@bp.route("/cases/<int:case_id>/delete", methods=["POST"])
def delete(case_id: int):
    user = require_editor("delete cases")
    case = service.get_case(db_session(), user, case_id)
    tag = case.tag
    removal.delete_case(db_session(), user, case_id)
    flash(f"Case {tag} deleted.")
    return redirect(url_for("cases.index"))


# -- view, compute, results, history ---------------------------------------------------------------
@bp.route("/cases/<int:case_id>")
def view(case_id: int):
    return render_case_page(_case(case_id))


@bp.route("/cases/<int:case_id>/compute", methods=["POST"])
def compute(case_id: int):
    user = require_viewer("compute cases")
    result = service.compute_case(db_session(), user, case_id)
    flash("Computed." if result.converged else "Computed, but not every condition converged: see below.")
    return redirect(url_for("cases.result", case_id=case_id, result_id=result.id))


@bp.route("/cases/<int:case_id>/results/<int:result_id>")
def result(case_id: int, result_id: int):
    case = _case(case_id)
    res = service.get_result(db_session(), current_user(), result_id)
    if res.case_id != case.id:
        raise NotFound("result", result_id)
    return render_case_page(case, res)


@bp.route("/cases/<int:case_id>/history")
def history(case_id: int):
    case = _case(case_id)
    entries = service.audit_trail(db_session(), current_user(), "case", case.id)
    return render_template("cases/history.html", case=case, entries=entries)


# -- sites and units -------------------------------------------------------------------------------
@bp.route("/sites")
def sites():
    user = require_viewer("view sites")
    return render_template("cases/sites.html", sites=service.list_sites(db_session(), user), form=FormState(),
                           unit_form=FormState(), can_edit=service.can_edit_cases(user))


@bp.route("/sites/new", methods=["POST"])
def new_site():
    user = require_editor("create sites")
    form = FormState.from_request(("name", "description"))
    try:
        site = service.create_site(db_session(), user, form.get("name"), form.get("description"))
    except InputError as exc:
        form.add(exc.field, exc.message)
        return render_template("cases/sites.html", sites=service.list_sites(db_session(), user), form=form,
                               unit_form=FormState(), can_edit=True), 409 if "already exists" in exc.message else 422
    flash(f"Site {site.name} added.")
    return redirect(url_for("cases.sites"))


@bp.route("/sites/units/new", methods=["POST"])
def new_unit():
    user = require_editor("create units")
    form = FormState.from_request(("site_id", "unit_name", "unit_description"))
    site_id = form.get("site_id")
    try:
        unit = service.create_unit(db_session(), user, int(site_id) if site_id.isdigit() else site_id,
                                   form.get("unit_name"), form.get("unit_description"))
    except InputError as exc:
        form.add({"name": "unit_name", "description": "unit_description"}.get(exc.field, exc.field), exc.message)
        return render_template("cases/sites.html", sites=service.list_sites(db_session(), user), form=FormState(),
                               unit_form=form, can_edit=True), 409 if "already" in exc.message else 422
    flash(f"Unit {unit.name} added.")
    return redirect(url_for("cases.sites"))
