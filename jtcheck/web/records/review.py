"""The "Review and records" section of the case page: the case's revisions, what each status means, the review
steps the user may take now and plain notes on what happens next.

The buttons offered are those the user may use now, but :mod:`jtcheck.records.workflow` decides when a step is
posted (:mod:`jtcheck.web.records.views`).  The section is part of the case page
(:func:`jtcheck.web.case_page.render_case_page`), which the cases views and a refused review step both render.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from sqlalchemy import select
from sqlalchemy.orm import defer, joinedload

from jtcheck.records import service, workflow
from jtcheck.records.models import Case, CaseRevision, RevisionStatus, Role, User
from jtcheck.records.snapshot import record_number
from jtcheck.web.database import db_session
from jtcheck.web.forms import FormState

#: What each revision status means, in words.
STATUS_WORDS = {
    RevisionStatus.DRAFT: "Draft: being prepared. The inputs may be edited and computed; nothing is signed yet.",
    RevisionStatus.FOR_CHECK: "Submitted for check: signed by the preparer and frozen, waiting for a checker.",
    RevisionStatus.CHECKED: "Checked: signed by the checker, waiting to be sent for approval.",
    RevisionStatus.FOR_APPROVAL: "For approval: waiting for an approver to approve and sign it.",
    RevisionStatus.APPROVED: "Approved: issued, signed by preparer, checker and approver.",
    RevisionStatus.SUPERSEDED: "Superseded: replaced by a later approved revision; kept unchanged.",
    RevisionStatus.VOIDED: "Voided: withdrawn; the record is kept unchanged but no longer applies.",
}

ACTION_WORDS = {"create": "opened", "submit": "submitted for check (signed as preparer)",
                "check": "checked (signed as checker)", "send for approval": "sent for approval",
                "approve": "approved (signed as approver)", "reject": "rejected, back to draft",
                "supersede": "superseded", "void": "voided"}


@dataclass(frozen=True)
class Step:
    """A review step as the case page offers it."""

    name: str            # in the URL
    button: str
    field: str           # "comment" or "reason"
    required: bool
    hint: str
    danger: bool = False


STEPS: dict[str, Step] = {s.name: s for s in (
    Step("submit", "Submit for check and sign", "comment", False,
         "Freezes the inputs and the current result in a record PDF that you sign as its preparer."),
    Step("check", "Check and sign", "comment", False, "You sign the record as its checker."),
    Step("send-for-approval", "Send for approval", "comment", False, "Hands the checked record to the approvers."),
    Step("approve", "Approve and sign", "comment", False,
         "You sign the record as its approver; it is issued with the case's next revision number."),
    Step("reject", "Reject", "reason", True, "Sends the record back to draft; the signatures given so far are "
                                              "discarded. Say why.", danger=True),
    Step("void", "Void the approved record", "reason", True,
         "Withdraws the approved record; it is kept unchanged but marked void. Say why.", danger=True),
    Step("new-revision", "Open a new revision", "comment", False,
         "Opens the next revision as a draft, to compute and issue the case again."),
)}


def _role(user: User) -> Role:
    return Role(user.role)


def _may_send(user: User, rev: CaseRevision) -> bool:
    return (service.can_compute(user) and RevisionStatus(rev.status) is RevisionStatus.CHECKED
            and (_role(user) is Role.ADMIN or user.id in (rev.preparer_id, rev.checker_id)))


def _may_reject(user: User, rev: CaseRevision) -> bool:
    return (service.can_compute(user) and RevisionStatus(rev.status).under_review
            and (_role(user) in workflow.REJECT_ROLES or user.id == rev.preparer_id))


def _notes(user: User, current: CaseRevision, can_submit_result: bool) -> list[str]:
    """Plain sentences on what happens next, and why the user is not offered a step they might expect."""
    status = RevisionStatus(current.status)
    role = _role(user)
    preparer = current.preparer.name if current.preparer is not None else "the preparer"
    checker = current.checker.name if current.checker is not None else "the checker"
    out: list[str] = []
    if status is RevisionStatus.DRAFT:
        out.append("Next: an engineer submits the revision for check and signs it as its preparer.")
        if service.can_edit_cases(user) and not can_submit_result:
            out.append("Submitting needs a result computed from the inputs as they are now: compute the case first.")
    elif status is RevisionStatus.FOR_CHECK:
        out.append(f"Next: a checker other than {preparer} checks and signs it. Its inputs are frozen.")
        if role in workflow.CHECK_ROLES and user.id == current.preparer_id:
            out.append("You prepared this revision, so you may not check it (four-eyes rule).")
    elif status is RevisionStatus.CHECKED:
        out.append(f"Next: {preparer} or {checker} (or an admin) sends it for approval.")
    elif status is RevisionStatus.FOR_APPROVAL:
        out.append(f"Next: an approver other than {preparer} and {checker} approves and signs it; it is then "
                   "issued with the case's next revision number.")
        if role in workflow.APPROVE_ROLES and user.id in (current.preparer_id, current.checker_id):
            out.append("You prepared or checked this revision, so you may not approve it (four-eyes rule).")
    elif status is RevisionStatus.APPROVED:
        out.append("Issued. Saving a change of the inputs opens the next revision, a draft.")
    else:
        out.append("Saving a change of the inputs, or opening a new revision, starts the next revision.")
    return out


def _revisions(session, case_id: int) -> list[CaseRevision]:
    """The case's revisions, oldest first, without their PDFs and snapshots (the page needs neither)."""
    return list(session.scalars(
        select(CaseRevision).where(CaseRevision.case_id == case_id).order_by(CaseRevision.id)
        .options(defer(CaseRevision.record_pdf), defer(CaseRevision.snapshot), joinedload(CaseRevision.preparer),
                 joinedload(CaseRevision.checker), joinedload(CaseRevision.approver))))


def review_context(case: Case, user: User, form: FormState | None = None, step: str | None = None) -> dict[str, Any]:
    """What the review section of the case page shows (``form``/``step``: a refused step to show again)."""
    session = db_session()
    revisions = _revisions(session, case.id)
    current = revisions[-1] if revisions else None
    steps = workflow.revision_steps(session, user, case.id)
    result = case.latest_result
    has_current_result = result is not None and service.result_is_current(case, result)
    offered: list[tuple[Step, CaseRevision]] = []
    approved = next((r for r in reversed(revisions) if RevisionStatus(r.status) is RevisionStatus.APPROVED), None)
    if current is not None:
        status = RevisionStatus(current.status)
        authors = workflow.input_authors(session, current) if status.under_review else {}
        if service.can_edit_cases(user) and status is RevisionStatus.DRAFT and has_current_result:
            offered.append((STEPS["submit"], current))
        if workflow.may_check(user, current, authors):
            offered.append((STEPS["check"], current))
        if _may_send(user, current):
            offered.append((STEPS["send-for-approval"], current))
        if workflow.may_approve(user, current, authors):
            offered.append((STEPS["approve"], current))
        if _may_reject(user, current):
            offered.append((STEPS["reject"], current))
        if service.can_edit_cases(user) and status.issued:
            offered.append((STEPS["new-revision"], current))
    if approved is not None and service.can_compute(user) and _role(user) in workflow.APPROVE_ROLES:
        offered.append((STEPS["void"], approved))
    steps_by_revision: dict[int, list] = {}
    for s in steps:
        steps_by_revision.setdefault(s.revision_id, []).append(s)
    return {
        "record_number": record_number(case.id), "current": current, "revisions": revisions,
        "steps": steps, "steps_by_revision": steps_by_revision, "offered": offered,
        "notes": _notes(user, current, has_current_result) if current is not None else [],
        "status_words": STATUS_WORDS, "action_words": ACTION_WORDS,
        "form": form or FormState(), "failed_step": step, "max_comment": workflow.MAX_COMMENT,
        "frozen": current is not None and RevisionStatus(current.status).under_review,
        "reject_button": "Withdraw (back to draft)" if current is not None and current.preparer_id == user.id
        and _role(user) not in workflow.REJECT_ROLES else STEPS["reject"].button,
    }
