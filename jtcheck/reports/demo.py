"""A finished record for the invented demo site: one demo case carried through check and approval.

Three invented reviewers (a preparer, a checker and an approver at the fictional Kestrel Ridge gas
terminal) take demo case PSV-2101 through the whole review, so that a new user sees a three-signature
record at once.  The reviewers cannot sign in: their password hash is unusable and they are
deactivated once the record is issued.  Every name and number is invented.
"""
from __future__ import annotations

from sqlalchemy import select
from sqlalchemy.orm import Session

from jtcheck.records import audit, workflow
from jtcheck.records.demo import SITE_NAME
from jtcheck.records.models import Case, CaseRevision, PlantUnit, Role, Site, User
from jtcheck.records.workflow import SignFn

#: The demo case that gets a finished record.
DEMO_RECORD_TAG = "PSV-2101"
#: Invented reviewers: (email, name, role).
DEMO_REVIEWERS = (
    ("preparer@kestrel-ridge.invalid", "R. Okafor (invented demo preparer)", Role.ENGINEER),
    ("checker@kestrel-ridge.invalid", "M. Lindqvist (invented demo checker)", Role.CHECKER),
    ("approver@kestrel-ridge.invalid", "A. Haddad (invented demo approver)", Role.APPROVER),
)


def _reviewer(session: Session, email: str, name: str, role: Role) -> User:
    user = session.scalar(select(User).where(User.email == email))
    if user is None:   # "!" is no password hash: nobody can sign in as a demo reviewer
        user = User(email=email, name=name, role=role, password_hash="!", active=True)
        session.add(user)
        session.flush()
        audit.add_entry(session, None, "user", user.id, "create", new=f"{user.email} (invented demo reviewer)")
    user.active = True
    session.commit()
    return user


def issue_demo_record(session: Session, sign: SignFn) -> CaseRevision | None:
    """Prepare, check and approve the demo case's record (revision 0) if the demo site has none yet.

    Returns the approved revision, or None when the demo site or case is missing or a record exists.
    """
    case = session.scalar(select(Case).join(PlantUnit).join(Site)
                          .where(Site.name == SITE_NAME, Case.tag == DEMO_RECORD_TAG))
    if case is None:
        return None
    current = workflow.current_revision(session, case.id)
    if current is None or current.status != "draft" or current.letter != "A":
        return None
    preparer, checker, approver = (_reviewer(session, *r) for r in DEMO_REVIEWERS)
    try:
        workflow.submit_for_check(session, preparer, case.id, sign, "Invented demo: issued for check.")
        workflow.check(session, checker, case.id, sign, "Invented demo: inputs and results checked.")
        workflow.send_for_approval(session, checker, case.id, "Invented demo.")
        revision = workflow.approve(session, approver, case.id, sign, "Invented demo: approved for the record.")
    finally:
        for user in (preparer, checker, approver):
            session.refresh(user)
            user.active = False
        session.commit()
    return revision
