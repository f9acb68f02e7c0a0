"""Fixtures of the case-register tests.

Each test module gets a fresh database built by the Alembic migrations: a SQLite file under
``tmp_path``, or, when the environment variable ``DATABASE_URL`` is set, that PostgreSQL database
(its name must contain "test"), in a schema of the module's own.  Afterwards the migrations are run
down to base and the fixture checks that no table (and no trigger function) is left.
"""
from __future__ import annotations

import os
import uuid
from dataclasses import dataclass

import pytest
from sqlalchemy import create_engine, inspect, select, text
from sqlalchemy.engine import make_url

from jtcheck.records import service
from jtcheck.records.db import (
    downgrade_database,
    make_engine,
    make_session_factory,
    normalise_database_url,
    upgrade_database,
)
from jtcheck.records.models import Role, User

from .register_helpers import BAR, LEAN_GAS, T0, unique


def env_database_url() -> str | None:
    url = os.environ.get("DATABASE_URL", "").strip()
    return normalise_database_url(url) if url else None


def assert_no_tables(url: str) -> None:
    """Drop Alembic's bookkeeping table and check that nothing else is left."""
    engine = create_engine(url)
    try:
        with engine.begin() as conn:
            conn.execute(text("DROP TABLE IF EXISTS alembic_version"))
        insp = inspect(engine)
        assert insp.get_table_names() == []
        if engine.dialect.name == "postgresql":
            with engine.connect() as conn:
                funcs = conn.execute(text("SELECT proname FROM pg_proc p JOIN pg_namespace n ON n.oid = p.pronamespace "
                                          "WHERE n.nspname = current_schema()")).scalars().all()
            assert funcs == []
    finally:
        engine.dispose()


@pytest.fixture(scope="module")
def db_url(tmp_path_factory):
    """A database at the migrations' head for one test module; emptied and checked afterwards.

    On PostgreSQL the module works in a schema of its own inside the ``DATABASE_URL`` database
    (through ``search_path``), so that other fixtures using the same database are not disturbed.
    """
    url = env_database_url()
    if url is None:
        url = f"sqlite:///{tmp_path_factory.mktemp('register') / 'jtcheck.sqlite3'}"
        upgrade_database(url)
        yield url
        downgrade_database(url, "base")
        assert_no_tables(url)
        return
    name = make_url(url).database or ""
    if "test" not in name:
        pytest.fail(f"DATABASE_URL names the database {name!r}; the tests drop everything they create in it, so "
                    "its name must contain 'test'")
    schema = f"jtcheck_records_test_{uuid.uuid4().hex[:12]}"
    admin = create_engine(url)
    with admin.begin() as conn:
        conn.execute(text(f'CREATE SCHEMA "{schema}"'))
    scoped = make_url(url).update_query_dict({"options": f"-csearch_path={schema}"})
    scoped_url = scoped.render_as_string(hide_password=False)
    try:
        upgrade_database(scoped_url)
        yield scoped_url
        downgrade_database(scoped_url, "base")
        assert_no_tables(scoped_url)
    finally:
        with admin.begin() as conn:
            conn.execute(text(f'DROP SCHEMA IF EXISTS "{schema}" CASCADE'))
        admin.dispose()


@pytest.fixture(scope="module")
def engine(db_url):
    eng = make_engine(db_url)
    yield eng
    eng.dispose()


@pytest.fixture(scope="module")
def session_factory(engine):
    return make_session_factory(engine)


@pytest.fixture
def session(session_factory):
    with session_factory() as s:
        yield s


@dataclass(frozen=True)
class World:
    """Ids of the records every test module starts with."""

    emails: dict[Role, str]
    inactive_email: str
    site_id: int
    unit_id: int
    other_unit_id: int
    fluid_id: int
    material_id: int
    cold_material_id: int


@pytest.fixture(scope="module")
def world(session_factory) -> World:
    with session_factory() as s:
        admin = service.create_user(s, None, email="admin@example.org", name="Ada Admin", role="admin",
                                    password_hash="hash-a")
        emails = {Role.ADMIN: admin.email}
        for role in (Role.ENGINEER, Role.CHECKER, Role.APPROVER):
            u = service.create_user(s, admin, email=f"{role.value}@example.org", name=f"{role.value.title()} User",
                                    role=role, password_hash="hash-" + role.value)
            emails[role] = u.email
        inactive = service.create_user(s, admin, email="gone@example.org", name="Gone Engineer", role="engineer",
                                       password_hash="hash-g", active=False)
        eng = s.scalar(select(User).where(User.email == emails[Role.ENGINEER]))
        site = service.create_site(s, eng, "Test site", "for the tests")
        unit = service.create_unit(s, eng, site.id, "Area 1")
        other = service.create_unit(s, eng, site.id, "Area 2")
        fluid = service.create_fluid(s, eng, "Lean gas", LEAN_GAS, "PR", "table")
        material = service.create_material(s, admin, name="Test carbon steel", min_metal_temperature_k=244.15)
        cold = service.create_material(s, admin, name="Test stainless", min_metal_temperature_k=77.15)
        return World(emails, inactive.email, site.id, unit.id, other.id, fluid.id, material.id, cold.id)


@pytest.fixture
def users(session, world) -> dict[Role, User]:
    """The users of each role, loaded in this test's session."""
    return {role: session.scalar(select(User).where(User.email == email)) for role, email in world.emails.items()}


@pytest.fixture
def engineer(users):
    return users[Role.ENGINEER]


@pytest.fixture
def case_data(world):
    """Valid inputs of a case (SI): 70 bar(a), 20 degC to 10 bar(a), with credible extremes."""

    def make(**overrides):
        data = {"unit_id": world.unit_id, "tag": unique("PCV"), "service": "test letdown", "kind": "control_valve",
                "fluid_id": world.fluid_id, "inlet_pressure_pa": 70 * BAR, "inlet_temperature_k": T0 + 20.0,
                "inlet_temperature_min_k": T0 + 5.0, "inlet_pressure_max_pa": 80 * BAR,
                "outlet_pressure_pa": 10 * BAR, "mass_flow_kg_per_s": 2.0, "material_id": world.material_id,
                "margin_k": 5.0, "display_units": {"inlet_pressure": "bara", "inlet_temperature": "degC"}}
        data.update(overrides)
        return data

    return make

