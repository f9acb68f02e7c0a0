"""Units of work of the case register: one transaction per write, and the lock that orders edits of a case.

Every operation that writes runs inside :func:`transaction`: it commits on success and on any error
rolls the session back and re-raises, so that nothing is ever half-written.
"""
from __future__ import annotations

from collections.abc import Iterator
from contextlib import contextmanager

from sqlalchemy import select
from sqlalchemy.orm import Session

from jtcheck.records.db import SQLITE_BEGIN_OPTION
from jtcheck.records.models import Case


def begin_for_writing(session: Session) -> None:
    """On SQLite, start the unit of work holding the write lock (``BEGIN IMMEDIATE``).

    In WAL mode a deferred transaction that has read before another connection committed cannot
    write any more ("database is locked" at once, not after the busy timeout); taking the lock at the
    start makes concurrent writers queue instead.  A transaction the session already has open (for
    example from loading the signed-in user) is committed first, unless it holds unflushed changes:
    then the unit of work joins it, as on PostgreSQL.
    """
    if session.get_bind().dialect.name != "sqlite":
        return
    if session.in_transaction():
        if session.new or session.dirty or session.deleted:
            return
        session.commit()
    session.connection(execution_options={SQLITE_BEGIN_OPTION: "IMMEDIATE"})


@contextmanager
def transaction(session: Session) -> Iterator[None]:
    """Commit the block's work, or roll all of it back on any error."""
    try:
        begin_for_writing(session)
        yield
        session.commit()
    except BaseException:
        session.rollback()
        raise


def lock_case_row(session: Session, case_id: int) -> None:
    """Lock the case's row until the transaction ends (PostgreSQL ``FOR NO KEY UPDATE``; SQLite writers queue
    on ``BEGIN IMMEDIATE`` anyway): review steps and edits of one case then run one after the other."""
    session.execute(select(Case.id).where(Case.id == case_id).with_for_update(key_share=True))
