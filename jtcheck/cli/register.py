"""The case register, opened for a command (no web import: the records layer directly)."""
from __future__ import annotations

import os
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from sqlalchemy.orm import Session


def instance_dir() -> Path:
    """The instance folder: JTCHECK_INSTANCE, else ./instance."""
    return Path(os.environ.get("JTCHECK_INSTANCE", "instance"))


@contextmanager
def register_session() -> Iterator[Session]:
    """A session on the case register named by DATABASE_URL (else ./instance), schema brought up to date;
    closed (and its connections released) on exit."""
    from jtcheck.records.db import database_url, make_engine, make_session_factory, upgrade_database

    url = database_url(os.environ.get("JTCHECK_INSTANCE", "instance"))
    upgrade_database(url)
    engine = make_engine(url)
    session = make_session_factory(engine)()
    try:
        yield session
    finally:
        session.close()
        engine.dispose()
