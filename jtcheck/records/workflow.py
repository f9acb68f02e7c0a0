"""Calculation records of cases: revisions and their four-eyes review.

Every case has revisions ``A``, ``B`` ... (:class:`~jtcheck.records.models.CaseRevision`); the latest
is the case's *current* revision and :attr:`Case.status` mirrors its status.  A revision goes

    draft -> for check -> checked -> for approval -> approved -> superseded (by the next approved revision)
                                                             -> voided

and ``reject`` sends one in review (for check, checked, for approval) back to draft.

=====================  ================================================  ===========================
step                   who                                               signs
=====================  ================================================  ===========================
submit_for_check       engineer, admin (becomes the preparer)            preparer (renders the PDF)
check                  checker, approver, admin; not the preparer        checker
send_for_approval      the preparer, the checker, or an admin            -
approve                approver, admin; neither preparer nor checker     approver
reject                 checker, approver, admin, or the preparer         -
void                   approver, admin                                   -
new_revision           engineer, admin (the current revision is issued)  -
=====================  ================================================  ===========================

Editing the inputs of a case whose current revision is in review is refused
(:class:`~jtcheck.records.errors.UnderReview`); editing one whose current revision is issued opens
the next revision, a draft (:func:`jtcheck.records.cases.update_case`).

Submitting freezes a snapshot of the case and its current result (:mod:`jtcheck.records.snapshot`);
the record PDF is made and signed by a callback (``sign``), so that this module never imports the
report and signature code: each signature is an incremental update of the PDF signed so far.
On approval the revision gets its number (0 for the case's first approved revision, then 1, 2 ...)
and any earlier approved revision of the case is superseded.  Issued revisions (approved,
superseded, voided) never change; the models refuse it and so do database triggers.

Each public function that writes is one unit of work (:func:`jtcheck.records.transactions.transaction`):
it writes a :class:`~jtcheck.records.models.ReviewStep` and an audit entry (entity ``"revision"``),
and on any error nothing is stored.  The signing callback runs *before* the write transaction (as the
letdowns of :func:`~jtcheck.records.computation.compute_case` do), so no write lock is held while a PDF is
rendered or a time stamp fetched; the write then checks that nobody changed the revision or the case
meanwhile (else :class:`~jtcheck.records.errors.ConcurrentEditError`, nothing stored).
"""
from __future__ import annotations

import hashlib
import json
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from typing import Any

from sqlalchemy import func, select, update
from sqlalchemy.orm import Session, selectinload

from jtcheck.errors import InputError
from jtcheck.records import audit
from jtcheck.records.errors import (
    ConcurrentEditError,
    FourEyesError,
    NotFound,
    PermissionDenied,
    RecordSigningError,
    RevisionStateError,
)
from jtcheck.records.fields import MAX_SHORT_TEXT, parse_id, parse_text
from jtcheck.records.guard import ALL_ROLES, EDIT_ROLES, can_compute, require
from jtcheck.records.models import (
    AuditEntry,
    Case,
    CaseResult,
    CaseRevision,
    ReviewAction,
    ReviewStep,
    RevisionStatus,
    Role,
    User,
    utcnow,
)
from jtcheck.records.results import result_is_current
from jtcheck.records.snapshot import canonical_json, case_snapshot, sha256_hex
from jtcheck.records.transactions import lock_case_row, transaction

#: Roles that may check a record (besides the four-eyes rule).
CHECK_ROLES = frozenset({Role.CHECKER, Role.APPROVER, Role.ADMIN})
#: Roles that may approve or void a record.
APPROVE_ROLES = frozenset({Role.APPROVER, Role.ADMIN})
#: Roles that may reject a record in review (its preparer may too, whatever their role).
REJECT_ROLES = frozenset({Role.CHECKER, Role.APPROVER, Role.ADMIN})

MAX_COMMENT = MAX_SHORT_TEXT

PREPARER, CHECKER, APPROVER = "preparer", "checker", "approver"


@dataclass(frozen=True)
class SigningRequest:
    """What the signing callback is asked to sign.

    Attributes
    ----------
    revision_id, case_id : int
        The revision and its case.
    label : str
        The revision's label now (its letter until approved).
    role : str
        ``"preparer"``, ``"checker"`` or ``"approver"``.
    user_id, user_name, user_email
        The signer.
    snapshot : dict
        The frozen snapshot (the JSON stored with the revision, parsed).
    pdf : bytes or None
        None for the preparer (render the record from the snapshot first), else the record signed so far.
    comment : str
        The signer's comment.
    issued_label : str
        The label the revision carries after this step (its number on approval).
    """

    revision_id: int
    case_id: int
    label: str
    role: str
    user_id: int
    user_name: str
    user_email: str
    snapshot: dict[str, Any]
    pdf: bytes | None
    comment: str
    issued_label: str


#: Makes the signed PDF: returns the whole new PDF (the previous one plus an incremental update).
SignFn = Callable[[SigningRequest], bytes]


# -- letters and numbers ------------------------------------------------------------------------------
def revision_letter(index: int) -> str:
    """The letter of the ``index``-th revision of a case (0 -> ``A``, 25 -> ``Z``, 26 -> ``AA``, 27 -> ``AB``)."""
    if isinstance(index, bool) or not isinstance(index, int) or index < 0:
        raise ValueError(f"a revision index is an integer >= 0, got {index!r}")
    letters = ""
    n = index + 1
    while n:
        n, r = divmod(n - 1, 26)
        letters = chr(ord("A") + r) + letters
    return letters


def letter_index(letter: str) -> int:
    """The inverse of :func:`revision_letter` (``A`` -> 0, ``AA`` -> 26)."""
    if not letter or not letter.isascii() or not letter.isalpha() or not letter.isupper():
        raise ValueError(f"a revision letter is A to Z, AA ..., got {letter!r}")
    n = 0
    for ch in letter:
        n = n * 26 + (ord(ch) - ord("A") + 1)
    return n - 1


def _next_letter(session: Session, case_id: int) -> str:
    letters = session.scalars(select(CaseRevision.letter).where(CaseRevision.case_id == case_id)).all()
    return revision_letter(max((letter_index(x) for x in letters), default=-1) + 1)


def _next_number(session: Session, case_id: int) -> int:
    last = session.scalar(select(func.max(CaseRevision.number)).where(CaseRevision.case_id == case_id))
    return 0 if last is None else last + 1


# -- small helpers ------------------------------------------------------------------------------------
def _comment(value: Any, key: str = "comment", *, required: bool = False) -> str:
    label = "reason" if key == "reason" else "comment"
    return parse_text(key, value, label, MAX_COMMENT, required=required)


def _status(revision: CaseRevision) -> RevisionStatus:
    return RevisionStatus(revision.status)


def _expect(revision: CaseRevision | None, allowed: set[RevisionStatus] | frozenset[RevisionStatus],
            action: str) -> CaseRevision:
    if revision is None:
        raise RevisionStateError(action, None, None, "the case has no calculation record")
    status = _status(revision)
    if status not in allowed:
        wanted = " or ".join(repr(s.value) for s in RevisionStatus if s in allowed)
        raise RevisionStateError(action, revision.label, status.value, f"the step needs a revision that is {wanted}")
    return revision


def _get_case(session: Session, case_id: Any, *, lock: bool = False) -> Case:
    case_id = parse_id("case_id", case_id, "case")
    if lock:
        lock_case_row(session, case_id)
    case = session.get(Case, case_id, populate_existing=True)
    if case is None:
        raise NotFound("case", case_id)
    return case


def _current(session: Session, case_id: int) -> CaseRevision | None:
    stmt = (select(CaseRevision).where(CaseRevision.case_id == case_id).order_by(CaseRevision.id.desc()).limit(1)
            .execution_options(populate_existing=True))
    return session.scalars(stmt).first()


def _add_step(session: Session, revision: CaseRevision, user: User, action: ReviewAction,
              from_status: RevisionStatus | None, to_status: RevisionStatus, comment: str = "") -> ReviewStep:
    step = ReviewStep(revision=revision, action=action, from_status=from_status, to_status=to_status, user=user,
                      at=utcnow(), comment=comment)
    session.add(step)
    audit.add_entry(session, user, "revision", revision.id, action.value, "status",
                    from_status.value if from_status is not None else None,
                    to_status.value if not comment else f"{to_status.value}: {comment}")
    return step


def _set_case_status(session: Session, case: Case, status: RevisionStatus) -> None:
    """Mirror the current revision's status on the case, without touching the case version.

    The case's version counts edits of its inputs (results are current only for the version they were
    computed from), so the status is written with a plain UPDATE, guarded by the version read.
    """
    if case.status == status.value:
        return
    session.flush()
    done = session.execute(update(Case).where(Case.id == case.id, Case.version == case.version)
                           .values(status=status.value).execution_options(synchronize_session="evaluate"))
    if done.rowcount != 1:
        raise ConcurrentEditError("case", case.id, case.version)


def _signed(sign: SignFn, request: SigningRequest) -> bytes:
    """Call the signing callback and check that it returned the record signed incrementally."""
    pdf = sign(request)
    if not isinstance(pdf, (bytes, bytearray)) or not bytes(pdf).startswith(b"%PDF-"):
        raise RecordSigningError(f"the {request.role}'s signing returned {type(pdf).__name__}, not a PDF")
    pdf = bytes(pdf)
    if request.pdf is not None and (len(pdf) <= len(request.pdf) or not pdf.startswith(request.pdf)):
        raise RecordSigningError(f"the {request.role}'s signed PDF does not extend the record signed so far; "
                                 "signatures must be incremental updates")
    return pdf


def _request(revision: CaseRevision, user: User, role: str, snapshot: dict[str, Any], comment: str,
             issued_label: str) -> SigningRequest:
    return SigningRequest(revision_id=revision.id, case_id=revision.case_id, label=revision.label, role=role,
                          user_id=user.id, user_name=user.name, user_email=user.email, snapshot=snapshot,
                          pdf=revision.record_pdf, comment=comment, issued_label=issued_label)


def _relock(session: Session, case_id: int, revision_id: int, revision_version: int,
            case_version: int | None = None) -> tuple[Case, CaseRevision]:
    """Inside the write transaction: the case (row locked) and its current revision, unchanged since read."""
    case = _get_case(session, case_id, lock=True)
    revision = _current(session, case.id)
    if revision is None or revision.id != revision_id or revision.version != revision_version:
        raise ConcurrentEditError("revision", revision_id)
    if case_version is not None and case.version != case_version:
        raise ConcurrentEditError("case", case.id, case_version, case.version)
    return case, revision


def _person(user: User | None) -> str | None:
    return user.name if user is not None else None


def _history(session: Session, case_id: int, before_id: int) -> list[dict[str, Any]]:
    """The earlier revisions of a case as the record's history: label, status, dates, names, comments."""
    earlier = session.scalars(select(CaseRevision).where(CaseRevision.case_id == case_id, CaseRevision.id < before_id)
                              .options(selectinload(CaseRevision.steps)).order_by(CaseRevision.id)).all()
    out = []
    for rev in earlier:
        steps = {ReviewAction(s.action): s for s in rev.steps}
        last = rev.steps[-1] if rev.steps else None
        approve = steps.get(ReviewAction.APPROVE)
        void = steps.get(ReviewAction.VOID)
        out.append({
            "revision": rev.label, "letter": rev.letter, "number": rev.number, "status": _status(rev).value,
            "action": ReviewAction(last.action).value if last is not None else None,
            "at": rev.approved_at or (last.at if last is not None else rev.created_at),
            "by": _person(rev.approver) or (_person(last.user) if last is not None else None),
            "comment": approve.comment if approve is not None else "",
            "prepared_by": _person(rev.preparer), "checked_by": _person(rev.checker),
            "approved_by": _person(rev.approver), "submitted_at": rev.submitted_at, "checked_at": rev.checked_at,
            "approved_at": rev.approved_at, "closed_at": rev.closed_at,
            "void_reason": void.comment if void is not None else None,
            "snapshot_sha256": rev.snapshot_sha256, "record_sha256": rev.record_sha256,
        })
    return out


def _latest_result(session: Session, case_id: int) -> CaseResult | None:
    return session.scalars(select(CaseResult).where(CaseResult.case_id == case_id)
                           .order_by(CaseResult.id.desc()).limit(1)).first()


# -- reading ------------------------------------------------------------------------------------------
def current_revision(session: Session, case_id: int) -> CaseRevision | None:
    """The latest revision of a case (None if the case does not exist or has none).  Checks no user."""
    return _current(session, parse_id("case_id", case_id, "case"))


def list_revisions(session: Session, user: User, case_id: int) -> list[CaseRevision]:
    """The revisions of a case, oldest first (any active user); NotFound if there is no such case."""
    require(user, ALL_ROLES, "view calculation records")
    case = session.get(Case, parse_id("case_id", case_id, "case"))
    if case is None:
        raise NotFound("case", case_id)
    return list(session.scalars(select(CaseRevision).where(CaseRevision.case_id == case.id)
                                .order_by(CaseRevision.id)))


def get_revision(session: Session, user: User, case_id: int, label: str) -> CaseRevision:
    """One revision of a case by its label: the number of an approved one (``"0"``) or the letter (``"A"``).

    The letter finds a revision also after it has been numbered (letters are never reused).

    Raises
    ------
    NotFound
        If the case or the revision does not exist (``entity`` ``"revision"``).
    """
    require(user, ALL_ROLES, "view calculation records")
    case = session.get(Case, parse_id("case_id", case_id, "case"))
    if case is None:
        raise NotFound("case", case_id)
    text = str(label).strip().upper() if isinstance(label, (str, int)) and not isinstance(label, bool) else ""
    stmt = select(CaseRevision).where(CaseRevision.case_id == case.id)
    if text.isascii() and text.isdigit() and len(text) <= 9:
        stmt = stmt.where(CaseRevision.number == int(text))
    elif text.isascii() and text.isalpha() and len(text) <= 8:
        stmt = stmt.where(CaseRevision.letter == text)
    else:
        raise NotFound("revision", label)
    revision = session.scalars(stmt).first()
    if revision is None:
        raise NotFound("revision", label)
    return revision


def revision_steps(session: Session, user: User, case_id: int, label: str | None = None) -> list[ReviewStep]:
    """The review steps of one revision (by label), or of every revision of the case, oldest first."""
    require(user, ALL_ROLES, "view calculation records")
    if label is not None:
        revision = get_revision(session, user, case_id, label)
        where = ReviewStep.revision_id == revision.id
    else:
        case = session.get(Case, parse_id("case_id", case_id, "case"))
        if case is None:
            raise NotFound("case", case_id)
        where = ReviewStep.revision_id.in_(select(CaseRevision.id).where(CaseRevision.case_id == case.id))
    return list(session.scalars(select(ReviewStep).where(where).options(selectinload(ReviewStep.user))
                                .order_by(ReviewStep.id)))


def may_check(user: User | None, revision: CaseRevision, authors: Mapping[int, list[str]] | None = None) -> bool:
    """True if ``user`` may check ``revision`` now (role, four-eyes rule over preparer and ``authors``, status)."""
    return (can_compute(user) and Role(user.role) in CHECK_ROLES and user.id != revision.preparer_id
            and user.id not in (authors or {}) and _status(revision) is RevisionStatus.FOR_CHECK)


def may_approve(user: User | None, revision: CaseRevision, authors: Mapping[int, list[str]] | None = None) -> bool:
    """True if ``user`` may approve ``revision`` now (role, four-eyes rule over preparer, checker and ``authors``,
    status)."""
    return (can_compute(user) and Role(user.role) in APPROVE_ROLES
            and user.id not in (revision.preparer_id, revision.checker_id) and user.id not in (authors or {})
            and _status(revision) is RevisionStatus.FOR_APPROVAL)


#: Audit actions that write a case's or a fluid's inputs.
_AUTHORING = ("create", "update")


def input_authors(session: Session, revision: CaseRevision) -> dict[int, list[str]]:
    """Who wrote the inputs a revision records: user id -> the inputs whose value as submitted they wrote.

    From the audit log up to the submission (up to now for a draft): for each field of the case and of its
    fluid, the user of the last change; a field never changed since the record was created counts for its
    creator (``"(created)"``).  The four-eyes rule keeps these people from checking or approving it.
    """
    case = session.get(Case, revision.case_id)
    if case is None:
        return {}
    until = revision.submitted_at or utcnow()
    out: dict[int, list[str]] = {}
    for entity, entity_id in (("case", case.id), ("fluid", case.fluid_id)):
        entries = session.scalars(select(AuditEntry).where(
            AuditEntry.entity == entity, AuditEntry.entity_id == entity_id, AuditEntry.action.in_(_AUTHORING),
            AuditEntry.at <= until).order_by(AuditEntry.id))
        creator: int | None = None
        last: dict[str, int | None] = {}
        for e in entries:
            if e.action == "create":
                creator, last = e.user_id, {}
            elif e.field:
                last[e.field] = e.user_id
        if creator is not None:
            out.setdefault(creator, []).append(f"{entity} (created)")
        for field, uid in last.items():
            if uid is not None:
                out.setdefault(uid, []).append(f"{entity} {field}")
    return out


def _refuse_authors(session: Session, user: User, revision: CaseRevision, action: str, role: str) -> None:
    fields = input_authors(session, revision).get(user.id)
    if fields:
        shown = ", ".join(fields[:6]) + (f" and {len(fields) - 6} more" if len(fields) > 6 else "")
        raise FourEyesError(action, f"the {role} must not be anyone who wrote the inputs of revision "
                                    f"{revision.label}; you wrote: {shown} (see the audit trail)")


# -- opening revisions (also used by cases.add_case and cases.update_case) ------------------------------
def open_revision(session: Session, user: User | None, case: Case, comment: str = "") -> CaseRevision:
    """Add the next draft revision of ``case`` (``A`` for a new case) within the caller's transaction.

    The caller sets the case's status (it is "draft" already for a new case).
    """
    if case.id is None:
        session.flush()
    letter = _next_letter(session, case.id)
    revision = CaseRevision(case=case, letter=letter, status=RevisionStatus.DRAFT, created_at=utcnow())
    session.add(revision)
    session.flush()
    if user is None:   # system actions record the case's creator as the step's user
        user = case.created_by
    _add_step(session, revision, user, ReviewAction.CREATE, None, RevisionStatus.DRAFT, comment)
    return revision


def new_revision(session: Session, user: User, case_id: int, comment: str = "") -> CaseRevision:
    """Open the next draft revision of a case whose current revision is issued (engineer or admin).

    Editing an issued case's inputs does this by itself (:func:`jtcheck.records.cases.update_case`);
    this is for re-issuing without an edit (e.g. after a void, or to report a new computation).
    """
    action = "open a new revision"
    require(user, EDIT_ROLES, action)
    comment = _comment(comment)
    with transaction(session):
        case = _get_case(session, case_id, lock=True)
        current = _expect(_current(session, case.id), {RevisionStatus.APPROVED, RevisionStatus.SUPERSEDED,
                                                       RevisionStatus.VOIDED}, action)
        revision = open_revision(session, user, case, comment or f"after revision {current.label}")
        _set_case_status(session, case, RevisionStatus.DRAFT)
    return revision


# -- the review steps ---------------------------------------------------------------------------------
def submit_for_check(session: Session, user: User, case_id: int, sign: SignFn, comment: str = "") -> CaseRevision:
    """Freeze the case and its current result in the current (draft) revision, signed by the preparer.

    Engineers and admins; the user becomes the preparer.  The snapshot (canonical JSON) and its SHA-256,
    the result, the case version and the PDF the preparer signed (with its SHA-256) are stored; the
    revision goes to "for check".

    Raises
    ------
    InputError
        ``field == "result"`` if the case has no result computed from its inputs as they are now.
    RevisionStateError
        If the current revision is not a draft.
    """
    action = "submit a calculation record for check"
    require(user, EDIT_ROLES, action)
    comment = _comment(comment)
    try:   # read and sign before the write transaction (no write lock while the PDF is made)
        case = _get_case(session, case_id)
        revision = _expect(_current(session, case.id), {RevisionStatus.DRAFT}, action)
        result = _latest_result(session, case.id)
        if result is None or not result_is_current(case, result):
            raise InputError("result", "the case has no result computed from its inputs as they are now; "
                                       "compute the case first")
        snapshot_text = canonical_json(case_snapshot(
            case, result, revision.letter, history=_history(session, case.id, revision.id),
            prepared_by={"name": user.name, "email": user.email})).decode("utf-8")
        snapshot = json.loads(snapshot_text)
        pdf = _signed(sign, _request(revision, user, PREPARER, snapshot, comment, revision.letter))
        planned = (revision.id, revision.version, case.version, result.id)
    except BaseException:
        session.rollback()
        raise
    with transaction(session):
        case, revision = _relock(session, case.id, planned[0], planned[1], planned[2])
        result = session.get(CaseResult, planned[3], populate_existing=True)
        if result is None or not result_is_current(case, result):
            raise ConcurrentEditError("case", case.id)
        revision.result = result
        revision.case_version = case.version
        revision.snapshot = snapshot_text
        revision.snapshot_sha256 = sha256_hex(snapshot_text.encode("utf-8"))
        revision.record_pdf = pdf
        revision.record_sha256 = hashlib.sha256(pdf).hexdigest()
        revision.preparer = user
        revision.submitted_at = utcnow()
        revision.status = RevisionStatus.FOR_CHECK
        session.flush()
        _add_step(session, revision, user, ReviewAction.SUBMIT, RevisionStatus.DRAFT, RevisionStatus.FOR_CHECK,
                  comment)
        audit.add_entry(session, user, "revision", revision.id, "submit", "record_sha256", None, revision.record_sha256)
        _set_case_status(session, case, RevisionStatus.FOR_CHECK)
    return revision


def check(session: Session, user: User, case_id: int, sign: SignFn, comment: str = "") -> CaseRevision:
    """Sign the current revision as its checker: "for check" -> "checked".

    Checkers, approvers and admins, but never the preparer (four-eyes rule, :class:`FourEyesError`).
    """
    action = "check a calculation record"
    require(user, CHECK_ROLES, action)
    comment = _comment(comment)
    try:
        case = _get_case(session, case_id)
        revision = _expect(_current(session, case.id), {RevisionStatus.FOR_CHECK}, action)
        if revision.preparer_id == user.id:
            raise FourEyesError(action, f"the checker must not be the preparer of revision {revision.label}")
        _refuse_authors(session, user, revision, action, "checker")
        pdf = _signed(sign, _request(revision, user, CHECKER, json.loads(revision.snapshot or "{}"), comment,
                                     revision.letter))
        planned = (revision.id, revision.version)
    except BaseException:
        session.rollback()
        raise
    with transaction(session):
        case, revision = _relock(session, case.id, *planned)
        old_sha = revision.record_sha256
        revision.checker = user
        revision.checked_at = utcnow()
        revision.record_pdf = pdf
        revision.record_sha256 = hashlib.sha256(pdf).hexdigest()
        revision.status = RevisionStatus.CHECKED
        session.flush()
        _add_step(session, revision, user, ReviewAction.CHECK, RevisionStatus.FOR_CHECK, RevisionStatus.CHECKED,
                  comment)
        audit.add_entry(session, user, "revision", revision.id, "check", "record_sha256", old_sha,
                        revision.record_sha256)
        _set_case_status(session, case, RevisionStatus.CHECKED)
    return revision


def send_for_approval(session: Session, user: User, case_id: int, comment: str = "") -> CaseRevision:
    """"checked" -> "for approval" (no signature): the preparer, the checker or an admin."""
    action = "send a calculation record for approval"
    require(user, ALL_ROLES, action)
    comment = _comment(comment)
    with transaction(session):
        case = _get_case(session, case_id, lock=True)
        revision = _expect(_current(session, case.id), {RevisionStatus.CHECKED}, action)
        if Role(user.role) is not Role.ADMIN and user.id not in (revision.preparer_id, revision.checker_id):
            raise PermissionDenied(action, f"only the preparer or the checker of revision {revision.label}, or an "
                                           "admin, may send it for approval")
        revision.status = RevisionStatus.FOR_APPROVAL
        session.flush()
        _add_step(session, revision, user, ReviewAction.SEND_FOR_APPROVAL, RevisionStatus.CHECKED,
                  RevisionStatus.FOR_APPROVAL, comment)
        _set_case_status(session, case, RevisionStatus.FOR_APPROVAL)
    return revision


def approve(session: Session, user: User, case_id: int, sign: SignFn, comment: str = "") -> CaseRevision:
    """Sign the current revision as its approver: "for approval" -> "approved", with the next number.

    Approvers and admins, neither the preparer nor the checker (:class:`FourEyesError`).  The
    revision gets the case's next number (0 for its first approved revision); an earlier approved
    revision of the case becomes "superseded" (review step "supersede").
    """
    action = "approve a calculation record"
    require(user, APPROVE_ROLES, action)
    comment = _comment(comment)
    try:
        case = _get_case(session, case_id)
        revision = _expect(_current(session, case.id), {RevisionStatus.FOR_APPROVAL}, action)
        if revision.preparer_id == user.id:
            raise FourEyesError(action, f"the approver must not be the preparer of revision {revision.label}")
        if revision.checker_id == user.id:
            raise FourEyesError(action, f"the approver must not be the checker of revision {revision.label}")
        _refuse_authors(session, user, revision, action, "approver")
        number = _next_number(session, case.id)
        pdf = _signed(sign, _request(revision, user, APPROVER, json.loads(revision.snapshot or "{}"), comment,
                                     str(number)))
        planned = (revision.id, revision.version)
    except BaseException:
        session.rollback()
        raise
    with transaction(session):
        case, revision = _relock(session, case.id, *planned)
        if _next_number(session, case.id) != number:
            raise ConcurrentEditError("revision", revision.id)
        now = utcnow()
        earlier = session.scalars(select(CaseRevision).where(
            CaseRevision.case_id == case.id, CaseRevision.id != revision.id,
            CaseRevision.status == RevisionStatus.APPROVED).order_by(CaseRevision.id)).all()
        for old in earlier:
            old.status = RevisionStatus.SUPERSEDED
            old.closed_at = now
            session.flush()
            _add_step(session, old, user, ReviewAction.SUPERSEDE, RevisionStatus.APPROVED, RevisionStatus.SUPERSEDED,
                      f"superseded by revision {number}")
        old_sha = revision.record_sha256
        revision.number = number
        revision.approver = user
        revision.approved_at = now
        revision.record_pdf = pdf
        revision.record_sha256 = hashlib.sha256(pdf).hexdigest()
        revision.status = RevisionStatus.APPROVED
        session.flush()
        _add_step(session, revision, user, ReviewAction.APPROVE, RevisionStatus.FOR_APPROVAL, RevisionStatus.APPROVED,
                  comment)
        audit.add_entry(session, user, "revision", revision.id, "approve", "record_sha256", old_sha,
                        revision.record_sha256)
        audit.add_entry(session, user, "revision", revision.id, "approve", "number", None, number)
        _set_case_status(session, case, RevisionStatus.APPROVED)
    return revision


def reject(session: Session, user: User, case_id: int, reason: str) -> CaseRevision:
    """Send the current revision back to "draft" from "for check", "checked" or "for approval".

    Checkers, approvers and admins, or the revision's preparer (withdrawing it).  The reason is
    required and kept in the review step; the snapshot, the result, the PDF signed so far and its
    signers are cleared (the rejected PDF is not kept; the audit log keeps its SHA-256).
    """
    action = "reject a calculation record"
    require(user, ALL_ROLES, action)
    reason = _comment(reason, "reason", required=True)
    with transaction(session):
        case = _get_case(session, case_id, lock=True)
        revision = _expect(_current(session, case.id), {RevisionStatus.FOR_CHECK, RevisionStatus.CHECKED,
                                                        RevisionStatus.FOR_APPROVAL}, action)
        if Role(user.role) not in REJECT_ROLES and user.id != revision.preparer_id:
            raise PermissionDenied(action, "allowed roles: checker, approver, admin; the preparer may withdraw "
                                           f"revision {revision.label}")
        old_status, old_sha = _status(revision), revision.record_sha256
        revision.status = RevisionStatus.DRAFT
        revision.result = None
        revision.case_version = None
        revision.snapshot = None
        revision.snapshot_sha256 = None
        revision.record_pdf = None
        revision.record_sha256 = None
        revision.preparer = None
        revision.checker = None
        revision.submitted_at = None
        revision.checked_at = None
        session.flush()
        _add_step(session, revision, user, ReviewAction.REJECT, old_status, RevisionStatus.DRAFT, reason)
        audit.add_entry(session, user, "revision", revision.id, "reject", "record_sha256", old_sha, None)
        _set_case_status(session, case, RevisionStatus.DRAFT)
    return revision


def void(session: Session, user: User, case_id: int, reason: str) -> CaseRevision:
    """Withdraw the case's approved revision: "approved" -> "voided" (approvers and admins; reason required).

    The record itself is kept unchanged.  The case's status follows only if the voided revision is its
    current one (a draft opened after it stays the current revision).
    """
    action = "void a calculation record"
    require(user, APPROVE_ROLES, action)
    reason = _comment(reason, "reason", required=True)
    with transaction(session):
        case = _get_case(session, case_id, lock=True)
        revision = session.scalars(select(CaseRevision).where(
            CaseRevision.case_id == case.id, CaseRevision.status == RevisionStatus.APPROVED)
            .order_by(CaseRevision.id.desc()).limit(1).execution_options(populate_existing=True)).first()
        if revision is None:
            current = _current(session, case.id)
            raise RevisionStateError(action, current.label if current else None,
                                     _status(current).value if current else None,
                                     "the case has no approved revision to void")
        revision.status = RevisionStatus.VOIDED
        revision.closed_at = utcnow()
        session.flush()
        _add_step(session, revision, user, ReviewAction.VOID, RevisionStatus.APPROVED, RevisionStatus.VOIDED, reason)
        current = _current(session, case.id)
        if current is not None and current.id == revision.id:
            _set_case_status(session, case, RevisionStatus.VOIDED)
    return revision
