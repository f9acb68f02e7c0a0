"""Fixtures of the browser tests: the real web app on a free port of 127.0.0.1, driven by Debian's chromium.

The app is made by :func:`jtcheck.web.create_app` with its production settings (CSRF on, Secure session
cookie, real argon2 hashing) and served by werkzeug's threaded server in a thread of the test process.
Its database is a fresh SQLite file under ``tmp_path``, or, when ``DATABASE_URL`` is set, a schema of its
own inside that PostgreSQL database (whose name must contain "test"), dropped afterwards.

Chromium is Debian's (``/usr/bin/chromium``, installed by ``tests/tools/ensure_chromium.sh``), driven by
Playwright for Python; Playwright's own browser downloads are never used.  Without that binary the tests
are skipped, saying so.
"""
from __future__ import annotations

import os
import re
import secrets
import threading
import uuid
from collections.abc import Iterator
from dataclasses import dataclass
from pathlib import Path

import pytest
from sqlalchemy import create_engine, text
from sqlalchemy.engine import make_url
from werkzeug.serving import make_server

from jtcheck.records import service
from jtcheck.records.db import normalise_database_url
from jtcheck.records.models import Role

CHROMIUM = Path("/usr/bin/chromium")
CHROMIUM_ARGS = ["--headless=new", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
                 "--disable-background-networking", "--disable-component-update", "--disable-sync"]
#: Playwright's waits [ms]: generous, because the first computation of a process loads compiled kernels.
TIMEOUT_MS = 30_000
PASSWORD = "kestrel-ridge-e2e-password"
EMAILS = {Role.ADMIN: "admin@e2e.example.org", Role.ENGINEER: "engineer@e2e.example.org",
          Role.CHECKER: "checker@e2e.example.org", Role.APPROVER: "approver@e2e.example.org"}
NAMES = {Role.ADMIN: "Erin Admin", Role.ENGINEER: "Emil Engineer", Role.CHECKER: "Chloe Checker",
         Role.APPROVER: "Arne Approver"}

#: Invented gas of the fictional Kestrel Ridge terminal (mole fractions); the check value comes from
#: jtcheck.letdown on the same inputs, not from the page.
GAS = {"methane": 0.87, "ethane": 0.06, "propane": 0.025, "n-butane": 0.008, "nitrogen": 0.017,
       "carbon dioxide": 0.02}


@dataclass(frozen=True)
class LiveApp:
    """The running app: its address, and records the tests start from."""

    url: str
    app: object
    unit_name: str
    unit_id: int
    seeded_case_id: int
    gas: dict[str, float]
    record_case_id: int


def _database(tmp_path_factory) -> Iterator[str]:
    url = os.environ.get("DATABASE_URL", "").strip()
    if not url:
        yield f"sqlite:///{tmp_path_factory.mktemp('e2e-db') / 'jtcheck.sqlite3'}"
        return
    url = normalise_database_url(url)
    name = make_url(url).database or ""
    if "test" not in name:
        pytest.fail(f"DATABASE_URL names the database {name!r}; the tests drop what they create in it, so its name "
                    "must contain 'test'")
    schema = f"jtcheck_e2e_{uuid.uuid4().hex[:12]}"
    admin = create_engine(url)
    with admin.begin() as conn:
        conn.execute(text(f'CREATE SCHEMA "{schema}"'))
    try:
        yield make_url(url).update_query_dict({"options": f"-csearch_path={schema}"}).render_as_string(
            hide_password=False)
    finally:
        with admin.begin() as conn:
            conn.execute(text(f'DROP SCHEMA IF EXISTS "{schema}" CASCADE'))
        admin.dispose()


def _warm_up_kernels() -> None:
    """Load (or, on a fresh checkout, compile) the flash kernels before any page waits for them."""
    from jtcheck import Fluid, letdown

    gas = Fluid(GAS, eos="PR")
    letdown(gas, p_in=70e5, t_in=288.15, p_out=8e5)
    letdown(gas, p_in=70e5, t_in=288.15, p_out=[50e5, 8e5])
    gas.phase_envelope()


def _seed(app) -> tuple[str, int, int, int]:
    """Accounts of each role, a site with a unit, one case the checker test opens and one the review test takes
    through the review."""
    from jtcheck.web.accounts.passwords import hash_password
    from jtcheck.web.database import db_session

    with app.app_context():
        s = db_session()
        pw = hash_password(PASSWORD)
        admin = service.create_user(s, None, email=EMAILS[Role.ADMIN], name=NAMES[Role.ADMIN], role=Role.ADMIN,
                                    password_hash=pw)
        engineer = service.create_user(s, admin, email=EMAILS[Role.ENGINEER], name=NAMES[Role.ENGINEER],
                                       role=Role.ENGINEER, password_hash=pw)
        for role in (Role.CHECKER, Role.APPROVER):
            service.create_user(s, admin, email=EMAILS[role], name=NAMES[role], role=role, password_hash=pw)
        site = service.create_site(s, engineer, "Kestrel Ridge gas terminal (e2e)", "Invented site for the tests.")
        unit = service.create_unit(s, engineer, site.id, "Town-main station")
        fluid = service.create_fluid(s, engineer, "Seeded pipeline gas", GAS, "PR", "table")
        seeded = {"unit_id": unit.id, "tag": "PCV-E2E-SEED", "service": "town-main regulator (invented)",
                  "kind": "control_valve", "fluid_id": fluid.id, "inlet_pressure_pa": 71.01325e5,
                  "inlet_temperature_k": 288.15, "outlet_pressure_pa": 8.0e5,
                  "display_units": {"inlet_pressure": "barg", "inlet_temperature": "degC", "outlet_pressure": "bara"}}
        case = service.create_case(s, engineer, seeded)
        record_case = service.create_case(s, engineer, {**seeded, "tag": "PCV-E2E-REC",
                                                        "service": "district regulator, record test (invented)"})
        return unit.name, unit.id, case.id, record_case.id


@pytest.fixture(scope="session")
def live_app(tmp_path_factory) -> Iterator[LiveApp]:
    """The app served on 127.0.0.1 for the whole session."""
    from jtcheck.web import create_app

    databases = _database(tmp_path_factory)
    db_url = next(databases)
    app = create_app({"DATABASE_URL": db_url, "JTCHECK_INSTANCE": str(tmp_path_factory.mktemp("e2e-instance")),
                      "SECRET_KEY": secrets.token_urlsafe(48)})
    server = make_server("127.0.0.1", 0, app, threaded=True)
    thread = threading.Thread(target=server.serve_forever, name="jtcheck-e2e-server", daemon=True)
    try:
        unit_name, unit_id, case_id, record_case_id = _seed(app)
        _warm_up_kernels()
        thread.start()
        yield LiveApp(url=f"http://127.0.0.1:{server.server_port}", app=app, unit_name=unit_name, unit_id=unit_id,
                      seeded_case_id=case_id, gas=dict(GAS), record_case_id=record_case_id)
    finally:
        server.shutdown()
        server.server_close()
        thread.join(timeout=10)
        app.extensions["jtcheck_db"].engine.dispose()
        databases.close()       # drops the PostgreSQL schema


@pytest.fixture(scope="session")
def browser():
    """Debian's chromium, headless, through Playwright (no Playwright browser download)."""
    if not CHROMIUM.exists():
        pytest.skip(f"{CHROMIUM} is missing: install Debian's chromium (tests/tools/ensure_chromium.sh) to run the "
                    "browser tests")
    from playwright.sync_api import sync_playwright

    with sync_playwright() as pw:
        chromium = pw.chromium.launch(executable_path=str(CHROMIUM), args=CHROMIUM_ARGS, headless=True)
        try:
            yield chromium
        finally:
            chromium.close()


@pytest.fixture
def page(browser, live_app):
    """A fresh browser context (no cookies) and page, pointed at the app."""
    context = browser.new_context(base_url=live_app.url, viewport={"width": 1280, "height": 900})
    context.set_default_timeout(TIMEOUT_MS)
    pg = context.new_page()
    try:
        yield pg
    finally:
        context.close()


@pytest.fixture
def sign_in():
    """``sign_in(page, role)``: sign in through the login page as the seeded user of ``role``."""
    from playwright.sync_api import expect

    def go(page, role: Role) -> None:
        page.goto("/")                                   # anonymous: sent to the login page
        expect(page).to_have_url(re.compile(r"/login\?next="))
        page.get_by_label("E-mail address").fill(EMAILS[role])
        page.get_by_label("Password").fill(PASSWORD)
        page.get_by_role("button", name="Sign in").click()
        expect(page.get_by_role("heading", name="Letdown cases")).to_be_visible()
        expect(page.locator("header .who")).to_contain_text(NAMES[role])

    return go
