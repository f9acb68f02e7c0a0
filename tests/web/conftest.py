"""Fixtures of the web tests: an app on a fresh database per test module, clients signed in per role.

The database is a SQLite file under ``tmp_path``, or, when the environment variable ``DATABASE_URL`` is
set, that database (PostgreSQL; its name must contain "test", because everything in it is dropped).
The schema is made by the Alembic migrations and removed again afterwards.
"""
from __future__ import annotations

import os
from collections.abc import Iterator
from dataclasses import dataclass

import pytest
from flask import Flask
from flask.testing import FlaskClient
from sqlalchemy.engine import make_url
from web_helpers import LEAN_GAS, PASSWORD, app_config, sign_in

from jtcheck.records import service
from jtcheck.records.db import current_revision, downgrade_database, normalise_database_url, upgrade_database
from jtcheck.records.models import Role
from jtcheck.records.tokens import create_token
from jtcheck.web import create_app
from jtcheck.web.accounts.passwords import hash_password
from jtcheck.web.database import db_session


def env_database_url() -> str | None:
    url = os.environ.get("DATABASE_URL", "").strip()
    return normalise_database_url(url) if url else None


@pytest.fixture(scope="module")
def db_url(tmp_path_factory) -> Iterator[str]:
    url = env_database_url()
    if url is None:
        url = f"sqlite:///{tmp_path_factory.mktemp('web-db') / 'jtcheck.sqlite3'}"
    else:
        name = make_url(url).database or ""
        if "test" not in name:
            pytest.fail(f"DATABASE_URL names the database {name!r}; the tests drop everything in it, so its name "
                        "must contain 'test'")
        if current_revision(url) is not None:   # left over from an interrupted run
            downgrade_database(url, "base")
    upgrade_database(url)
    yield url
    downgrade_database(url, "base")


@dataclass(frozen=True)
class World:
    """Ids and e-mail addresses every test module starts with."""

    emails: dict[Role, str]
    inactive_email: str
    site_id: int
    unit_id: int
    fluid_id: int
    material_id: int


@pytest.fixture(scope="module")
def app(db_url, tmp_path_factory) -> Iterator[Flask]:
    application = create_app(app_config(db_url, str(tmp_path_factory.mktemp("instance"))))
    yield application
    application.extensions["jtcheck_db"].engine.dispose()


@pytest.fixture(scope="module")
def world(app) -> World:
    with app.app_context():
        s = db_session()
        pw = hash_password(PASSWORD)
        admin = service.create_user(s, None, email="admin@example.org", name="Ada Admin", role="admin",
                                    password_hash=pw)
        emails = {Role.ADMIN: admin.email}
        for role in (Role.ENGINEER, Role.CHECKER, Role.APPROVER):
            u = service.create_user(s, admin, email=f"{role.value}@example.org", name=f"{role.value.title()} User",
                                    role=role, password_hash=pw)
            emails[role] = u.email
        inactive = service.create_user(s, admin, email="gone@example.org", name="Gone Engineer", role="engineer",
                                       password_hash=pw, active=False)
        site = service.create_site(s, admin, "Test site", "for the web tests")
        unit = service.create_unit(s, admin, site.id, "Area 1")
        fluid = service.create_fluid(s, admin, "Lean gas", LEAN_GAS, "PR", "table")
        material = service.create_material(s, admin, name="Test carbon steel", min_metal_temperature_k=244.15)
        return World(emails, inactive.email, site.id, unit.id, fluid.id, material.id)


@pytest.fixture
def client(app) -> FlaskClient:
    return app.test_client()


def _client_for(app, world, role: Role) -> FlaskClient:
    c = app.test_client()
    resp = sign_in(c, world.emails[role])
    assert resp.status_code == 302, resp.data
    return c


@pytest.fixture
def engineer(app, world) -> FlaskClient:
    return _client_for(app, world, Role.ENGINEER)


@pytest.fixture
def checker(app, world) -> FlaskClient:
    return _client_for(app, world, Role.CHECKER)


@pytest.fixture
def approver(app, world) -> FlaskClient:
    return _client_for(app, world, Role.APPROVER)


@pytest.fixture
def admin(app, world) -> FlaskClient:
    return _client_for(app, world, Role.ADMIN)


@pytest.fixture(scope="module")
def tokens(app, world) -> dict[Role, str]:
    """An API token per role."""
    out = {}
    with app.app_context():
        s = db_session()
        for role, email in world.emails.items():
            out[role] = create_token(s, service.get_user_by_email(s, email))
    return out


@pytest.fixture(scope="module")
def api(app, tokens):
    """``api(role, method, path, json=...)``: a request to the API with that role's token."""
    c = app.test_client()

    def call(role: Role | None, method: str, path: str, **kwargs):
        headers = dict(kwargs.pop("headers", {}))
        if role is not None:
            headers["Authorization"] = f"Bearer {tokens[role]}"
        return c.open(path, method=method, headers=headers, **kwargs)

    return call
