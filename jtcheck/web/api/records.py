"""Calculation records through the API: the revisions of a case and their review steps, the signed record PDFs,
the review steps themselves (submit, check, send for approval, approve, reject, void), the trust root and the
verification of a record file."""
from __future__ import annotations

from typing import Any

from flask import Response, current_app, jsonify, request, url_for
from sqlalchemy import func, select
from sqlalchemy.orm import Session

from jtcheck.errors import InputError
from jtcheck.records import workflow
from jtcheck.records.models import CaseRevision, User
from jtcheck.records.snapshot import record_number
from jtcheck.reports.issue import FullVerification, verify_against_register
from jtcheck.web.api.blueprint import api, body, unknown_keys
from jtcheck.web.api.serialize import (
    revision_json,
)
from jtcheck.web.database import db_session
from jtcheck.web.downloads import attachment
from jtcheck.web.errors import ApiError
from jtcheck.web.records import signer
from jtcheck.web.security import require_editor, require_viewer


# -- calculation records ---------------------------------------------------------------------------
def _review_body(*keys: str) -> dict[str, Any]:
    """The optional JSON body of a review step: only ``keys`` are allowed; no body at all is ``{}``."""
    if not request.get_data(cache=True):
        return {}
    data = body()
    unknown_keys(data, keys)
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
