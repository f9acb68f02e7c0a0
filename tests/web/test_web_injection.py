"""SQL and HTML injection strings typed into every text field are stored as typed and shown escaped."""
from __future__ import annotations

import html

import pytest
from sqlalchemy import select
from web_helpers import case_form, created_id

from jtcheck.records.models import Case, FluidRecord, Material, PlantUnit, Site, User
from jtcheck.web.database import db_session

SCRIPT = "<script>alert(1)</script>"
SQL = "x'); DROP TABLE cases; --"
HOSTILE = f'{SCRIPT} "{SQL}" <img src=x onerror=alert(2)>'


def _escaped(page: str, text: str) -> bool:
    return html.escape(text, quote=False) in page or html.escape(text) in page


@pytest.fixture(scope="module")
def hostile_case(app, world):
    c = app.test_client()
    from web_helpers import sign_in

    sign_in(c, world.emails["engineer"])
    resp = c.post("/cases/new", data=case_form(world, tag=f"{SCRIPT}{SQL}"[:64], service=HOSTILE, basis=HOSTILE,
                                               references=HOSTILE))
    assert resp.status_code == 302, resp.data
    return created_id(resp)


def test_case_text_fields_are_stored_as_typed(app, hostile_case):
    with app.app_context():
        case = db_session().get(Case, hostile_case)
        assert case.tag == f"{SCRIPT}{SQL}"[:64]
        assert case.service == case.basis == case.references == HOSTILE
        assert db_session().scalar(select(Case.id).where(Case.id == hostile_case)) == hostile_case   # table intact


@pytest.mark.parametrize("path", ["/cases/{id}", "/cases", "/cases/{id}/edit", "/cases/{id}/history"])
def test_case_text_is_shown_escaped(engineer, hostile_case, path):
    page = engineer.get(path.format(id=hostile_case)).data.decode()
    assert SCRIPT not in page and "<img src=x" not in page
    assert _escaped(page, "<script>alert(1)</script>")


def test_search_with_injection_text_finds_nothing_and_echoes_escaped(engineer, hostile_case):
    page = engineer.get("/cases", query_string={"q": SCRIPT}).data.decode()
    assert SCRIPT not in page and _escaped(page, SCRIPT)
    page = engineer.get("/cases", query_string={"q": "' OR '1'='1"}).data.decode()
    assert "No case matches" in page


def test_fluid_site_unit_material_and_user_text_is_escaped(app, engineer, admin, world):
    name = f"Gas {SCRIPT} {SQL}"
    resp = engineer.post("/fluids/new", data={"name": name, "composition": "methane=0.9\nethane=0.1", "eos": "PR",
                                              "kij_mode": "table", "notes": HOSTILE})
    assert resp.status_code == 302, resp.data
    assert engineer.post("/sites/new", data={"name": f"Site {SCRIPT}", "description": HOSTILE}).status_code == 302
    assert engineer.post("/sites/units/new", data={"site_id": str(world.site_id), "unit_name": f"Unit {SCRIPT}",
                                                   "unit_description": HOSTILE}).status_code == 302
    assert admin.post("/materials/new", data={"name": f"Steel {SCRIPT}", "min_metal_temperature": "-30",
                                              "min_metal_temperature_unit": "degC", "specification": HOSTILE,
                                              "notes": HOSTILE, "source": HOSTILE, "editable": "1"}).status_code == 302
    assert admin.post("/users/new", data={"email": "evil@example.org", "name": f"Eve {SCRIPT}",
                                          "role": "checker"}).status_code == 200
    with app.app_context():
        s = db_session()
        assert s.scalar(select(FluidRecord.notes).where(FluidRecord.name == name)) == HOSTILE
        assert s.scalar(select(Site.description).where(Site.name == f"Site {SCRIPT}")) == HOSTILE
        assert s.scalar(select(PlantUnit.description).where(PlantUnit.name == f"Unit {SCRIPT}")) == HOSTILE
        assert s.scalar(select(Material.source).where(Material.name == f"Steel {SCRIPT}")) == HOSTILE
        assert s.scalar(select(User.name).where(User.email == "evil@example.org")) == f"Eve {SCRIPT}"
        fluid_id = s.scalar(select(FluidRecord.id).where(FluidRecord.name == name))
    pages = ((engineer, "/fluids"), (engineer, f"/fluids/{fluid_id}"), (engineer, f"/fluids/{fluid_id}/edit"),
             (engineer, "/sites"), (engineer, "/materials"), (engineer, "/cases/new"), (admin, "/users"))
    for client, path in pages:
        page = client.get(path).data.decode()
        assert SCRIPT not in page and "<img src=x" not in page, path
        assert _escaped(page, SCRIPT), path


def test_injection_text_in_a_bad_form_is_kept_escaped(engineer, world):
    resp = engineer.post("/cases/new", data=case_form(world, inlet_pressure=SCRIPT))
    assert resp.status_code == 422
    page = resp.data.decode()
    assert SCRIPT not in page and _escaped(page, SCRIPT)


def test_api_returns_injection_text_as_data(api, hostile_case):
    body = api("checker", "GET", f"/api/v1/cases/{hostile_case}").get_json()
    assert body["service"] == HOSTILE
