"""Deleting cases and fluids.

The records service has no delete operations yet, so they live here, following the service's habits:
permission checked first, one transaction, an audit entry naming what was removed, nothing half-done.
Move them into :mod:`jtcheck.records.service` when it grows them.

Rules: an admin may delete any case; an engineer only a case still in "draft".  A case's stored results
are deleted with it (the audit log keeps the record of the deletion).  Never deleted, whoever asks: a case
with an issued calculation record (approved, superseded or voided: issued records are kept for good, and
the database refuses to delete them), and a case whose current record is in review (its frozen result is
reported by the record signed so far; reject the revision first).  A fluid may be deleted by an engineer
or admin only while no case uses it.
"""
from __future__ import annotations

from sqlalchemy import func, select
from sqlalchemy.orm import Session, object_session

from jtcheck.errors import JtcheckError
from jtcheck.records.errors import NotFound, PermissionDenied, RecordImmutableError, RevisionStateError
from jtcheck.records.models import AuditEntry, Case, CaseResult, CaseRevision, FluidRecord, RevisionStatus, Role, User
from jtcheck.records.service import can_administer, can_edit_cases, case_has_issued_records
from jtcheck.records.snapshot import record_number


class InUseError(JtcheckError):
    """A record that others still refer to (answered with 409)."""

    def __init__(self, field: str, message: str):
        self.field = field
        self.message = message
        super().__init__(message)


_DELETE_ACTION = "delete the case"


def _current_revision(session: Session, case: Case) -> CaseRevision | None:
    return session.scalars(select(CaseRevision).where(CaseRevision.case_id == case.id)
                           .order_by(CaseRevision.id.desc()).limit(1)).first()


def deletion_refusal(session: Session, case: Case) -> RecordImmutableError | RevisionStateError | None:
    """Why ``case`` can never be deleted now, whoever asks (None if it may be, role permitting)."""
    if case_has_issued_records(case):
        return RecordImmutableError(
            f"case {case.tag!r} cannot be deleted: it has an issued calculation record ({record_number(case.id)}). "
            "Issued records are kept for good; void the record if it no longer applies")
    current = _current_revision(session, case)
    if current is not None and RevisionStatus(current.status).under_review:
        return RevisionStateError(_DELETE_ACTION, current.label, RevisionStatus(current.status).value,
                                  "a case whose calculation record is in review cannot be deleted; reject the "
                                  "revision first (its preparer may withdraw it)")
    return None


def may_delete_case(user: User | None, case: Case) -> bool:
    """True if ``user`` may delete ``case``: admins always, engineers while it is a draft; nobody if it has an
    issued calculation record or one in review (:func:`deletion_refusal`)."""
    if not (can_administer(user) or (can_edit_cases(user) and case.status == RevisionStatus.DRAFT.value)):
        return False
    session = object_session(case)
    return session is None or deletion_refusal(session, case) is None


def delete_case(session: Session, user: User, case_id: int) -> None:
    """Delete a case and its stored results (one audit entry)."""
    try:
        if not can_edit_cases(user):
            raise PermissionDenied("delete cases", "allowed roles: engineer (drafts), admin")
        case = session.get(Case, case_id)
        if case is None:
            raise NotFound("case", case_id)
        refusal = deletion_refusal(session, case)
        if refusal is not None:
            raise refusal
        if not may_delete_case(user, case):
            raise PermissionDenied("delete cases", f"case {case.tag!r} is {case.status!r}; an engineer may delete "
                                                   "only drafts, an admin any case")
        results = list(session.scalars(select(CaseResult).where(CaseResult.case_id == case.id)))
        for result in results:
            session.delete(result)
        session.add(AuditEntry(user=user, entity="case", entity_id=case.id, action="delete",
                               old_value=f"{case.tag} (version {case.version}, status {case.status}, "
                                         f"{len(results)} stored result(s))"))
        session.flush()
        session.delete(case)
        session.commit()
    except BaseException:
        session.rollback()
        raise


def delete_fluid(session: Session, user: User, fluid_id: int) -> None:
    """Delete a fluid that no case uses (one audit entry)."""
    try:
        if not can_edit_cases(user):
            raise PermissionDenied("delete fluids", f"the role {Role(user.role).value!r} may not; allowed roles: "
                                                    "engineer, admin")
        fluid = session.get(FluidRecord, fluid_id)
        if fluid is None:
            raise NotFound("fluid", fluid_id)
        used = session.scalar(select(func.count()).select_from(Case).where(Case.fluid_id == fluid.id))
        if used:
            raise InUseError("fluid_id", f"fluid {fluid.name!r} is used by {used} case(s); change those cases first")
        session.add(AuditEntry(user=user, entity="fluid", entity_id=fluid.id, action="delete", old_value=fluid.name))
        session.flush()
        session.delete(fluid)
        session.commit()
    except BaseException:
        session.rollback()
        raise
