"""The case-register database as the web app uses it: one engine per app, one session per request."""
from __future__ import annotations

from dataclasses import dataclass

from flask import Flask, current_app
from flask.globals import app_ctx
from sqlalchemy import Engine, text
from sqlalchemy.orm import Session, scoped_session

from jtcheck.records.db import database_url, make_engine, make_session_factory, upgrade_database


@dataclass
class Database:
    """The app's engine and its request-scoped sessions."""

    url: str
    engine: Engine
    sessions: scoped_session[Session]

    def ping(self) -> bool:
        """True if the database answers a trivial query."""
        try:
            with self.engine.connect() as conn:
                conn.execute(text("SELECT 1"))
        except Exception:  # noqa: BLE001 - any failure means "unreachable" for the health check
            return False
        return True


def _scope() -> int:
    # one session per application context: a request, or a `with app.app_context()` block
    return id(app_ctx._get_current_object())


def init_app(app: Flask) -> Database:
    """Make the engine (and the schema, unless ``DB_UPGRADE_ON_START`` is false) and register teardown."""
    url = app.config.get("DATABASE_URL") or database_url(app.instance_path)
    app.config["DATABASE_URL"] = url
    if app.config.get("DB_UPGRADE_ON_START", True):
        upgrade_database(url)
    engine = make_engine(url)
    db = Database(url=url, engine=engine, sessions=scoped_session(make_session_factory(engine), scopefunc=_scope))
    app.extensions["jtcheck_db"] = db

    @app.teardown_appcontext
    def _remove_session(exc: BaseException | None) -> None:
        db.sessions.remove()

    return db


def get_db() -> Database:
    return current_app.extensions["jtcheck_db"]


def db_session() -> Session:
    """The session of the current request."""
    return get_db().sessions()
