"""The case register through the API: cases (list, create, read, change, delete), computing a case, its stored
results and its audit history."""
from __future__ import annotations

from typing import Any

from flask import Response, jsonify, request, url_for
from sqlalchemy import func, select
from sqlalchemy.orm import Session, defer

from jtcheck.errors import InputError
from jtcheck.records import service
from jtcheck.records.models import CaseResult, CaseRevision
from jtcheck.web import removal
from jtcheck.web.api.blueprint import (
    ID_SCHEMA,
    PAGE_PARAMS,
    api,
    body,
    created,
    field_errors,
    int_arg,
    page_args,
    page_json,
    patch_version,
)
from jtcheck.web.api.openapi import QueryParam
from jtcheck.web.api.serialize import (
    audit_json,
    case_json,
    result_json,
)
from jtcheck.web.cases.inputs import FieldInputError, api_field, changed_only, convert
from jtcheck.web.database import db_session
from jtcheck.web.security import require_editor, require_viewer

_CASE_FILTERS = (
    QueryParam("q", "Text in the tag or service description."),
    QueryParam("site_id", "Site id.", ID_SCHEMA),
    QueryParam("unit_id", "Unit id.", ID_SCHEMA),
    QueryParam("kind", "Kind of letdown (control_valve, relief_valve, blowdown_valve, choke, other)."),
    QueryParam("status", "Case status (draft ...)."),
    QueryParam("outcome", "Screening outcome of the latest result, or 'not computed'."),
    *PAGE_PARAMS,
)


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
    limit, offset = page_args()
    cases = service.list_cases(
        session, user, site_id=int_arg("site_id"), unit_id=int_arg("unit_id"), kind=request.args.get("kind") or None,
        status=request.args.get("status") or None, outcome=request.args.get("outcome") or None,
        text=request.args.get("q") or None, limit=limit, offset=offset)
    ids = [c.id for c in cases]
    latest = service.latest_results(session, ids)
    revisions = _current_revisions(session, ids)
    return jsonify(page_json("cases", [case_json(c, latest.get(c.id), revision=revisions.get(c.id)) for c in cases],
                             limit, offset))


@api.route("/cases", "POST", summary="Create a case", tag="cases", request="CaseInput", response="Case", status=201,
           errors=(403, 409))
def create_case():
    """A new draft case; quantities with units (e.g. "72 barg"), stored in SI with the units kept for display."""
    user = require_editor("create cases")
    data = body()
    try:
        case = service.create_case(db_session(), user, convert(data))
    except FieldInputError as exc:
        raise field_errors(exc) from None
    except InputError as exc:
        raise api_field(exc) from None
    return created(_case_answer(case), url_for("api.get_case", case_id=case.id))


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
    """Only the fields sent are changed; "version" (the version you edited) is required, and a save made by someone
    else in between is refused (409, naming the fields changed since and who changed them).

    Refused (403) while the case's current calculation record is in review (for check, checked, for
    approval): reject it first.  A change to a case whose current record is issued (approved, superseded,
    voided) opens the next revision, a draft; the issued record stays as it was.
    """
    user = require_editor("edit case inputs")
    data = body()
    session = db_session()
    case = service.get_case(session, user, case_id)
    version = patch_version(data)
    try:
        values = convert(data, current=case)
        case = service.update_case(session, user, case_id, changed_only(case, values), expected_version=version)
    except FieldInputError as exc:
        raise field_errors(exc) from None
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
    return created(result_json(result, True), url_for("api.case_results", case_id=case_id))


@api.route("/cases/<int:case_id>/results", "GET", summary="Stored results of a case", tag="cases",
           response="ResultList", query=PAGE_PARAMS, errors=(403, 404, 422))
def case_results(case_id: int):
    """Newest first, a page at a time (default 20); "current" tells whether a result was computed from the case and
    fluid as stored now."""
    _, case = _case_or_404(case_id)
    limit, offset = page_args(default=20)
    session = db_session()
    total = session.scalar(select(func.count()).select_from(CaseResult).where(CaseResult.case_id == case.id)) or 0
    rows = session.scalars(select(CaseResult).where(CaseResult.case_id == case.id).order_by(CaseResult.id.desc())
                           .limit(limit).offset(offset))
    return jsonify(page_json("results", [result_json(r, service.result_is_current(case, r)) for r in rows],
                             limit, offset, total))


@api.route("/cases/<int:case_id>/audit", "GET", summary="Audit history of a case", tag="cases", response="AuditList",
           query=PAGE_PARAMS, errors=(403, 404, 422))
def case_audit(case_id: int):
    """Who changed what and when, oldest first, a page at a time."""
    user, case = _case_or_404(case_id)
    limit, offset = page_args()
    entries = service.audit_trail(db_session(), user, "case", case.id)
    return jsonify(page_json("entries", [audit_json(e) for e in entries[offset:offset + limit]], limit, offset,
                             len(entries)))
