"""Alembic environment of the jtcheck case register.

Imports only the models.  The database URL is taken from, in order: the ``database_url`` attribute
set by :func:`jtcheck.records.db.upgrade_database`, ``alembic -x url=...``, the ``DATABASE_URL``
environment variable, and ``sqlalchemy.url`` in ``alembic.ini``.
"""
from __future__ import annotations

import os
from logging.config import fileConfig
from pathlib import Path

from alembic import context
from sqlalchemy import create_engine, event, pool
from sqlalchemy.engine import make_url

from jtcheck.records.models import Base

config = context.config
target_metadata = Base.metadata

if config.config_file_name is not None:   # the alembic command line: logging as alembic.ini says
    fileConfig(config.config_file_name, disable_existing_loggers=False)


def _url() -> str:
    url = (config.attributes.get("database_url") or context.get_x_argument(as_dictionary=True).get("url")
           or os.environ.get("DATABASE_URL", "").strip() or config.get_main_option("sqlalchemy.url"))
    if not url:
        raise RuntimeError("no database URL: set DATABASE_URL, pass -x url=..., or set sqlalchemy.url")
    for prefix in ("postgres://", "postgresql://"):   # the psycopg 3 driver, as jtcheck.records.db does
        if url.startswith(prefix):
            url = "postgresql+psycopg://" + url[len(prefix):]
    return url


def run_migrations_offline() -> None:
    """Write the SQL to stdout (``alembic upgrade head --sql``)."""
    url = _url()
    context.configure(url=url, target_metadata=target_metadata, literal_binds=True,
                      dialect_opts={"paramstyle": "named"}, render_as_batch=url.startswith("sqlite"))
    with context.begin_transaction():
        context.run_migrations()


def run_migrations_online() -> None:
    url = _url()
    parsed = make_url(url)
    if parsed.get_backend_name() == "sqlite" and parsed.database and parsed.database != ":memory:" \
            and not parsed.database.startswith("file:"):
        Path(parsed.database).parent.mkdir(parents=True, exist_ok=True)   # a new instance folder
    engine = create_engine(url, poolclass=pool.NullPool)
    sqlite = engine.dialect.name == "sqlite"
    if sqlite:
        # real transactions around DDL: a failed migration leaves the SQLite file as it was
        @event.listens_for(engine, "connect")
        def _autocommit_driver(dbapi_connection, connection_record):
            dbapi_connection.isolation_level = None

        @event.listens_for(engine, "begin")
        def _begin(conn):
            conn.exec_driver_sql("BEGIN")

    try:
        with engine.connect() as connection:
            context.configure(connection=connection, target_metadata=target_metadata,
                              render_as_batch=sqlite, transactional_ddl=True, compare_type=True)
            with context.begin_transaction():
                context.run_migrations()
    finally:
        engine.dispose()


if context.is_offline_mode():
    run_migrations_offline()
else:
    run_migrations_online()
