"""The Alembic migrations: upgrade to head and back to base, on SQLite and on PostgreSQL."""
from __future__ import annotations

import os
import uuid

import pytest
from alembic.autogenerate import compare_metadata
from alembic.runtime.migration import MigrationContext
from sqlalchemy import create_engine, inspect, text
from sqlalchemy.engine import make_url
from sqlalchemy.exc import DBAPIError, OperationalError

from jtcheck.records.db import current_revision, downgrade_database, head_revision, upgrade_database
from jtcheck.records.models import Base

#: Opens a database (see tests/conftest.py): the PostgreSQL run of `make test` includes this module.
pytestmark = pytest.mark.database

TABLES = {"users", "sites", "units", "fluids", "materials", "cases", "case_results", "audit_log", "case_revisions",
          "review_steps"}


def _schema_differences(url: str) -> list:
    engine = create_engine(url)
    try:
        with engine.connect() as conn:
            return compare_metadata(MigrationContext.configure(conn, opts={"compare_type": True}), Base.metadata)
    finally:
        engine.dispose()


def _check_round_trip(url: str) -> None:
    upgrade_database(url)
    assert current_revision(url) == head_revision()
    engine = create_engine(url)
    try:
        assert TABLES <= set(inspect(engine).get_table_names())
        assert _schema_differences(url) == [], "the models and the migrations disagree"
        with engine.begin() as conn:   # the audit triggers exist and work on raw SQL
            conn.execute(text("INSERT INTO audit_log (at, entity, action) VALUES (CURRENT_TIMESTAMP, 'x', 'test')"))
        for statement in ("UPDATE audit_log SET action = 'changed'", "DELETE FROM audit_log"):
            with pytest.raises(DBAPIError, match="append-only"), engine.begin() as conn:
                conn.execute(text(statement))
    finally:
        engine.dispose()
    downgrade_database(url, "base")
    assert current_revision(url) is None
    engine = create_engine(url)
    try:
        assert set(inspect(engine).get_table_names()) <= {"alembic_version"}
        with engine.begin() as conn:
            conn.execute(text("DROP TABLE alembic_version"))
        assert inspect(engine).get_table_names() == []
    finally:
        engine.dispose()


def test_sqlite_upgrade_head_and_downgrade_base(tmp_path):
    _check_round_trip(f"sqlite:///{tmp_path / 'migrations.sqlite3'}")


def test_sqlite_upgrade_twice_is_harmless(tmp_path):
    url = f"sqlite:///{tmp_path / 'twice.sqlite3'}"
    upgrade_database(url)
    upgrade_database(url)
    assert current_revision(url) == head_revision()


def _postgres_server_url() -> str:
    """The server of DATABASE_URL if that is PostgreSQL, else the local one; maintenance database."""
    env = os.environ.get("DATABASE_URL", "").strip()
    if env.startswith(("postgres://", "postgresql")):
        url = make_url(env.replace("postgres://", "postgresql://", 1))
    else:
        url = make_url("postgresql://postgres@127.0.0.1:5432/postgres")
    return url.set(drivername="postgresql+psycopg", database="postgres").render_as_string(hide_password=False)


@pytest.fixture
def throwaway_postgres():
    """A new, empty PostgreSQL database, dropped afterwards; skip only if no server answers."""
    server = _postgres_server_url()
    admin = create_engine(server, isolation_level="AUTOCOMMIT")
    try:
        with admin.connect() as conn:
            conn.execute(text("SELECT 1"))
    except OperationalError as exc:
        admin.dispose()
        reason = f"no PostgreSQL server reachable at {make_url(server).render_as_string()}: {exc.orig}"
        print(reason)
        pytest.skip(reason)
    name = f"jtcheck_migration_test_{uuid.uuid4().hex[:12]}"
    with admin.connect() as conn:
        conn.execute(text(f'CREATE DATABASE "{name}"'))
    try:
        yield make_url(server).set(database=name).render_as_string(hide_password=False)
    finally:
        with admin.connect() as conn:
            conn.execute(text(f'DROP DATABASE IF EXISTS "{name}" WITH (FORCE)'))
        admin.dispose()


def test_postgresql_upgrade_head_and_downgrade_base(throwaway_postgres):
    _check_round_trip(throwaway_postgres)
    engine = create_engine(throwaway_postgres)
    try:
        with engine.connect() as conn:
            left = conn.execute(text("SELECT proname FROM pg_proc p JOIN pg_namespace n ON n.oid = p.pronamespace "
                                     "WHERE n.nspname = 'public'")).scalars().all()
        assert left == [], "the trigger function must be dropped by the downgrade"
    finally:
        engine.dispose()


def test_postgresql_refuses_truncate_of_the_audit_log(throwaway_postgres):
    upgrade_database(throwaway_postgres)
    engine = create_engine(throwaway_postgres)
    try:
        with pytest.raises(DBAPIError, match="append-only"), engine.begin() as conn:
            conn.execute(text("TRUNCATE audit_log"))
    finally:
        engine.dispose()
    downgrade_database(throwaway_postgres, "base")


def test_sqlite_fluids_admit_gerg2008_after_0009_and_still_refuse_other_models(tmp_path):
    url = f"sqlite:///{tmp_path / 'gerg.sqlite3'}"
    upgrade_database(url)
    engine = create_engine(url)
    insert = ("INSERT INTO fluids (name, composition, eos, kij_mode, notes, created_by_id, updated_by_id, created_at, "
              "updated_at, version) VALUES (:name, '[]', :eos, 'table', '', 1, 1, CURRENT_TIMESTAMP, "
              "CURRENT_TIMESTAMP, 1)")
    try:
        with engine.begin() as conn:
            conn.execute(text("PRAGMA foreign_keys=OFF"))
            conn.execute(text(insert), {"name": "h2", "eos": "GERG2008"})
        with pytest.raises(DBAPIError), engine.begin() as conn:
            conn.execute(text("PRAGMA foreign_keys=OFF"))
            conn.execute(text(insert), {"name": "x", "eos": "BWRS"})
    finally:
        engine.dispose()
    downgrade_database(url, "0008")   # the fluid takes PR, and its notes say so
    engine = create_engine(url)
    try:
        with engine.connect() as conn:
            eos, notes = conn.execute(text("SELECT eos, notes FROM fluids WHERE name = 'h2'")).one()
    finally:
        engine.dispose()
    assert eos == "PR" and "GERG2008 changed to PR" in notes
