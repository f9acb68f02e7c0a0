"""Health check, the first start (admin account, demo site), the WSGI entry and the inline diagram."""
from __future__ import annotations

import importlib
import re
import sys

import pytest
from sqlalchemy import func, select
from web_helpers import FAST_HASHING, app_config

from jtcheck.records.demo import SITE_NAME
from jtcheck.records.models import Case, Role, Site, User
from jtcheck.web import create_app
from jtcheck.web.__main__ import bootstrap
from jtcheck.web.cases.diagram import inline_svg
from jtcheck.web.database import db_session

#: Opens a database (see tests/conftest.py): the PostgreSQL run of `make test` includes this module.
pytestmark = pytest.mark.database


def test_healthz_reports_the_database(client):
    resp = client.get("/healthz")
    assert resp.status_code == 200
    assert resp.get_json() == {"status": "ok", "database": "ok"}


def test_healthz_is_503_when_the_database_is_unreachable(tmp_path):
    cfg = app_config("postgresql://nobody@127.0.0.1:1/nothing_test", str(tmp_path))
    down = create_app(cfg)
    try:
        resp = down.test_client().get("/healthz")
        assert resp.status_code == 503
        assert resp.get_json() == {"status": "degraded", "database": "unreachable"}
        page = down.test_client().post("/login", data={"email": "a@example.org", "password": "x"})
        assert page.status_code == 503 and b"not answering" in page.data
    finally:
        down.extensions["jtcheck_db"].engine.dispose()


def test_first_start_makes_an_admin_with_a_random_password_and_loads_the_demo(tmp_path, monkeypatch):
    monkeypatch.delenv("DATABASE_URL", raising=False)
    url = f"sqlite:///{tmp_path / 'first.sqlite3'}"
    app = create_app({"DATABASE_URL": url, "JTCHECK_INSTANCE": str(tmp_path), "SECRET_KEY": "k" * 48,
                      "SESSION_COOKIE_SECURE": False, "WTF_CSRF_ENABLED": False, **FAST_HASHING})
    try:
        lines = bootstrap(app, "http://127.0.0.1:8000")
        m = re.search(r"log in at http://127.0.0.1:8000 as (\S+) with password (\S+) ; change it after logging in",
                      lines[0])
        assert m, lines
        email, password = m.groups()
        assert len(password) >= 16
        assert any("demo" in line for line in lines)
        with app.app_context():
            s = db_session()
            assert s.scalar(select(Site.name)) == SITE_NAME
            assert s.scalar(select(func.count()).select_from(Case)) == 7
            admin = s.scalar(select(User).where(User.email == email))
            assert admin.role == Role.ADMIN and password not in admin.password_hash
        c = app.test_client()
        assert c.post("/login", data={"email": email, "password": password}).status_code == 302
        assert "PCV-1101" in c.get("/cases").data.decode()

        again = bootstrap(app, "http://127.0.0.1:8000")
        assert "an admin account exists" in again[0] and password not in " ".join(again)
        other = bootstrap(create_app({"DATABASE_URL": url, "JTCHECK_INSTANCE": str(tmp_path), "SECRET_KEY": "k" * 48,
                                      **FAST_HASHING}), "http://127.0.0.1:8000")
        assert "an admin account exists" in other[0]
        reset = bootstrap(app, "http://x", reset_admin_password=True)
        new_password = reset[0].split(": ", 1)[1].split(" ;", 1)[0]
        assert new_password != password
        assert c.post("/login", data={"email": email, "password": new_password}).status_code == 302
    finally:
        app.extensions["jtcheck_db"].engine.dispose()


def test_wsgi_entry_point_builds_the_app_from_the_environment(tmp_path, monkeypatch):
    monkeypatch.setenv("JTCHECK_INSTANCE", str(tmp_path))
    monkeypatch.setenv("DATABASE_URL", f"sqlite:///{tmp_path / 'wsgi.sqlite3'}")
    monkeypatch.setenv("SECRET_KEY", "w" * 48)
    monkeypatch.delitem(sys.modules, "jtcheck.web.wsgi", raising=False)
    wsgi = importlib.import_module("jtcheck.web.wsgi")
    try:
        assert wsgi.app.config["SECRET_KEY"] == "w" * 48
        assert wsgi.app.config["SESSION_COOKIE_SECURE"] is True
        assert wsgi.app.test_client().get("/healthz").status_code == 200
    finally:
        wsgi.app.extensions["jtcheck_db"].engine.dispose()
        monkeypatch.delitem(sys.modules, "jtcheck.web.wsgi", raising=False)


def test_inline_svg_has_no_styles_or_prolog():
    raw = ('<?xml version="1.0"?>\n<!DOCTYPE svg>\n<svg width="648pt" height="345pt" viewBox="0 0 648 345" '
           'xmlns="http://www.w3.org/2000/svg"><metadata>x</metadata><defs><style type="text/css">*{a:b}</style>'
           '</defs><path d="M 0 0" style="fill: none; stroke: #1b6f8f; stroke-width: 2; stroke-linecap: square; '
           'behavior: url(x)"/></svg>')
    svg = inline_svg(raw)
    assert svg.startswith('<svg class="pt-diagram"')
    assert "<?xml" not in svg and "DOCTYPE" not in svg and "<metadata" not in svg and "<style" not in svg
    assert 'fill="none" stroke="#1b6f8f" stroke-width="2" stroke-linecap="square"' in svg
    assert "style=" not in svg and "behavior" not in svg and 'width="648pt"' not in svg
    assert '<title id="pt-diagram-title">' in svg


def test_pyproject_ships_the_templates_and_the_style_sheet():
    import fnmatch
    import tomllib
    from pathlib import Path

    repo = Path(__file__).resolve().parents[2]
    config = tomllib.loads((repo / "pyproject.toml").read_text())["tool"]["setuptools"]
    assert config["package-dir"]["jtcheck._templates"] == "templates"
    assert "jtcheck._templates" in config["packages"] and "jtcheck.web" in config["packages"]
    globs = config["package-data"]["jtcheck._templates"]
    for path in (repo / "templates" / "web").rglob("*.html"):
        rel = path.relative_to(repo / "templates").as_posix()
        assert any(fnmatch.fnmatch(rel, g) and rel.count("/") == g.count("/") for g in globs), rel
    for path in (repo / "jtcheck" / "web" / "static").iterdir():
        rel = path.relative_to(repo / "jtcheck" / "web").as_posix()
        assert any(fnmatch.fnmatch(rel, g) for g in config["package-data"]["jtcheck.web"]), rel


def test_environment_settings(monkeypatch):
    from jtcheck.web.config import from_environment

    monkeypatch.setenv("REDIS_URL", "redis://127.0.0.1:6379/3")
    monkeypatch.setenv("SESSION_COOKIE_SECURE", "0")
    monkeypatch.setenv("SECRET_KEY", "s" * 40)
    monkeypatch.setenv("DATABASE_URL", "postgresql://u@127.0.0.1/x_test")
    monkeypatch.setenv("JTCHECK_PROXY_COUNT", "1")
    monkeypatch.setenv("JTCHECK_MIGRATE_ON_START", "0")
    cfg = from_environment()
    assert cfg["DB_UPGRADE_ON_START"] is False
    assert cfg["RATELIMIT_STORAGE_URI"] == "redis://127.0.0.1:6379/3"
    assert cfg["SESSION_COOKIE_SECURE"] is False and cfg["SECRET_KEY"] == "s" * 40
    assert cfg["DATABASE_URL"] == "postgresql://u@127.0.0.1/x_test" and cfg["PROXY_COUNT"] == 1


def test_batch_and_record_settings_from_the_environment(monkeypatch):
    from jtcheck.web.config import from_environment

    monkeypatch.setenv("BATCH_RUNNER", "thread")
    monkeypatch.setenv("BATCH_UPLOAD_MAX_BYTES", "1000000")
    monkeypatch.setenv("RECORD_PAPER", "Letter")
    cfg = from_environment()
    assert cfg["BATCH_RUNNER"] == "thread" and cfg["BATCH_UPLOAD_MAX_BYTES"] == 1_000_000
    assert cfg["RECORD_PAPER"] == "Letter"
    monkeypatch.setenv("BATCH_JOB_TIMEOUT_S", "soon")
    with pytest.raises(ValueError, match="BATCH_JOB_TIMEOUT_S"):
        from_environment()


def test_the_start_says_to_wait_and_the_admin_password_can_be_reset_through_the_environment(tmp_path, monkeypatch,
                                                                                               capsys):
    """``make run RESET_ADMIN=1`` passes JTCHECK_RESET_ADMIN_PASSWORD=1: a new one-time password is printed."""
    from jtcheck.web.__main__ import RESET_ADMIN_ENV, main

    monkeypatch.setenv("DATABASE_URL", f"sqlite:///{tmp_path / 'reset.sqlite3'}")
    monkeypatch.setenv("JTCHECK_INSTANCE", str(tmp_path))
    monkeypatch.setenv("SECRET_KEY", "r" * 48)
    monkeypatch.delenv(RESET_ADMIN_ENV, raising=False)
    assert main(["--init-only", "--no-demo"]) == 0
    first = capsys.readouterr().out
    assert first.splitlines()[0].startswith("jtcheck web: starting: the first start compiles the calculation kernels")
    assert "with password" in first
    assert main(["--init-only", "--no-demo"]) == 0
    assert "make run RESET_ADMIN=1" in capsys.readouterr().out
    monkeypatch.setenv(RESET_ADMIN_ENV, "1")
    assert main(["--init-only", "--no-demo"]) == 0
    assert "new password for admin@jtcheck.local: " in capsys.readouterr().out
