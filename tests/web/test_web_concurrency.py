"""Optimistic concurrency on every editable record: a version is required on update, and a stale one is refused
with 409 naming what changed since and who changed it; nothing is overwritten."""
from __future__ import annotations

from web_helpers import case_body, unique

from jtcheck.records.models import Material, Role, User
from jtcheck.web.database import db_session


def test_a_fluid_patch_needs_its_version_and_a_stale_one_is_refused(api):
    fluid = api(Role.ENGINEER, "POST", "/api/v1/fluids", json={"name": unique("Race gas"),
                                                                "composition": {"methane": 0.9, "ethane": 0.1}})
    fluid = fluid.get_json()
    path = f"/api/v1/fluids/{fluid['id']}"
    missing = api(Role.ENGINEER, "PATCH", path, json={"notes": "no version"})
    assert missing.status_code == 422 and missing.get_json()["error"]["field"] == "version"
    # ten saves based on the same version: the first wins, the nine others are refused (no lost update)
    codes = [api(Role.ENGINEER if k % 2 else Role.ADMIN, "PATCH", path,
                 json={"notes": f"edit {k}", "version": fluid["version"]}).status_code for k in range(10)]
    assert codes == [200] + [409] * 9
    stale = api(Role.ENGINEER, "PATCH", path, json={"notes": "late", "version": fluid["version"]}).get_json()
    message = stale["error"]["message"]
    assert stale["error"]["field"] == "version"
    assert "changed since: notes (by Ada Admin)" in message and f"you edited version {fluid['version']}" in message
    now = api(Role.ENGINEER, "GET", path).get_json()
    assert now["notes"] == "edit 0" and now["version"] == fluid["version"] + 1


def test_a_case_patch_without_version_is_refused(api, world):
    case = api(Role.ENGINEER, "POST", "/api/v1/cases", json=case_body(world)).get_json()
    resp = api(Role.ENGINEER, "PATCH", f"/api/v1/cases/{case['id']}", json={"inlet_pressure": "70 barg"})
    assert resp.status_code == 422 and resp.get_json()["error"]["field"] == "version"
    assert "required" in resp.get_json()["error"]["message"]
    ok = api(Role.ADMIN, "PATCH", f"/api/v1/cases/{case['id']}", json={"margin": "3 K", "version": case["version"]})
    assert ok.status_code == 200
    stale = api(Role.ENGINEER, "PATCH", f"/api/v1/cases/{case['id']}",
                json={"inlet_pressure": "70 barg", "version": case["version"]})
    assert stale.status_code == 409 and "margin_k (by Ada Admin)" in stale.get_json()["error"]["message"]


def test_material_and_user_forms_carry_their_version(app, admin, world):
    with app.app_context():
        m = db_session().get(Material, world.material_id)
        user = db_session().query(User).filter_by(email=world.emails[Role.CHECKER]).one()
        m_version, user_id, u_version = m.version, user.id, user.version
    page = admin.get(f"/materials/{world.material_id}/edit").data.decode()
    assert f'name="version" value="{m_version}"' in page
    form = {"name": "Test carbon steel", "min_metal_temperature": "-29", "min_metal_temperature_unit": "degC",
            "editable": "1", "notes": "first"}
    assert admin.post(f"/materials/{world.material_id}/edit", data={**form, "version": str(m_version)}
                      ).status_code == 302
    stale = admin.post(f"/materials/{world.material_id}/edit", data={**form, "notes": "second",
                                                                      "version": str(m_version)})
    assert stale.status_code == 409 and "changed by someone else" in stale.data.decode()
    assert admin.post(f"/materials/{world.material_id}/edit", data=form).status_code == 422   # no version
    page = admin.get(f"/users/{user_id}").data.decode()
    assert f'name="version" value="{u_version}"' in page
    data = {"name": "Checker User (renamed)", "role": "checker", "active": "1"}
    assert admin.post(f"/users/{user_id}", data={**data, "version": str(u_version)}).status_code == 302
    stale = admin.post(f"/users/{user_id}", data={**data, "name": "Checker User", "version": str(u_version)})
    assert stale.status_code == 409 and "name (by Ada Admin)" in stale.data.decode()
    with app.app_context():
        assert db_session().get(User, user_id).name == "Checker User (renamed)"
