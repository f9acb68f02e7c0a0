"""Calculation records: revisions of a case and their four-eyes review (jtcheck.records.workflow)."""
from __future__ import annotations

import hashlib
import json

import pytest
from sqlalchemy import select

from jtcheck.errors import InputError
from jtcheck.records import service, workflow
from jtcheck.records.errors import (
    ConcurrentEditError,
    FourEyesError,
    NotFound,
    PermissionDenied,
    RecordSigningError,
    RevisionStateError,
    UnderReview,
)
from jtcheck.records.models import AuditEntry, Case, CaseRevision, ReviewStep, RevisionStatus, Role, User
from jtcheck.records.snapshot import snapshot_digest

from .register_helpers import count


class FakeSigner:
    """Appends a line per signature to the PDF so far (an 'incremental update'), and remembers the requests."""

    def __init__(self):
        self.requests: list[workflow.SigningRequest] = []

    def __call__(self, request: workflow.SigningRequest) -> bytes:
        self.requests.append(request)
        base = request.pdf if request.pdf is not None else b"%PDF-fake record\n"
        return base + f"%signed by {request.role} {request.user_email} as {request.issued_label}\n".encode()


def _failing_sign(request):
    raise RuntimeError("signing service unavailable")


@pytest.fixture
def sign():
    return FakeSigner()


@pytest.fixture
def computed_case(session, engineer, case_data):
    """A new case with a current result."""
    case = service.create_case(session, engineer, case_data())
    service.compute_case(session, engineer, case.id)
    return case


def _state(session, case_id):
    """Everything a refused step must leave as it was."""
    session.rollback()
    revs = session.scalars(select(CaseRevision).where(CaseRevision.case_id == case_id).order_by(CaseRevision.id)
                           .execution_options(populate_existing=True)).all()
    status = session.scalar(select(Case.status).where(Case.id == case_id))
    return ([(r.id, r.letter, r.number, str(r.status), r.version, r.record_sha256, r.preparer_id, r.checker_id)
             for r in revs], status, count(session, ReviewStep), count(session, AuditEntry))


def _to_approval(session, users, case, sign, preparer=Role.ENGINEER, checker=Role.CHECKER):
    workflow.submit_for_check(session, users[preparer], case.id, sign)
    workflow.check(session, users[checker], case.id, sign)
    return workflow.send_for_approval(session, users[checker], case.id)


def _approved(session, users, case, sign):
    _to_approval(session, users, case, sign)
    return workflow.approve(session, users[Role.APPROVER], case.id, sign)


def _actions(session, user, case_id, label=None):
    return [str(s.action) for s in workflow.revision_steps(session, user, case_id, label)]


# -- letters ------------------------------------------------------------------------------------------
@pytest.mark.parametrize(("index", "letter"), [(0, "A"), (1, "B"), (25, "Z"), (26, "AA"), (27, "AB"), (51, "AZ"),
                                               (52, "BA"), (701, "ZZ"), (702, "AAA")])
def test_revision_letters_run_a_to_z_then_aa(index, letter):
    assert workflow.revision_letter(index) == letter
    assert workflow.letter_index(letter) == index


@pytest.mark.parametrize("bad", ["", "a", "A1", "É"])
def test_bad_letters_are_refused(bad):
    with pytest.raises(ValueError):
        workflow.letter_index(bad)


# -- the path through the review -------------------------------------------------------------------------
def test_a_new_case_has_revision_a_as_a_draft(session, engineer, case_data):
    case = service.create_case(session, engineer, case_data())
    rev = workflow.current_revision(session, case.id)
    assert (rev.letter, rev.number, rev.label, rev.status, rev.version) == ("A", None, "A", "draft", 1)
    assert (rev.result_id, rev.snapshot, rev.record_pdf, rev.preparer_id) == (None, None, None, None)
    assert case.status == "draft" and case.version == 1
    steps = workflow.revision_steps(session, engineer, case.id)
    assert [(s.action, s.from_status, s.to_status, s.user_id) for s in steps] == [
        ("create", None, "draft", engineer.id)]
    assert [e.action for e in service.audit_trail(session, engineer, "revision", rev.id)] == ["create"]
    assert not service.case_has_issued_records(case)


def test_full_path_draft_to_approved(session, users, computed_case, sign):
    case, eng, chk, apr = computed_case, users[Role.ENGINEER], users[Role.CHECKER], users[Role.APPROVER]
    result = case.latest_result

    rev = workflow.submit_for_check(session, eng, case.id, sign, comment="ready")
    assert (rev.status, rev.label, rev.preparer_id, rev.result_id, rev.case_version) == (
        "for check", "A", eng.id, result.id, case.version)
    assert session.get(Case, case.id, populate_existing=True).status == "for check"
    first_pdf = rev.record_pdf
    assert first_pdf.startswith(b"%PDF-") and rev.record_sha256 == hashlib.sha256(first_pdf).hexdigest()

    rev = workflow.check(session, chk, case.id, sign, comment="checked the basis")
    assert (rev.status, rev.label, rev.checker_id) == ("checked", "A", chk.id)
    assert rev.record_pdf.startswith(first_pdf) and rev.checked_at is not None
    assert session.get(Case, case.id).status == "checked"

    rev = workflow.send_for_approval(session, chk, case.id)
    assert rev.status == "for approval" and session.get(Case, case.id).status == "for approval"

    rev = workflow.approve(session, apr, case.id, sign, comment="approved for issue")
    assert (rev.status, rev.number, rev.label, rev.approver_id) == ("approved", 0, "0", apr.id)
    assert rev.record_sha256 == hashlib.sha256(rev.record_pdf).hexdigest()
    assert rev.approved_at >= rev.checked_at >= rev.submitted_at
    stored = session.get(Case, case.id, populate_existing=True)
    assert (stored.status, stored.version) == ("approved", 1)   # the review never changes the case version
    assert service.result_is_current(stored, result)
    assert service.case_has_issued_records(stored)

    # the signatures, in order, each on the PDF signed so far
    assert [(r.role, r.user_id, r.label, r.issued_label, r.pdf is None) for r in sign.requests] == [
        ("preparer", eng.id, "A", "A", True), ("checker", chk.id, "A", "A", False),
        ("approver", apr.id, "A", "0", False)]
    assert [r.comment for r in sign.requests] == ["ready", "checked the basis", "approved for issue"]
    assert all(r.snapshot == json.loads(rev.snapshot) for r in sign.requests)
    assert (sign.requests[0].user_name, sign.requests[0].user_email) == (eng.name, eng.email)
    assert rev.record_pdf.count(b"%signed by") == 3

    steps = workflow.revision_steps(session, eng, case.id, "0")
    assert [(s.action, s.from_status, s.to_status, s.user_id, s.comment) for s in steps] == [
        ("create", None, "draft", eng.id, ""),
        ("submit", "draft", "for check", eng.id, "ready"),
        ("check", "for check", "checked", chk.id, "checked the basis"),
        ("send for approval", "checked", "for approval", chk.id, ""),
        ("approve", "for approval", "approved", apr.id, "approved for issue")]
    trail = service.audit_trail(session, eng, "revision", rev.id)
    assert [(e.action, e.field) for e in trail] == [
        ("create", "status"), ("submit", "status"), ("submit", "record_sha256"), ("check", "status"),
        ("check", "record_sha256"), ("send for approval", "status"), ("approve", "status"),
        ("approve", "record_sha256"), ("approve", "number")]
    assert trail[-2].new_value == rev.record_sha256


def test_the_snapshot_is_the_case_and_result_frozen_with_its_hash(session, users, computed_case, sign):
    rev = workflow.submit_for_check(session, users[Role.ENGINEER], computed_case.id, sign)
    snapshot = json.loads(rev.snapshot)
    assert rev.snapshot_sha256 == snapshot_digest(snapshot)
    assert rev.snapshot_sha256 == hashlib.sha256(rev.snapshot.encode("utf-8")).hexdigest()
    assert snapshot["revision"] == {"letter": "A"}
    assert snapshot["result"]["id"] == rev.result_id == computed_case.latest_result.id
    assert snapshot["case"]["version"] == rev.case_version == computed_case.version
    assert snapshot["prepared_by"] == {"name": users[Role.ENGINEER].name, "email": users[Role.ENGINEER].email}
    assert snapshot["history"] == []


def test_a_second_round_gives_b_then_number_1_and_supersedes_0(session, users, computed_case, sign):
    eng, apr = users[Role.ENGINEER], users[Role.APPROVER]
    first = _approved(session, users, computed_case, sign)

    case = service.update_case(session, eng, computed_case.id, {"margin_k": 8.0}, expected_version=1)
    assert (case.version, case.status) == (2, "draft")
    second = workflow.current_revision(session, case.id)
    assert (second.letter, second.status, second.label) == ("B", "draft", "B")
    assert session.get(CaseRevision, first.id, populate_existing=True).status == "approved"   # still issued
    assert [r.label for r in workflow.list_revisions(session, eng, case.id)] == ["0", "B"]

    with pytest.raises(InputError) as err:   # the result was computed from version 1
        workflow.submit_for_check(session, eng, case.id, sign)
    assert err.value.field == "result"
    service.compute_case(session, eng, case.id)
    sign.requests.clear()
    _to_approval(session, users, case, sign)
    history = sign.requests[0].snapshot["history"]
    assert [(h["revision"], h["letter"], h["status"], h["approved_by"]) for h in history] == [
        ("0", "A", "approved", apr.name)]
    second = workflow.approve(session, apr, case.id, sign)
    assert (second.number, second.label, second.status) == (1, "1", "approved")
    assert sign.requests[-1].issued_label == "1"

    first = session.get(CaseRevision, first.id, populate_existing=True)
    assert (first.status, first.number) == ("superseded", 0) and first.closed_at is not None
    assert _actions(session, eng, case.id, "0")[-1] == "supersede"
    assert session.get(Case, case.id, populate_existing=True).status == "approved"
    assert workflow.get_revision(session, eng, case.id, "B").id == second.id


def test_an_edit_that_changes_nothing_opens_no_revision(session, users, computed_case, sign):
    _approved(session, users, computed_case, sign)
    service.update_case(session, users[Role.ENGINEER], computed_case.id, {"margin_k": computed_case.margin_k})
    assert [r.label for r in workflow.list_revisions(session, users[Role.ENGINEER], computed_case.id)] == ["0"]


def test_new_revision_reissues_without_an_edit(session, users, computed_case, sign):
    eng = users[Role.ENGINEER]
    with pytest.raises(RevisionStateError):   # the draft A is still open
        workflow.new_revision(session, eng, computed_case.id)
    _approved(session, users, computed_case, sign)
    rev = workflow.new_revision(session, eng, computed_case.id, "recompute with the new release")
    assert (rev.letter, rev.status) == ("B", "draft")
    case = session.get(Case, computed_case.id, populate_existing=True)
    assert (case.status, case.version) == ("draft", 1)
    workflow.submit_for_check(session, eng, case.id, sign)   # the result is still current


# -- the four-eyes rule and the roles ---------------------------------------------------------------------
def test_preparer_cannot_check(session, users, computed_case, sign):
    admin = users[Role.ADMIN]
    workflow.submit_for_check(session, admin, computed_case.id, sign)
    before, calls = _state(session, computed_case.id), len(sign.requests)
    with pytest.raises(FourEyesError, match="four-eyes rule: the checker must not be the preparer") as err:
        workflow.check(session, admin, computed_case.id, sign)
    assert isinstance(err.value, PermissionDenied)
    assert _state(session, computed_case.id) == before and len(sign.requests) == calls


def test_preparer_cannot_approve(session, users, computed_case, sign):
    _to_approval(session, users, computed_case, sign, preparer=Role.ADMIN)
    before, calls = _state(session, computed_case.id), len(sign.requests)
    with pytest.raises(FourEyesError, match="the approver must not be the preparer"):
        workflow.approve(session, users[Role.ADMIN], computed_case.id, sign)
    assert _state(session, computed_case.id) == before and len(sign.requests) == calls


def test_checker_cannot_approve(session, users, computed_case, sign):
    _to_approval(session, users, computed_case, sign, checker=Role.APPROVER)
    before, calls = _state(session, computed_case.id), len(sign.requests)
    with pytest.raises(FourEyesError, match="the approver must not be the checker"):
        workflow.approve(session, users[Role.APPROVER], computed_case.id, sign)
    assert _state(session, computed_case.id) == before and len(sign.requests) == calls
    rev = workflow.approve(session, users[Role.ADMIN], computed_case.id, sign)   # a third person may
    assert (rev.preparer_id, rev.checker_id, rev.approver_id) == (
        users[Role.ENGINEER].id, users[Role.APPROVER].id, users[Role.ADMIN].id)


@pytest.mark.parametrize("role", [Role.CHECKER, Role.APPROVER])
def test_only_engineers_and_admins_submit(session, users, computed_case, sign, role):
    before = _state(session, computed_case.id)
    with pytest.raises(PermissionDenied, match="allowed roles: engineer, admin"):
        workflow.submit_for_check(session, users[role], computed_case.id, sign)
    assert _state(session, computed_case.id) == before and sign.requests == []


def test_engineers_cannot_check_or_approve(session, users, computed_case, sign, world):
    other = service.create_user(session, users[Role.ADMIN], email="second.engineer@example.org",
                                name="Second Engineer", role="engineer", password_hash="hash-2")
    workflow.submit_for_check(session, users[Role.ENGINEER], computed_case.id, sign)
    with pytest.raises(PermissionDenied, match="allowed roles: checker, approver, admin"):
        workflow.check(session, other, computed_case.id, sign)
    workflow.check(session, users[Role.CHECKER], computed_case.id, sign)
    workflow.send_for_approval(session, users[Role.ENGINEER], computed_case.id)   # the preparer may
    with pytest.raises(PermissionDenied, match="allowed roles: approver, admin"):
        workflow.approve(session, other, computed_case.id, sign)
    with pytest.raises(PermissionDenied, match="allowed roles: approver, admin"):
        workflow.approve(session, users[Role.CHECKER], computed_case.id, sign)


def test_only_preparer_checker_or_admin_send_for_approval(session, users, computed_case, sign):
    workflow.submit_for_check(session, users[Role.ENGINEER], computed_case.id, sign)
    workflow.check(session, users[Role.CHECKER], computed_case.id, sign)
    before = _state(session, computed_case.id)
    with pytest.raises(PermissionDenied, match="only the preparer or the checker"):
        workflow.send_for_approval(session, users[Role.APPROVER], computed_case.id)
    assert _state(session, computed_case.id) == before
    assert workflow.send_for_approval(session, users[Role.ADMIN], computed_case.id).status == "for approval"


def test_an_inactive_user_can_do_nothing(session, users, computed_case, sign, world):
    gone = session.scalar(select(User).where(User.email == world.inactive_email))
    with pytest.raises(PermissionDenied, match="deactivated"):
        workflow.submit_for_check(session, gone, computed_case.id, sign)


def test_may_check_and_may_approve(session, users, computed_case, sign):
    rev = workflow.submit_for_check(session, users[Role.ENGINEER], computed_case.id, sign)
    assert workflow.may_check(users[Role.CHECKER], rev) and not workflow.may_check(users[Role.ENGINEER], rev)
    assert not workflow.may_approve(users[Role.APPROVER], rev)   # not yet for approval
    workflow.check(session, users[Role.CHECKER], computed_case.id, sign)
    rev = workflow.send_for_approval(session, users[Role.CHECKER], computed_case.id)
    assert workflow.may_approve(users[Role.APPROVER], rev) and workflow.may_approve(users[Role.ADMIN], rev)
    assert not workflow.may_approve(users[Role.CHECKER], rev) and not workflow.may_approve(None, rev)


# -- wrong states -----------------------------------------------------------------------------------------
def test_steps_out_of_order_are_refused(session, users, computed_case, sign):
    cid = computed_case.id
    with pytest.raises(RevisionStateError, match="revision A is 'draft'.*'for check'"):
        workflow.check(session, users[Role.CHECKER], cid, sign)
    with pytest.raises(RevisionStateError):
        workflow.send_for_approval(session, users[Role.ADMIN], cid)
    with pytest.raises(RevisionStateError):
        workflow.approve(session, users[Role.APPROVER], cid, sign)
    with pytest.raises(RevisionStateError):
        workflow.reject(session, users[Role.CHECKER], cid, "nothing to reject")
    with pytest.raises(RevisionStateError, match="no approved revision"):
        workflow.void(session, users[Role.APPROVER], cid, "nothing to void")
    workflow.submit_for_check(session, users[Role.ENGINEER], cid, sign)
    with pytest.raises(RevisionStateError, match="'for check'"):
        workflow.submit_for_check(session, users[Role.ENGINEER], cid, sign)
    with pytest.raises(RevisionStateError):
        workflow.approve(session, users[Role.APPROVER], cid, sign)
    assert len(sign.requests) == 1


def test_submit_needs_a_result_computed_from_the_case_as_it_is(session, engineer, case_data, sign):
    case = service.create_case(session, engineer, case_data())
    with pytest.raises(InputError, match="compute the case first") as err:
        workflow.submit_for_check(session, engineer, case.id, sign)
    assert err.value.field == "result"
    service.compute_case(session, engineer, case.id)
    service.update_case(session, engineer, case.id, {"margin_k": 7.0})
    before = _state(session, case.id)
    with pytest.raises(InputError) as err:
        workflow.submit_for_check(session, engineer, case.id, sign)
    assert err.value.field == "result"
    assert _state(session, case.id) == before and sign.requests == []


def test_unknown_case(session, users, sign):
    with pytest.raises(NotFound):
        workflow.submit_for_check(session, users[Role.ENGINEER], 999_999, sign)
    with pytest.raises(NotFound):
        workflow.list_revisions(session, users[Role.ENGINEER], 999_999)
    assert workflow.current_revision(session, 999_999) is None


# -- reject, withdraw, edit under review ---------------------------------------------------------------
def test_reject_returns_to_draft_and_keeps_the_reason(session, users, computed_case, sign):
    eng, chk = users[Role.ENGINEER], users[Role.CHECKER]
    submitted = workflow.submit_for_check(session, eng, computed_case.id, sign)
    rejected_sha = submitted.record_sha256
    rev = workflow.reject(session, chk, computed_case.id, "the minimum inlet temperature is not credible")
    assert (rev.status, rev.label) == ("draft", "A")
    assert (rev.result_id, rev.case_version, rev.snapshot, rev.snapshot_sha256, rev.record_pdf, rev.record_sha256,
            rev.preparer_id, rev.checker_id, rev.submitted_at, rev.checked_at) == (None,) * 10
    assert session.get(Case, computed_case.id, populate_existing=True).status == "draft"
    steps = workflow.revision_steps(session, eng, computed_case.id, "A")
    assert (steps[-1].action, steps[-1].from_status, steps[-1].to_status, steps[-1].user_id, steps[-1].comment) == (
        "reject", "for check", "draft", chk.id, "the minimum inlet temperature is not credible")
    assert service.audit_trail(session, eng, "revision", rev.id)[-1].old_value == rejected_sha

    # the case may be edited again, computed and resubmitted as the same revision A
    service.update_case(session, eng, computed_case.id, {"inlet_temperature_min_k": 280.0})
    assert [r.letter for r in workflow.list_revisions(session, eng, computed_case.id)] == ["A"]
    service.compute_case(session, eng, computed_case.id)
    rev = workflow.submit_for_check(session, eng, computed_case.id, sign)
    assert (rev.letter, rev.status, rev.case_version) == ("A", "for check", 2)


@pytest.mark.parametrize("reason", ["", "   ", None])
def test_a_reason_is_required(session, users, computed_case, sign, reason):
    workflow.submit_for_check(session, users[Role.ENGINEER], computed_case.id, sign)
    before = _state(session, computed_case.id)
    with pytest.raises(InputError) as err:
        workflow.reject(session, users[Role.CHECKER], computed_case.id, reason)
    assert err.value.field == "reason"
    assert _state(session, computed_case.id) == before


def test_the_preparer_may_withdraw_but_another_engineer_may_not(session, users, computed_case, sign):
    other = service.create_user(session, users[Role.ADMIN], email="third.engineer@example.org",
                                name="Third Engineer", role="engineer", password_hash="hash-3")
    _to_approval(session, users, computed_case, sign)
    before = _state(session, computed_case.id)
    with pytest.raises(PermissionDenied, match="the preparer may withdraw"):
        workflow.reject(session, other, computed_case.id, "not mine, but")
    assert _state(session, computed_case.id) == before
    rev = workflow.reject(session, users[Role.ENGINEER], computed_case.id, "withdrawn: wrong fluid")
    steps = workflow.revision_steps(session, users[Role.ENGINEER], computed_case.id)
    assert (rev.status, steps[-1].from_status, steps[-1].comment) == ("draft", "for approval", "withdrawn: wrong fluid")


@pytest.mark.parametrize("stage", ["for check", "checked", "for approval"])
def test_editing_under_review_is_refused(session, users, computed_case, sign, stage):
    eng = users[Role.ENGINEER]
    workflow.submit_for_check(session, eng, computed_case.id, sign)
    if stage != "for check":
        workflow.check(session, users[Role.CHECKER], computed_case.id, sign)
    if stage == "for approval":
        workflow.send_for_approval(session, eng, computed_case.id)
    before = _state(session, computed_case.id)
    with pytest.raises(UnderReview, match=f"revision A of this case is '{stage}'.*Reject the revision first") as err:
        service.update_case(session, eng, computed_case.id, {"margin_k": 9.0})
    assert isinstance(err.value, PermissionDenied) and (err.value.label, err.value.status) == ("A", stage)
    assert _state(session, computed_case.id) == before
    stored = session.get(Case, computed_case.id, populate_existing=True)
    assert (stored.margin_k, stored.version) == (5.0, 1)


# -- void ---------------------------------------------------------------------------------------------------
def test_void_an_approved_record(session, users, computed_case, sign):
    apr, eng = users[Role.APPROVER], users[Role.ENGINEER]
    _approved(session, users, computed_case, sign)
    with pytest.raises(PermissionDenied):
        workflow.void(session, eng, computed_case.id, "not allowed")
    with pytest.raises(InputError) as err:
        workflow.void(session, apr, computed_case.id, "")
    assert err.value.field == "reason"
    rev = workflow.void(session, apr, computed_case.id, "the relief case was withdrawn")
    assert (rev.status, rev.label) == ("voided", "0") and rev.closed_at is not None
    assert session.get(Case, computed_case.id, populate_existing=True).status == "voided"
    steps = workflow.revision_steps(session, eng, computed_case.id, "0")
    assert (steps[-1].action, steps[-1].comment) == ("void", "the relief case was withdrawn")
    with pytest.raises(RevisionStateError):   # nothing approved any more
        workflow.void(session, apr, computed_case.id, "again")
    # an edit opens revision B; the voided 0 stays as it is
    service.update_case(session, eng, computed_case.id, {"margin_k": 4.0})
    assert [(r.label, r.status) for r in workflow.list_revisions(session, eng, computed_case.id)] == [
        ("0", "voided"), ("B", "draft")]


def test_voiding_an_approved_revision_behind_a_draft_keeps_the_case_status(session, users, computed_case, sign):
    _approved(session, users, computed_case, sign)
    service.update_case(session, users[Role.ENGINEER], computed_case.id, {"margin_k": 4.0})
    workflow.void(session, users[Role.ADMIN], computed_case.id, "superseded by the design change")
    assert session.get(Case, computed_case.id, populate_existing=True).status == "draft"


# -- reading ------------------------------------------------------------------------------------------------
def test_get_revision_by_label(session, users, computed_case, sign):
    eng = users[Role.ENGINEER]
    rev = _approved(session, users, computed_case, sign)
    assert workflow.get_revision(session, eng, computed_case.id, "0").id == rev.id
    assert workflow.get_revision(session, eng, computed_case.id, "A").id == rev.id   # the letter stays valid
    assert workflow.get_revision(session, eng, computed_case.id, " a ").id == rev.id
    assert workflow.get_revision(session, eng, computed_case.id, 0).id == rev.id
    for label in ("1", "B", "", "A-1", "9999999999", None):
        with pytest.raises(NotFound):
            workflow.get_revision(session, eng, computed_case.id, label)


def test_list_cases_filters_by_the_mirrored_status(session, users, computed_case, sign):
    workflow.submit_for_check(session, users[Role.ENGINEER], computed_case.id, sign)
    listed = service.list_cases(session, users[Role.CHECKER], status="for check")
    assert computed_case.id in [c.id for c in listed]
    assert computed_case.id not in [c.id for c in service.list_cases(session, users[Role.CHECKER], status="draft")]


# -- nothing half-written --------------------------------------------------------------------------------
def test_a_failing_signature_leaves_nothing(session, users, computed_case, sign):
    cid = computed_case.id
    before = _state(session, cid)
    with pytest.raises(RuntimeError, match="signing service unavailable"):
        workflow.submit_for_check(session, users[Role.ENGINEER], cid, _failing_sign)
    assert _state(session, cid) == before
    workflow.submit_for_check(session, users[Role.ENGINEER], cid, sign)
    before = _state(session, cid)
    with pytest.raises(RuntimeError):
        workflow.check(session, users[Role.CHECKER], cid, _failing_sign)
    assert _state(session, cid) == before
    workflow.check(session, users[Role.CHECKER], cid, sign)
    workflow.send_for_approval(session, users[Role.CHECKER], cid)
    before = _state(session, cid)
    with pytest.raises(RuntimeError):
        workflow.approve(session, users[Role.APPROVER], cid, _failing_sign)
    assert _state(session, cid) == before
    assert before[0][-1][3] == "for approval"


def test_a_failure_after_signing_rolls_everything_back(session, users, computed_case, sign, monkeypatch):
    real = workflow._set_case_status

    def fail(*args, **kwargs):
        raise RuntimeError("disk full")

    before = _state(session, computed_case.id)
    monkeypatch.setattr(workflow, "_set_case_status", fail)
    with pytest.raises(RuntimeError, match="disk full"):
        workflow.submit_for_check(session, users[Role.ENGINEER], computed_case.id, sign)
    assert _state(session, computed_case.id) == before
    monkeypatch.setattr(workflow, "_set_case_status", real)


@pytest.mark.parametrize("bad", [b"", b"not a pdf", "%PDF-text", None, "rewrite"])
def test_a_signature_that_is_not_an_incremental_pdf_is_refused(session, users, computed_case, sign, bad):
    workflow.submit_for_check(session, users[Role.ENGINEER], computed_case.id, sign)
    before = _state(session, computed_case.id)
    returned = b"%PDF-a different document" if bad == "rewrite" else bad
    with pytest.raises(RecordSigningError):
        workflow.check(session, users[Role.CHECKER], computed_case.id, lambda request: returned)
    assert _state(session, computed_case.id) == before


def test_someone_acting_while_the_approver_signs_wins(session_factory, session, users, computed_case, sign):
    """The approver's signature is made outside the write transaction; a rejection meanwhile wins."""
    _to_approval(session, users, computed_case, sign)

    def sign_while_someone_rejects(request):
        with session_factory() as other:
            workflow.reject(other, other.get(User, users[Role.CHECKER].id), request.case_id, "found an error")
        return sign(request)

    with pytest.raises(ConcurrentEditError):
        workflow.approve(session, users[Role.APPROVER], computed_case.id, sign_while_someone_rejects)
    state = _state(session, computed_case.id)
    assert state[0][-1][3] == "draft" and state[1] == "draft"


def test_an_edit_while_the_preparer_signs_stops_the_submission(session_factory, session, users, computed_case, sign):
    def sign_while_someone_edits(request):
        with session_factory() as other:
            service.update_case(other, other.get(User, users[Role.ENGINEER].id), request.case_id, {"margin_k": 2.0})
        return sign(request)

    with pytest.raises(ConcurrentEditError):
        workflow.submit_for_check(session, users[Role.ENGINEER], computed_case.id, sign_while_someone_edits)
    state = _state(session, computed_case.id)
    assert state[0][-1][3] == "draft" and state[0][-1][5] is None


def test_comment_too_long_is_refused(session, users, computed_case, sign):
    with pytest.raises(InputError) as err:
        workflow.submit_for_check(session, users[Role.ENGINEER], computed_case.id, sign, comment="x" * 2001)
    assert err.value.field == "comment"
    assert sign.requests == []


def test_revision_status_enum():
    assert [s.value for s in RevisionStatus] == ["draft", "for check", "checked", "for approval", "approved",
                                                 "superseded", "voided"]
    assert RevisionStatus.SUPERSEDED.issued and not RevisionStatus.CHECKED.issued
    assert RevisionStatus.CHECKED.under_review and not RevisionStatus.DRAFT.under_review


# -- four eyes over authorship ------------------------------------------------------------------------------------
def test_who_changed_the_inputs_may_neither_check_nor_approve(session, users, case_data, sign):
    """An admin edits the case's cold limit, an engineer submits it: the admin may not check it (nor approve it);
    another checker may, and the refusal names what the admin wrote."""
    admin, engineer = users[Role.ADMIN], users[Role.ENGINEER]
    case = service.create_case(session, engineer, case_data())
    service.update_case(session, admin, case.id, {"cold_limit_k": 230.0})
    service.compute_case(session, engineer, case.id)
    workflow.submit_for_check(session, engineer, case.id, sign)
    before = _state(session, case.id)
    with pytest.raises(FourEyesError, match=r"anyone who wrote the inputs of revision A; you wrote: case cold_limit_k"):
        workflow.check(session, admin, case.id, sign)
    assert _state(session, case.id) == before
    revision = workflow.current_revision(session, case.id)
    authors = workflow.input_authors(session, revision)
    assert "case cold_limit_k" in authors[admin.id] and "case (created)" in authors[engineer.id]
    assert not workflow.may_check(admin, revision, authors)
    workflow.check(session, users[Role.CHECKER], case.id, sign)
    workflow.send_for_approval(session, users[Role.CHECKER], case.id)
    with pytest.raises(FourEyesError, match="the approver must not be anyone who wrote the inputs"):
        workflow.approve(session, admin, case.id, sign)
    assert str(workflow.approve(session, users[Role.APPROVER], case.id, sign).status) == "approved"
