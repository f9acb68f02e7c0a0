"""Database connection and schema migrations of the case register.

The database is chosen by :func:`database_url`: the ``DATABASE_URL`` environment variable (PostgreSQL
in production) or else a SQLite file in the application's instance folder.  The schema is created
and changed only by the Alembic migrations (:func:`upgrade_database`), which live in the top-level
``migrations/`` folder of the repository and are shipped inside the wheel as the package
``jtcheck._migrations``.
"""
from __future__ import annotations

import json
import os
from collections.abc import Iterator
from contextlib import contextmanager
from importlib import resources
from pathlib import Path
from typing import Any

from sqlalchemy import Engine, create_engine, event
from sqlalchemy.engine import make_url
from sqlalchemy.orm import Session, sessionmaker

#: File name of the SQLite database inside the instance folder.
SQLITE_FILENAME = "jtcheck.sqlite3"

#: How long a SQLite connection waits for another writer's lock [s].
SQLITE_BUSY_TIMEOUT_S = 15.0

#: Execution option: ``{SQLITE_BEGIN_OPTION: "IMMEDIATE"}`` starts the transaction with the write lock.
SQLITE_BEGIN_OPTION = "jtcheck_sqlite_begin"


def normalise_database_url(url: str) -> str:
    """Use the psycopg 3 driver for PostgreSQL URLs.

    ``postgres://`` (as set by many hosting platforms) and ``postgresql://`` become
    ``postgresql+psycopg://``; every other URL is returned unchanged.
    """
    url = url.strip()
    for prefix in ("postgres://", "postgresql://"):
        if url.startswith(prefix):
            return "postgresql+psycopg://" + url[len(prefix):]
    return url


def database_url(instance_path: str | os.PathLike[str]) -> str:
    """The database to use.

    Parameters
    ----------
    instance_path : path
        The application's instance folder (for a Flask app, ``app.instance_path``).

    Returns
    -------
    str
        ``DATABASE_URL`` from the environment if set and not empty (PostgreSQL URLs normalised to the
        psycopg 3 driver), else ``sqlite:///<instance_path>/jtcheck.sqlite3``.
    """
    env = os.environ.get("DATABASE_URL", "").strip()
    if env:
        return normalise_database_url(env)
    path = Path(instance_path).resolve() / SQLITE_FILENAME
    return f"sqlite:///{path.as_posix()}"


def _json_dumps(obj: Any) -> str:
    # NaN and infinity are not JSON (PostgreSQL refuses them): fail loudly instead of storing them
    return json.dumps(obj, allow_nan=False, ensure_ascii=False)


def _sqlite_file(url: str) -> Path | None:
    u = make_url(url)
    if u.get_backend_name() != "sqlite" or not u.database or u.database == ":memory:" \
            or u.database.startswith("file:"):
        return None
    return Path(u.database)


def _install_sqlite_pragmas(engine: Engine, wal: bool) -> None:
    """Foreign keys ON, WAL journal, and real BEGIN/COMMIT transactions on every SQLite connection.

    The ``sqlite3`` module by default opens transactions only before INSERT/UPDATE/DELETE and not
    before DDL or SELECT; here the driver is put in autocommit mode and SQLAlchemy emits ``BEGIN``
    itself, so that every unit of work (and savepoints) is atomic.  (The recipe of the SQLAlchemy
    SQLite dialect documentation, "Serializable isolation / Savepoints / Transactional DDL".)
    A connection with the execution option ``SQLITE_BEGIN_OPTION = "IMMEDIATE"`` begins with
    ``BEGIN IMMEDIATE`` (takes the write lock at once), which the service layer uses for writes.
    """

    @event.listens_for(engine, "connect")
    def _on_connect(dbapi_connection: Any, connection_record: Any) -> None:
        dbapi_connection.isolation_level = None
        cursor = dbapi_connection.cursor()
        try:
            cursor.execute("PRAGMA foreign_keys = ON")
            cursor.execute(f"PRAGMA busy_timeout = {int(SQLITE_BUSY_TIMEOUT_S * 1000)}")
            if wal:
                cursor.execute("PRAGMA journal_mode = WAL")
        finally:
            cursor.close()

    @event.listens_for(engine, "begin")
    def _on_begin(conn: Any) -> None:
        mode = conn.get_execution_options().get(SQLITE_BEGIN_OPTION, "DEFERRED")
        conn.exec_driver_sql("BEGIN IMMEDIATE" if mode == "IMMEDIATE" else "BEGIN")


def make_engine(url: str, **kwargs: Any) -> Engine:
    """An engine for the case register.

    Parameters
    ----------
    url : str
        Database URL (see :func:`database_url`); ``postgres://`` URLs are normalised.
    **kwargs
        Passed on to :func:`sqlalchemy.create_engine` (e.g. ``echo=True``).

    Notes
    -----
    SQLite: foreign keys ON, WAL journal mode for file databases (readers do not block the writer),
    a busy timeout, transactional BEGIN/COMMIT; the folder of the database file is created.
    PostgreSQL: a small connection pool with ``pool_pre_ping`` (dropped connections are replaced)
    and recycling after 30 minutes.  JSON columns refuse NaN and infinity.
    """
    url = normalise_database_url(url)
    backend = make_url(url).get_backend_name()
    kwargs.setdefault("json_serializer", _json_dumps)
    if backend == "sqlite":
        path = _sqlite_file(url)
        if path is not None:
            path.parent.mkdir(parents=True, exist_ok=True)
        engine = create_engine(url, **kwargs)
        _install_sqlite_pragmas(engine, wal=path is not None)
        return engine
    if backend == "postgresql":
        kwargs.setdefault("pool_pre_ping", True)
        kwargs.setdefault("pool_size", 5)
        kwargs.setdefault("max_overflow", 10)
        kwargs.setdefault("pool_recycle", 1800)
    return create_engine(url, **kwargs)


def make_session_factory(engine: Engine) -> sessionmaker[Session]:
    """Sessions bound to ``engine``.

    Objects stay readable after commit (``expire_on_commit=False``), so a web view can render what a
    service function returned; use one session per request or command.
    """
    return sessionmaker(bind=engine, expire_on_commit=False)


# -- migrations --------------------------------------------------------------------------------
def migrations_path() -> Path:
    """The folder holding Alembic's ``env.py`` and ``versions/``.

    From an installed wheel (or an editable install), the package ``jtcheck._migrations``; from a
    plain source checkout, the repository's top-level ``migrations/`` folder.

    Raises
    ------
    FileNotFoundError
        If neither holds an ``env.py``.
    """
    candidates: list[Path] = []
    try:
        candidates.append(Path(str(resources.files("jtcheck._migrations"))))
    except (ModuleNotFoundError, TypeError):
        pass
    candidates.append(Path(__file__).resolve().parents[2] / "migrations")
    for path in candidates:
        if (path / "env.py").is_file() and (path / "versions").is_dir():
            return path
    raise FileNotFoundError("Alembic migrations not found; looked in: " + ", ".join(map(str, candidates)))


def alembic_config(url: str):
    """An Alembic :class:`~alembic.config.Config` for ``url`` that needs no ``alembic.ini``."""
    from alembic.config import Config

    cfg = Config()
    cfg.set_main_option("script_location", str(migrations_path()))
    # passed as an attribute, not an ini option: URLs may hold '%' that configparser would interpolate
    cfg.attributes["database_url"] = normalise_database_url(url)
    return cfg


def upgrade_database(url: str, revision: str = "head") -> None:
    """Apply the migrations up to ``revision`` (default: the newest) to the database at ``url``.

    A new SQLite file (and its folder) is created if needed.
    """
    from alembic import command

    path = _sqlite_file(normalise_database_url(url))
    if path is not None:
        path.parent.mkdir(parents=True, exist_ok=True)
    command.upgrade(alembic_config(url), revision)


def downgrade_database(url: str, revision: str) -> None:
    """Undo migrations down to ``revision`` (``"base"`` removes every table of the case register)."""
    from alembic import command

    command.downgrade(alembic_config(url), revision)


def current_revision(url: str) -> str | None:
    """The migration revision the database at ``url`` is at (None for an empty database)."""
    from alembic.runtime.migration import MigrationContext

    engine = create_engine(normalise_database_url(url))
    try:
        with engine.connect() as conn:
            return MigrationContext.configure(conn).get_current_revision()
    finally:
        engine.dispose()


def head_revision() -> str:
    """The newest migration revision shipped with this version of jtcheck."""
    from alembic.script import ScriptDirectory

    head = ScriptDirectory(str(migrations_path())).get_current_head()
    assert head is not None
    return head


@contextmanager
def session_scope(factory: sessionmaker[Session]) -> Iterator[Session]:
    """A session that is closed afterwards (service functions commit or roll back themselves)."""
    session = factory()
    try:
        yield session
    finally:
        session.close()
