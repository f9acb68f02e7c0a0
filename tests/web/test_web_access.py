"""Who may reach what: anonymous users nothing (but sign-in and health), roles as the register's rules say,
and the security headers on every answer."""
from __future__ import annotations

import re

import pytest
from sqlalchemy import select, update
from web_helpers import case_form, count, created_id, unique

from jtcheck.records.models import Case, Material, Role, User
from jtcheck.web.database import db_session
from jtcheck.web.security import PUBLIC_ENDPOINTS


def _url(rule) -> str:
    return re.sub(r"<(?:\w+:)?\w+>", "1", rule.rule)


def _routes(app):
    for rule in app.url_map.iter_rules():
        for method in sorted(rule.methods - {"HEAD", "OPTIONS"}):
            yield rule, method


def test_every_page_and_api_route_refuses_anonymous_access(app, client):
    checked = 0
    for rule, method in _routes(app):
        if rule.endpoint in PUBLIC_ENDPOINTS:
            continue
        resp = client.open(_url(rule), method=method)
        if rule.endpoint.startswith("api."):
            assert resp.status_code == 401, (rule.rule, method, resp.status_code)
            assert resp.get_json()["error"]["message"], rule.rule
            assert resp.headers["WWW-Authenticate"].startswith("Bearer")
        else:
            assert resp.status_code == 302, (rule.rule, method, resp.status_code)
            assert "/login" in resp.headers["Location"], rule.rule
        checked += 1
    assert checked > 30


def test_only_sign_in_health_and_style_sheet_are_public(app, client):
    assert PUBLIC_ENDPOINTS == {"auth.login", "health.healthz", "static"}
    assert client.get("/login").status_code == 200
    assert client.get("/healthz").status_code == 200
    with client.get("/static/style.css") as resp:   # a file response: close it
        assert resp.status_code == 200


def test_api_refuses_a_bad_or_foreign_token(api):
    for header in ("Bearer nonsense", "Bearer jtc_" + "x" * 43, "Basic dXNlcjpwYXNz", "Bearer "):
        resp = api(None, "GET", "/api/v1/cases", headers={"Authorization": header})
        assert resp.status_code == 401, header
        assert resp.get_json()["error"]["field"] == "Authorization"


def test_api_does_not_accept_the_browser_session(engineer):
    """The API is exempt from CSRF checks, so it must never act on the session cookie."""
    assert engineer.get("/api/v1/cases").status_code == 401
    assert engineer.post("/api/v1/fluids", json={"name": "x", "composition": {"methane": 1}}).status_code == 401


def test_token_of_a_deactivated_account_stops_working(app, api, tokens, world):
    with app.app_context():
        s = db_session()
        s.execute(update(User).where(User.email == world.emails[Role.APPROVER]).values(active=False))
        s.commit()
    try:
        assert api(Role.APPROVER, "GET", "/api/v1/cases").status_code == 401
    finally:
        with app.app_context():
            s = db_session()
            s.execute(update(User).where(User.email == world.emails[Role.APPROVER]).values(active=True))
            s.commit()
    assert api(Role.APPROVER, "GET", "/api/v1/cases").status_code == 200


@pytest.fixture(scope="module")
def engineers_case(app, world):
    c = app.test_client()
    from web_helpers import sign_in

    sign_in(c, world.emails[Role.ENGINEER])
    resp = c.post("/cases/new", data=case_form(world, tag=unique("CHK")))
    assert resp.status_code == 302, resp.data
    return created_id(resp)


def _case_row(app, case_id):
    with app.app_context():
        case = db_session().get(Case, case_id)
        return (case.version, case.inlet_pressure_pa, case.tag)


@pytest.mark.parametrize("role", [Role.CHECKER, Role.APPROVER])
def test_checker_and_approver_cannot_edit_case_inputs_on_pages(app, world, engineers_case, role, request):
    c = request.getfixturevalue(role.value)
    before = _case_row(app, engineers_case)
    assert c.get(f"/cases/{engineers_case}/edit").status_code == 403
    resp = c.post(f"/cases/{engineers_case}/edit", data=case_form(world, inlet_pressure="99", version="1"))
    assert resp.status_code == 403
    assert b"may not" in resp.data
    assert c.get("/cases/new").status_code == 403
    assert c.post("/cases/new", data=case_form(world)).status_code == 403
    assert c.post(f"/cases/{engineers_case}/delete").status_code == 403
    assert _case_row(app, engineers_case) == before
    page = c.get(f"/cases/{engineers_case}").data.decode()
    assert "Edit inputs" not in page and "Delete case" not in page


@pytest.mark.parametrize("role", [Role.CHECKER, Role.APPROVER])
def test_checker_and_approver_cannot_edit_case_inputs_by_api(app, api, world, engineers_case, role):
    before = _case_row(app, engineers_case)
    resp = api(role, "PATCH", f"/api/v1/cases/{engineers_case}", json={"inlet_pressure": "99 barg"})
    assert resp.status_code == 403
    assert "may not" in resp.get_json()["error"]["message"]
    assert api(role, "POST", "/api/v1/cases", json={"tag": "X"}).status_code == 403
    assert api(role, "DELETE", f"/api/v1/cases/{engineers_case}").status_code == 403
    assert api(role, "POST", "/api/v1/fluids", json={"name": "x", "composition": {"methane": 1}}).status_code == 403
    assert _case_row(app, engineers_case) == before


def test_checker_may_view_and_compute(checker, api, engineers_case):
    assert checker.get(f"/cases/{engineers_case}").status_code == 200
    assert checker.get(f"/cases/{engineers_case}/history").status_code == 200
    resp = api(Role.CHECKER, "POST", f"/api/v1/cases/{engineers_case}/compute")
    assert resp.status_code == 201
    assert resp.get_json()["conditions"][0]["converged"] is True


def test_engineer_cannot_do_admin_things(app, engineer, api, world):
    users_before, materials_before = count(app, User), count(app, Material)
    assert engineer.get("/users").status_code == 403
    assert engineer.post("/users/new", data={"email": "x@example.org", "name": "X", "role": "admin"}).status_code == 403
    with app.app_context():
        admin_id = db_session().scalar(select(User.id).where(User.email == world.emails[Role.ADMIN]))
    assert engineer.get(f"/users/{admin_id}").status_code == 403
    assert engineer.post(f"/users/{admin_id}", data={"name": "Hacked", "role": "engineer"}).status_code == 403
    assert engineer.post(f"/users/{admin_id}/reset-password").status_code == 403
    assert engineer.get("/materials/new").status_code == 403
    assert engineer.post("/materials/new", data={"name": "Cheat steel", "min_metal_temperature": "-200",
                                                 "min_metal_temperature_unit": "degC"}).status_code == 403
    assert engineer.get(f"/materials/{world.material_id}/edit").status_code == 403
    assert engineer.post(f"/materials/{world.material_id}/edit",
                         data={"name": "x", "min_metal_temperature": "-200",
                               "min_metal_temperature_unit": "degC"}).status_code == 403
    assert count(app, User) == users_before and count(app, Material) == materials_before
    assert "Users" not in engineer.get("/cases").data.decode().split("</nav>")[0]


def test_engineer_may_delete_only_drafts_admin_any(app, engineer, admin, world):
    ids = []
    for _ in range(2):
        resp = engineer.post("/cases/new", data=case_form(world))
        ids.append(created_id(resp))
    with app.app_context():
        s = db_session()
        s.execute(update(Case).where(Case.id == ids[0]).values(status="checked", version=Case.version + 1))
        s.commit()
    assert engineer.post(f"/cases/{ids[0]}/delete").status_code == 403
    assert engineer.post(f"/cases/{ids[1]}/delete").status_code == 302
    assert admin.post(f"/cases/{ids[0]}/delete").status_code == 302
    with app.app_context():
        assert db_session().scalar(select(Case.id).where(Case.id.in_(ids))) is None
    assert engineer.get(f"/cases/{ids[1]}").status_code == 404


def test_security_headers_on_pages_api_and_errors(client, engineer, api):
    for resp in (client.get("/login"), engineer.get("/cases"), api(Role.ENGINEER, "GET", "/api/v1/cases"),
                 engineer.get("/cases/999999"), client.get("/healthz")):
        csp = resp.headers["Content-Security-Policy"]
        assert "default-src 'self'" in csp and "frame-ancestors 'none'" in csp
        assert "'unsafe-inline'" not in csp
        assert resp.headers["X-Content-Type-Options"] == "nosniff"
        assert resp.headers["X-Frame-Options"] == "DENY"


def test_pages_carry_no_script_and_no_inline_style(engineer, world):
    for path in ("/cases", "/cases/new", "/fluids", "/fluids/new", "/materials", "/sites", "/account"):
        html = engineer.get(path).data.decode()
        assert "<script" not in html, path
        assert " style=" not in html, path
