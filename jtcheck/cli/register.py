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


def existing_register_url() -> tuple[str | None, str]:
    """The register to consult for reading only, never created: ``(url, "")`` when DATABASE_URL is set or the
    instance folder holds a register with its schema, else ``(None, why there is none)``."""
    from jtcheck.records.db import SQLITE_FILENAME, current_revision, database_url

    instance = Path(os.environ.get("JTCHECK_INSTANCE", "instance"))
    if not os.environ.get("DATABASE_URL", "").strip() and not (instance / SQLITE_FILENAME).is_file():
        return None, (f"no register found (DATABASE_URL is not set and {instance / SQLITE_FILENAME} does not exist): "
                      "the signatures alone were checked, not that the file is a stored record")
    url = database_url(instance)
    try:
        revision = current_revision(url)
    except Exception as exc:   # unreachable server, unreadable file: say so, and check the file on its own
        return None, (f"the register could not be read ({type(exc).__name__}): the signatures alone were checked, "
                      "not that the file is a stored record")
    if revision is None:
        return None, ("the register named by DATABASE_URL or the instance folder is empty: the signatures alone "
                      "were checked, not that the file is a stored record")
    return url, ""


@contextmanager
def reading_session(url: str) -> Iterator[Session]:
    """A session on the existing register at ``url``, without migrating it; closed on exit."""
    from jtcheck.records.db import make_engine, make_session_factory

    engine = make_engine(url)
    session = make_session_factory(engine)()
    try:
        yield session
    finally:
        session.close()
        engine.dispose()


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
