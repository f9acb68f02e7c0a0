"""The JSON API of the calculation records: revisions, the four-eyes review and the signed PDF records.

The records are signed for real (the app's instance PKI in the test's instance folder) and verified with
the trust root the API publishes.
"""
from __future__ import annotations

import hashlib
import json

import pytest
from openapi_spec_validator import validate
from sqlalchemy import select
from web_helpers import case_body, count

from jtcheck.records.models import AuditEntry, Case, CaseResult, CaseRevision, ReviewStep, Role
from jtcheck.records.snapshot import record_number
from jtcheck.reports.verify import verify_record
from jtcheck.web.database import db_session

E, C, A, ADMIN = Role.ENGINEER, Role.CHECKER, Role.APPROVER, Role.ADMIN
PDF = "application/pdf"


# -- helpers -------------------------------------------------------------------------------------------------
def new_case(api, world, compute: bool = True, **overrides) -> int:
    """A case made by the engineer (and computed, unless told not to)."""
    resp = api(E, "POST", "/api/v1/cases", json=case_body(world, mdmt="-46 degC", **overrides))
    assert resp.status_code == 201, resp.get_json()
    case_id = resp.get_json()["id"]
    if compute:
        assert api(E, "POST", f"/api/v1/cases/{case_id}/compute").status_code == 201
    return case_id


def step(api, role, case_id: int, name: str, expect: int = 200, **body):
    """POST a review step; check its status code; the JSON answer."""
    resp = api(role, "POST", f"/api/v1/cases/{case_id}/{name}", json=body or None)
    assert resp.status_code == expect, (name, resp.status_code, resp.get_json())
    return resp.get_json()


def revision(api, case_id: int, label: str, role=Role.CHECKER) -> dict:
    resp = api(role, "GET", f"/api/v1/cases/{case_id}/revisions/{label}")
    assert resp.status_code == 200, resp.get_json()
    return resp.get_json()


def record_bytes(api, case_id: int, label: str) -> bytes:
    resp = api(C, "GET", f"/api/v1/cases/{case_id}/revisions/{label}/record.pdf")
    assert resp.status_code == 200, resp.get_json()
    assert resp.mimetype == PDF
    return resp.data


def stored(app, case_id: int) -> dict:
    """Everything a refused step must leave as it was: the case row, its revisions, steps, audit and results."""
    with app.app_context():
        s = db_session()
        case = s.get(Case, case_id)
        revs = s.scalars(select(CaseRevision).where(CaseRevision.case_id == case_id).order_by(CaseRevision.id)).all()
        return {"case": (case.status, case.version),
                "revisions": [(r.letter, r.number, str(r.status), r.version, r.record_sha256, r.snapshot_sha256,
                               r.preparer_id, r.checker_id, r.approver_id) for r in revs],
                "steps": count(app, ReviewStep), "audit": count(app, AuditEntry), "results": count(app, CaseResult)}


@pytest.fixture(scope="module")
def trust_root(api) -> bytes:
    resp = api(C, "GET", "/api/v1/trust-root.pem")
    assert resp.status_code == 200
    return resp.data


@pytest.fixture(scope="module")
def issued(api, world):
    """One case taken through the whole review with the three users' tokens: the answer of each step."""
    case_id = new_case(api, world)
    before = api(C, "GET", f"/api/v1/cases/{case_id}").get_json()
    draft_pdf = api(C, "GET", f"/api/v1/cases/{case_id}/revisions/A/record.pdf")
    answers = {"case_before": before, "draft_pdf": draft_pdf}
    answers["submit"] = step(api, E, case_id, "submit", comment="ready for check")
    answers["pdf_submitted"] = record_bytes(api, case_id, "A")
    answers["check"] = step(api, C, case_id, "check", comment="checked against the P&ID")
    answers["send"] = step(api, C, case_id, "send-for-approval")
    answers["approve"] = step(api, A, case_id, "approve", comment="issued for construction")
    answers["pdf"] = record_bytes(api, case_id, "0")
    return case_id, answers


# -- the whole review ------------------------------------------------------------------------------------------
def test_a_new_case_has_draft_revision_a_without_a_record(issued):
    case_id, answers = issued
    case = answers["case_before"]
    assert case["status"] == "draft"
    assert case["current_revision"]["label"] == "A" and case["current_revision"]["status"] == "draft"
    assert "record_pdf" not in case["current_revision"]["links"]
    assert case["links"]["revisions"] == f"/api/v1/cases/{case_id}/revisions"
    missing = answers["draft_pdf"]
    assert missing.status_code == 404 and missing.mimetype == "application/json"
    assert "no record yet" in missing.get_json()["error"]["message"]


def test_each_step_answers_with_the_revision(issued, world):
    case_id, answers = issued
    submitted = answers["submit"]
    assert submitted["label"] == "A" and submitted["status"] == "for check" and submitted["under_review"]
    assert submitted["prepared_by"]["name"] == "Engineer User" and submitted["checked_by"] is None
    assert submitted["record_sha256"] == hashlib.sha256(answers["pdf_submitted"]).hexdigest()
    assert submitted["snapshot_sha256"] and submitted["submitted_at"] and submitted["current"] is True
    assert submitted["links"]["record_pdf"] == f"/api/v1/cases/{case_id}/revisions/A/record.pdf"
    assert [s["action"] for s in submitted["steps"]] == ["create", "submit"]
    assert submitted["steps"][-1]["comment"] == "ready for check"

    checked = answers["check"]
    assert checked["status"] == "checked" and checked["checked_by"]["email"] == world.emails[C]
    assert checked["record_sha256"] != submitted["record_sha256"]     # the checker's signature was added
    assert checked["snapshot_sha256"] == submitted["snapshot_sha256"]
    assert answers["send"]["status"] == "for approval"

    approved = answers["approve"]
    assert approved["status"] == "approved" and approved["issued"] and not approved["under_review"]
    assert approved["label"] == "0" and approved["number"] == 0 and approved["letter"] == "A"
    assert approved["approved_by"]["name"] == "Approver User" and approved["approved_at"]
    assert approved["record_number"] == record_number(case_id)
    assert approved["links"]["self"] == f"/api/v1/cases/{case_id}/revisions/0"
    assert [(s["action"], s["to_status"], s["user"]["email"]) for s in approved["steps"]] == [
        ("create", "draft", world.emails[E]), ("submit", "for check", world.emails[E]),
        ("check", "checked", world.emails[C]), ("send for approval", "for approval", world.emails[C]),
        ("approve", "approved", world.emails[A])]
    assert approved["steps"][-1]["comment"] == "issued for construction"


def test_the_approved_record_verifies_with_the_published_trust_root(api, issued, trust_root, world):
    case_id, answers = issued
    pdf = answers["pdf"]
    approved = revision(api, case_id, "0")
    assert approved["record_sha256"] == hashlib.sha256(pdf).hexdigest()
    assert pdf.startswith(answers["pdf_submitted"])          # signatures are incremental updates
    assert trust_root.startswith(b"-----BEGIN CERTIFICATE-----")

    result = verify_record(pdf, [trust_root])
    assert result.ok, result.problems
    assert len(result.signatures) == 3
    assert all(sig.intact and sig.trusted and not sig.modified_after for sig in result.signatures)
    assert [sig.role for sig in result.signatures] == ["preparer", "checker", "approver"]
    assert [sig.signer_email for sig in result.signatures] == [world.emails[E], world.emails[C], world.emails[A]]
    assert result.file_sha256 == approved["record_sha256"]


def test_record_download_headers(api, issued):
    case_id, answers = issued
    resp = api(E, "GET", f"/api/v1/cases/{case_id}/revisions/0/record.pdf")
    assert resp.status_code == 200 and resp.mimetype == PDF
    assert resp.headers["ETag"] == f'"{hashlib.sha256(resp.data).hexdigest()}"'
    assert f'filename="{record_number(case_id)}-rev-0.pdf"' in resp.headers["Content-Disposition"]
    # the letter still finds the numbered revision: same record
    assert record_bytes(api, case_id, "A") == resp.data
    assert revision(api, case_id, "a")["label"] == "0"


def test_case_json_shows_the_current_revision(api, issued):
    case_id, _ = issued
    case = api(C, "GET", f"/api/v1/cases/{case_id}").get_json()
    assert case["status"] == "approved"
    current = case["current_revision"]
    assert current["label"] == "0" and current["status"] == "approved" and current["number"] == 0
    assert current["links"]["record_pdf"] == f"/api/v1/cases/{case_id}/revisions/0/record.pdf"
    listed = api(C, "GET", "/api/v1/cases", query_string={"status": "approved"}).get_json()["cases"]
    mine = [c for c in listed if c["id"] == case_id]
    assert mine and mine[0]["current_revision"] == current
    assert all("current_revision" in c and "links" in c for c in
               api(C, "GET", "/api/v1/cases").get_json()["cases"])


def test_revision_list(api, issued):
    case_id, _ = issued
    body = api(Role.APPROVER, "GET", f"/api/v1/cases/{case_id}/revisions").get_json()
    assert body["case_id"] == case_id and body["record_number"] == record_number(case_id)
    revs = body["revisions"]
    assert [(r["label"], r["status"], r["current"]) for r in revs] == [("0", "approved", True)]
    first = revs[0]
    for key in ("prepared_by", "checked_by", "approved_by", "submitted_at", "checked_at", "approved_at",
                "record_sha256", "snapshot_sha256", "links"):
        assert first[key], key
    assert "steps" not in first


def test_register_verification_endpoint(api, issued):
    case_id, answers = issued
    resp = api(C, "POST", "/api/v1/records/verify", data=answers["pdf"], content_type=PDF)
    assert resp.status_code == 200, resp.get_json()
    report = resp.get_json()
    assert report["ok"] is True and report["signatures_ok"] is True and report["problems"] == []
    assert len(report["signatures"]) == 3 and all(s["intact"] and s["trusted"] for s in report["signatures"])
    assert report["register"]["found"] and report["register"]["revision"] == "0"
    assert report["register"]["case_id"] == case_id
    assert report["file_sha256"] == hashlib.sha256(answers["pdf"]).hexdigest()

    # the record signed by the preparer only: its signature holds, but it is no longer the stored record
    partial = api(C, "POST", "/api/v1/records/verify", data=answers["pdf_submitted"], content_type=PDF).get_json()
    assert partial["signatures_ok"] is True and partial["ok"] is False
    assert not partial["register"]["found"] and partial["problems"]

    tampered = answers["pdf"] + b"\n% appended after signing\n"
    bad = api(C, "POST", "/api/v1/records/verify", data=tampered, content_type=PDF).get_json()
    assert bad["ok"] is False and bad["problems"]


def test_register_verification_refuses_what_is_not_a_pdf_body(api):
    resp = api(C, "POST", "/api/v1/records/verify", json={"pdf": "x"})
    assert resp.status_code == 400 and resp.get_json()["error"]["field"] == "Content-Type"
    resp = api(C, "POST", "/api/v1/records/verify", data=b"", content_type=PDF)
    assert resp.status_code == 422 and resp.get_json()["error"]["field"] == "pdf"
    resp = api(C, "POST", "/api/v1/records/verify", data=b"not a pdf at all", content_type=PDF)
    assert resp.status_code == 200 and resp.get_json()["ok"] is False
    assert api(None, "POST", "/api/v1/records/verify", data=b"%PDF-", content_type=PDF).status_code == 401


def test_register_verification_takes_records_larger_than_a_json_body(app, api, issued, monkeypatch):
    _, answers = issued
    big = answers["pdf"] + b"%" + b"x" * (2 * 1024 * 1024) + b"\n"     # over the app's 1 MiB JSON limit
    resp = api(C, "POST", "/api/v1/records/verify", data=big, content_type=PDF)
    assert resp.status_code == 200 and resp.get_json()["ok"] is False
    monkeypatch.setitem(app.config, "RECORD_UPLOAD_MAX_BYTES", 1024)
    resp = api(C, "POST", "/api/v1/records/verify", data=answers["pdf"], content_type=PDF)
    assert resp.status_code == 413 and resp.get_json()["error"]["message"]


def test_trust_root_needs_a_token(api, trust_root):
    resp = api(E, "GET", "/api/v1/trust-root.pem")
    assert resp.status_code == 200 and resp.mimetype == "application/x-pem-file" and resp.data == trust_root
    assert api(None, "GET", "/api/v1/trust-root.pem").status_code == 401


# -- refusals ---------------------------------------------------------------------------------------------------
def test_four_eyes_refusals_change_nothing(app, api, world):
    # the admin prepares and then tries to check their own record
    case_id = new_case(api, world)
    step(api, ADMIN, case_id, "submit")
    before = stored(app, case_id)
    error = step(api, ADMIN, case_id, "check", 403, comment="self-check")["error"]
    assert "four-eyes rule" in error["message"] and "checker must not be the preparer" in error["message"]
    assert stored(app, case_id) == before

    # the approver checks; then may not approve what they checked
    step(api, A, case_id, "check")
    step(api, A, case_id, "send-for-approval")
    before = stored(app, case_id)
    error = step(api, A, case_id, "approve", 403)["error"]
    assert "four-eyes rule" in error["message"] and "approver must not be the checker" in error["message"]
    assert stored(app, case_id) == before
    # nor may the admin, who prepared it
    error = step(api, ADMIN, case_id, "approve", 403)["error"]
    assert "four-eyes rule" in error["message"] and "approver must not be the preparer" in error["message"]
    assert stored(app, case_id) == before
    assert revision(api, case_id, "A")["status"] == "for approval"


def test_roles_that_may_not_take_a_step_are_refused(app, api, world):
    case_id = new_case(api, world)
    before = stored(app, case_id)
    assert "allowed roles" in step(api, C, case_id, "submit", 403)["error"]["message"]
    assert stored(app, case_id) == before
    step(api, E, case_id, "submit")
    before = stored(app, case_id)
    for role, name in ((E, "check"), (C, "approve"), (E, "approve")):
        assert step(api, role, case_id, name, 403)["error"]["message"]
    assert step(api, C, case_id, "void", 403, reason="no")["error"]["message"]
    assert stored(app, case_id) == before


def test_reject_needs_a_reason_and_sends_the_revision_back_to_draft(app, api, world):
    case_id = new_case(api, world)
    step(api, E, case_id, "submit")
    before = stored(app, case_id)
    for body in (None, {}, {"reason": ""}, {"reason": "   "}, {"reason": 7}):
        resp = api(C, "POST", f"/api/v1/cases/{case_id}/reject", json=body)
        assert resp.status_code == 422, (body, resp.get_json())
        assert resp.get_json()["error"]["field"] == "reason"
    resp = api(C, "POST", f"/api/v1/cases/{case_id}/reject", json={"reason": "x", "comment": "y"})
    assert resp.status_code == 422 and resp.get_json()["error"]["field"] == "comment"
    assert stored(app, case_id) == before

    rejected = step(api, C, case_id, "reject", reason="wrong fluid")
    assert rejected["status"] == "draft" and rejected["label"] == "A"
    assert rejected["record_sha256"] is None and rejected["prepared_by"] is None
    assert "record_pdf" not in rejected["links"]
    assert rejected["steps"][-1]["action"] == "reject" and rejected["steps"][-1]["comment"] == "wrong fluid"
    assert api(C, "GET", f"/api/v1/cases/{case_id}/revisions/A/record.pdf").status_code == 404
    # a draft again: the case may be edited
    resp = api(E, "PATCH", f"/api/v1/cases/{case_id}", json={"inlet_pressure": "65 barg",
                                                          "version": case_version(api, case_id)})
    assert resp.status_code == 200 and resp.get_json()["current_revision"]["label"] == "A"


def test_steps_in_the_wrong_state_are_409(app, api, world):
    case_id = new_case(api, world)
    before = stored(app, case_id)
    for name, body in (("check", {}), ("send-for-approval", {}), ("approve", {}), ("reject", {"reason": "r"}),
                       ("void", {"reason": "r"})):
        role = A if name in ("approve", "void") else C
        error = step(api, role, case_id, name, 409, **body)["error"]
        assert "draft" in error["message"] or "no approved revision" in error["message"], (name, error)
    resp = api(E, "POST", f"/api/v1/cases/{case_id}/revisions")
    assert resp.status_code == 409
    assert stored(app, case_id) == before

    step(api, E, case_id, "submit")
    before = stored(app, case_id)
    error = step(api, E, case_id, "submit", 409)["error"]
    assert "'for check'" in error["message"]
    assert step(api, C, case_id, "send-for-approval", 409)["error"]["message"]
    assert step(api, A, case_id, "approve", 409)["error"]["message"]
    assert stored(app, case_id) == before


def test_a_signing_failure_stores_nothing(app, api, world, monkeypatch, caplog):
    from jtcheck.web.records import signer as records_pki

    case_id = new_case(api, world)
    before = stored(app, case_id)
    monkeypatch.setattr(records_pki, "app_signer", lambda: lambda request: b"not a PDF")
    resp = api(E, "POST", f"/api/v1/cases/{case_id}/submit")
    assert resp.status_code == 500 and "could not be signed" in resp.get_json()["error"]["message"]
    assert stored(app, case_id) == before

    def broken():
        raise RuntimeError("hsm offline: secret=hunter2")

    monkeypatch.setattr(records_pki, "app_signer", broken)
    resp = api(E, "POST", f"/api/v1/cases/{case_id}/submit")
    assert resp.status_code == 500 and "hunter2" not in resp.get_data(as_text=True)
    assert stored(app, case_id) == before
    assert "hunter2" in caplog.text


def test_submit_needs_a_current_result(app, api, world):
    case_id = new_case(api, world, compute=False)
    before = stored(app, case_id)
    error = step(api, E, case_id, "submit", 422)["error"]
    assert error["field"] == "result" and "compute" in error["message"]
    assert stored(app, case_id) == before


def test_step_bodies_are_checked(api, world):
    case_id = new_case(api, world, compute=False)
    resp = api(E, "POST", f"/api/v1/cases/{case_id}/submit", data="comment=x", content_type="text/plain")
    assert resp.status_code == 400
    resp = api(E, "POST", f"/api/v1/cases/{case_id}/submit", json={"colour": "red"})
    assert resp.status_code == 422 and resp.get_json()["error"]["field"] == "colour"
    resp = api(E, "POST", f"/api/v1/cases/{case_id}/submit", json={"comment": ["x"]})
    assert resp.status_code == 422 and resp.get_json()["error"]["field"] == "comment"


def test_missing_cases_and_revisions_are_404(api, issued):
    case_id, _ = issued
    for path in ("/api/v1/cases/999999/revisions", "/api/v1/cases/999999/revisions/A",
                 f"/api/v1/cases/{case_id}/revisions/Z", f"/api/v1/cases/{case_id}/revisions/7",
                 f"/api/v1/cases/{case_id}/revisions/A-1", f"/api/v1/cases/{case_id}/revisions/Z/record.pdf"):
        resp = api(C, "GET", path)
        assert resp.status_code == 404, path
        assert resp.get_json()["error"]["message"]
    for name in ("submit", "check", "send-for-approval", "approve"):
        assert api(ADMIN, "POST", f"/api/v1/cases/999999/{name}").status_code == 404


def case_version(api, case_id: int) -> int:
    return api(E, "GET", f"/api/v1/cases/{case_id}").get_json()["version"]


def test_a_case_under_review_cannot_be_edited(app, api, world):
    case_id = new_case(api, world)
    step(api, E, case_id, "submit")
    before = stored(app, case_id)
    resp = api(E, "PATCH", f"/api/v1/cases/{case_id}", json={"inlet_pressure": "60 barg",
                                                          "version": case_version(api, case_id)})
    assert resp.status_code == 403
    message = resp.get_json()["error"]["message"]
    assert "revision A of this case is 'for check'" in message and "inputs are frozen" in message
    assert stored(app, case_id) == before


# -- after issue ------------------------------------------------------------------------------------------------
def test_editing_an_issued_case_opens_revision_b_and_keeps_revision_0(app, api, world):
    case_id = new_case(api, world)
    step(api, E, case_id, "submit")
    step(api, C, case_id, "check")
    step(api, E, case_id, "send-for-approval")
    step(api, A, case_id, "approve")
    issued_pdf = record_bytes(api, case_id, "0")
    issued = revision(api, case_id, "0")

    resp = api(E, "PATCH", f"/api/v1/cases/{case_id}", json={"inlet_pressure": "72 barg",
                                                          "version": case_version(api, case_id)})
    assert resp.status_code == 200, resp.get_json()
    case = resp.get_json()
    assert case["status"] == "draft"
    assert case["current_revision"]["label"] == "B" and case["current_revision"]["status"] == "draft"

    revs = api(C, "GET", f"/api/v1/cases/{case_id}/revisions").get_json()["revisions"]
    assert [(r["label"], r["status"], r["current"]) for r in revs] == [("0", "approved", False), ("B", "draft", True)]
    assert record_bytes(api, case_id, "0") == issued_pdf
    after = revision(api, case_id, "0")
    assert {k: v for k, v in after.items() if k != "current"} == {k: v for k, v in issued.items() if k != "current"}
    assert api(C, "GET", f"/api/v1/cases/{case_id}/revisions/B/record.pdf").status_code == 404

    # an issued case is never deleted, not even by an admin
    resp = api(ADMIN, "DELETE", f"/api/v1/cases/{case_id}")
    assert resp.status_code == 409 and "issued" in resp.get_json()["error"]["message"]

    # revision 0 may be voided (the draft B stays the current revision); the record stays as it was
    voided = step(api, A, case_id, "void", reason="superseded by a site survey")
    assert voided["label"] == "0" and voided["status"] == "voided" and voided["closed_at"]
    assert voided["current"] is False and voided["steps"][-1]["comment"] == "superseded by a site survey"
    assert record_bytes(api, case_id, "0") == issued_pdf
    assert api(C, "GET", f"/api/v1/cases/{case_id}").get_json()["current_revision"]["label"] == "B"


def test_a_new_revision_without_an_edit(app, api, world):
    case_id = new_case(api, world)
    for role, name in ((E, "submit"), (C, "check"), (C, "send-for-approval"), (A, "approve")):
        step(api, role, case_id, name)
    step(api, A, case_id, "void", reason="withdrawn")
    assert api(C, "POST", f"/api/v1/cases/{case_id}/revisions").status_code == 403
    resp = api(E, "POST", f"/api/v1/cases/{case_id}/revisions", json={"comment": "re-issue"})
    assert resp.status_code == 201, resp.get_json()
    body = resp.get_json()
    assert body["label"] == "B" and body["status"] == "draft" and body["current"] is True
    assert resp.headers["Location"].endswith(f"/api/v1/cases/{case_id}/revisions/B")
    assert body["steps"] == [{**body["steps"][0], "action": "create", "comment": "re-issue"}]
    assert api(C, "GET", f"/api/v1/cases/{case_id}").get_json()["status"] == "draft"


# -- OpenAPI ----------------------------------------------------------------------------------------------------
def test_openapi_documents_the_record_routes(api):
    doc = api(C, "GET", "/api/v1/openapi.json").get_json()
    validate(doc)
    paths = doc["paths"]
    for name in ("submit", "check", "send-for-approval", "approve", "reject", "void"):
        op = paths[f"/cases/{{case_id}}/{name}"]["post"]
        assert op["summary"] and op["tags"] == ["records"]
        assert op["responses"]["200"]["content"]["application/json"]["schema"] == {
            "$ref": "#/components/schemas/Revision"}
        assert {"401", "403", "404", "409", "422"} <= set(op["responses"])
        assert op["requestBody"]["required"] is (name in ("reject", "void"))
    assert paths["/cases/{case_id}/reject"]["post"]["requestBody"]["content"]["application/json"]["schema"] == {
        "$ref": "#/components/schemas/ReviewReason"}
    pdf = paths["/cases/{case_id}/revisions/{rev}/record.pdf"]["get"]
    assert "application/pdf" in pdf["responses"]["200"]["content"]
    assert {p["name"] for p in pdf["parameters"]} == {"case_id", "rev"}
    assert "letter" in next(p for p in pdf["parameters"] if p["name"] == "rev")["description"]
    assert "application/x-pem-file" in paths["/trust-root.pem"]["get"]["responses"]["200"]["content"]
    verify = paths["/records/verify"]["post"]
    assert "application/pdf" in verify["requestBody"]["content"]
    assert set(paths["/cases/{case_id}/revisions"]) == {"get", "post"}
    schemas = doc["components"]["schemas"]
    for name in ("Revision", "RevisionList", "ReviewStep", "ReviewComment", "ReviewReason", "CurrentRevision",
                 "RecordVerification"):
        assert name in schemas
    assert "current_revision" in schemas["Case"]["properties"]
    json.dumps(doc)   # serialisable as it is served
