"""The fluid library and the material table: forms, bad input, who may change what."""
from __future__ import annotations

import html
import math
import re

import pytest
from sqlalchemy import select
from web_helpers import case_form, count, field_error, unique

from jtcheck.records.models import AuditEntry, Case, FluidRecord, Material
from jtcheck.web.database import db_session
from jtcheck.web.fluids.views import parse_composition_lines


def _fluid(app, name):
    with app.app_context():
        return db_session().scalar(select(FluidRecord).where(FluidRecord.name == name))


# -- fluids ---------------------------------------------------------------------------------------------
def test_fluid_from_lines_with_eos_and_kij(app, engineer):
    name = unique("Rich gas")
    resp = engineer.post("/fluids/new", data={"name": name, "composition": "methane = 70\nethane: 20\nCO2 10\n",
                                              "eos": "SRK", "kij_mode": "zero", "notes": "sample 2026-01"})
    assert resp.status_code == 302, resp.data
    record = _fluid(app, name)
    assert record.eos == "SRK" and record.kij_mode.value == "zero"
    assert [c for c, _ in record.composition_pairs()] == ["methane", "ethane", "carbon dioxide"]
    assert math.isclose(record.composition_pairs()[0][1], 0.7)
    page = engineer.get(f"/fluids/{record.id}").data.decode()
    assert "Soave" in page and "Cricondentherm" in page


def test_fluid_from_the_table(app, engineer):
    name = unique("Table gas")
    data = {"name": name, "composition": "", "eos": "PR", "kij_mode": "table", "component_1": "methane",
            "amount_1": "0.95", "component_2": "propane", "amount_2": "0.05"}
    assert engineer.post("/fluids/new", data=data).status_code == 302
    assert [c for c, _ in _fluid(app, name).composition_pairs()] == ["methane", "propane"]


def test_a_composition_summing_to_100_3_percent_is_normalised_with_a_warning_and_the_entry_kept(app, engineer):
    """README: sums within 0.5 % of 1 (or 100) are normalised with a warning."""
    name = unique("Sum 100.3")
    resp = engineer.post("/fluids/new", data={"name": name, "composition": "methane=90.3\nethane=10", "eos": "PR",
                                              "kij_mode": "table"}, follow_redirects=True)
    page = resp.data.decode()
    assert resp.status_code == 200
    assert "Warning: the composition's amounts summed to 100.3 (mole percent); normalised to 1" in html.unescape(page)
    record = _fluid(app, name)
    assert math.isclose(sum(z for _, z in record.composition_pairs()), 1.0)
    with app.app_context():
        entries = db_session().scalars(select(AuditEntry).where(AuditEntry.entity == "fluid",
                                                                AuditEntry.entity_id == record.id)).all()
        entered = [e.new_value for e in entries if e.field == "composition as entered"]
    assert entered and "methane=90.3" in entered[0] and "ethane=10" in entered[0]
    # editing it to another unnormalised entry keeps that one too
    edit = engineer.get(f"/fluids/{record.id}/edit").data.decode()
    version = re.search(r'name="version" value="(\d+)"', edit).group(1)
    resp = engineer.post(f"/fluids/{record.id}/edit", data={"name": name, "composition": "methane=0.904\nethane=0.1",
                                                            "eos": "PR", "kij_mode": "table", "version": version},
                         follow_redirects=True)
    page = html.unescape(resp.data.decode())
    assert "summed to 1.004 (mole fraction)" in page, page[page.find("<main"):][:1500]
    with app.app_context():
        entered = [e.new_value for e in db_session().scalars(select(AuditEntry).where(
            AuditEntry.entity == "fluid", AuditEntry.entity_id == record.id)) if e.field == "composition as entered"]
    assert len(entered) == 2 and "methane=0.904" in entered[1]


def test_composition_lines_parser():
    assert parse_composition_lines("methane=0.9, ethane=0.1") == [("methane", 0.9), ("ethane", 0.1)]
    assert parse_composition_lines("# a comment\n2,2-dimethylpropane=1\n") == [("2,2-dimethylpropane", 1.0)]


BAD_FLUIDS = [
    ("name", {"name": ""}, "required"),
    ("name", {"name": "Lean gas"}, "already exists"),
    ("composition", {"composition": ""}, "required"),
    ("composition", {"composition": "methane=lots"}, "not a number"),
    ("composition", {"composition": "unobtainium=1"}, "unknown component"),
    ("composition", {"composition": "methane=0.5\nethane=0.2"}, "sum"),
    ("composition", {"composition": "methane=1", "component_1": "ethane", "amount_1": "1"}, "not both"),
    ("composition", {"composition": "", "component_1": "ethane", "amount_1": ""}, "row 1"),
    ("eos", {"eos": "BWRS"}, "unknown equation of state"),
    ("kij_mode", {"kij_mode": "guess"}, "unknown kij mode"),
    ("notes", {"notes": "n" * 50_001}, "at most 50000"),
]


@pytest.mark.parametrize("field, overrides, words", BAD_FLUIDS, ids=[f"{f}-{i}" for i, (f, _, _) in
                                                                    enumerate(BAD_FLUIDS)])
def test_bad_fluid_input_is_shown_at_the_field_and_nothing_is_stored(app, engineer, field, overrides, words):
    data = {"name": unique("Bad gas"), "composition": "methane=0.9\nethane=0.1", "eos": "PR", "kij_mode": "table",
            "notes": "", **overrides}
    fluids, audit = count(app, FluidRecord), count(app, AuditEntry)
    resp = engineer.post("/fluids/new", data=data)
    assert resp.status_code in (409, 422)
    page = resp.data.decode()
    message = field_error(page, field)
    assert message is not None and words in html.unescape(message), page[:2000]
    if field == "composition" and overrides.get("composition"):
        assert html.escape(overrides["composition"]) in page
    assert count(app, FluidRecord) == fluids and count(app, AuditEntry) == audit


def test_fluid_edit_sent_back_unchanged_changes_nothing(app, engineer):
    name = unique("Stable gas")
    engineer.post("/fluids/new", data={"name": name, "composition": "methane=0.3333\nethane=0.6667", "eos": "PR",
                                       "kij_mode": "table"})
    record = _fluid(app, name)
    page = engineer.get(f"/fluids/{record.id}/edit").data.decode()
    lines = html.unescape(page.split('name="composition"', 1)[1].split(">", 1)[1].split("</textarea>", 1)[0])
    audit = count(app, AuditEntry)
    resp = engineer.post(f"/fluids/{record.id}/edit", data={"name": name, "composition": lines, "eos": "PR",
                                                            "kij_mode": "table", "notes": "",
                                                            "version": str(record.version)})
    assert resp.status_code == 302
    assert count(app, AuditEntry) == audit
    assert engineer.post(f"/fluids/{record.id}/edit", data={"name": name, "composition": "methane=1", "eos": "PR",
                                                            "kij_mode": "table", "version": str(record.version)}
                         ).status_code == 302
    assert _fluid(app, name).composition_pairs() == [("methane", 1.0)]


def test_checker_cannot_change_fluids(app, checker, world):
    assert checker.get("/fluids/new").status_code == 403
    assert checker.post("/fluids/new", data={"name": "x", "composition": "methane=1"}).status_code == 403
    assert checker.post(f"/fluids/{world.fluid_id}/edit", data={"name": "x", "composition": "methane=1"}
                        ).status_code == 403
    assert checker.post(f"/fluids/{world.fluid_id}/delete").status_code == 403
    assert _fluid(app, "Lean gas") is not None


def test_fluid_in_use_cannot_be_deleted(app, engineer, world):
    name = unique("Used gas")
    engineer.post("/fluids/new", data={"name": name, "composition": "methane=1", "eos": "PR", "kij_mode": "table"})
    fluid_id = _fluid(app, name).id
    engineer.post("/cases/new", data=case_form(world, fluid_id=str(fluid_id)))
    resp = engineer.post(f"/fluids/{fluid_id}/delete")
    assert resp.status_code == 409 and b"used by 1 case" in resp.data
    assert _fluid(app, name) is not None
    with app.app_context():
        assert db_session().scalar(select(Case.id).where(Case.fluid_id == fluid_id)) is not None


# -- materials -------------------------------------------------------------------------------------------
def test_everyone_sees_the_materials_admin_adds_and_edits(app, checker, admin):
    assert "Test carbon steel" in checker.get("/materials").data.decode()
    assert "Add material" not in checker.get("/materials").data.decode()
    name = unique("Impact-tested steel")
    resp = admin.post("/materials/new", data={"name": name, "min_metal_temperature": "-58",
                                              "min_metal_temperature_unit": "degF", "specification": "spec",
                                              "notes": "n", "source": "s", "editable": "1"})
    assert resp.status_code == 302
    with app.app_context():
        m = db_session().scalar(select(Material).where(Material.name == name))
        assert math.isclose(m.min_metal_temperature_k, 223.15)
        material_id = m.id
    page = admin.get(f"/materials/{material_id}/edit").data.decode()
    assert 'value="-50"' in page
    resp = admin.post(f"/materials/{material_id}/edit", data={"name": name, "min_metal_temperature": "-52",
                                                              "min_metal_temperature_unit": "degC",
                                                              "specification": "spec", "notes": "n", "source": "s",
                                                              "editable": "", "version": "1"})
    assert resp.status_code == 302
    with app.app_context():
        m = db_session().get(Material, material_id)
        assert math.isclose(m.min_metal_temperature_k, 221.15) and m.editable is False
    assert admin.post(f"/materials/{material_id}/edit", data={"name": name, "min_metal_temperature": "-60",
                                                              "min_metal_temperature_unit": "degC",
                                                              "version": "2"}).status_code == 403


def test_admin_adds_a_material_by_its_exemption_curve(app, checker, admin):
    name = unique("SA-516-70N plate")
    resp = admin.post("/materials/new", data={
        "name": name, "min_metal_temperature": "", "min_metal_temperature_unit": "degC", "curve_code": "VIII-1",
        "exemption_curve": "D", "thickness": "25.4", "impact_test_temperature": "", "impact_test_temperature_unit":
        "degC", "allowable_stress": "138", "outside_diameter": "610", "corrosion_allowance": "3",
        "joint_efficiency": "1", "other_stress": "20", "specification": "", "notes": "", "source": "",
        "editable": "1"})
    assert resp.status_code == 302
    with app.app_context():
        m = db_session().scalar(select(Material).where(Material.name == name))
        assert m.min_metal_temperature_k is None and m.exemption_curve == "D"
        assert math.isclose(m.thickness_m, 0.0254) and math.isclose(m.allowable_stress_pa, 138e6)
        assert math.isclose(m.corrosion_allowance_m, 0.003) and math.isclose(m.other_stress_pa, 20e6)
        material_id = m.id
    page = checker.get("/materials").data.decode()
    assert "curve D (VIII-1)" in page
    edit = admin.get(f"/materials/{material_id}/edit").data.decode()
    assert 'value="25.4"' in edit and 'value="610"' in edit


def test_curve_table_page_and_admin_change(app, checker, admin):
    page = checker.get("/materials/curves").data.decode()
    assert "Verify against the code edition in force" in page and "from memory" in page
    assert "<form" not in page.split("<table", 1)[1]
    resp = admin.post("/materials/curves/0", data={"value": "-500", "provenance": "typo"})   # curve A would fall
    assert resp.status_code == 422 and "not changed" in resp.data.decode()
    assert checker.post("/materials/curves/0", data={"value": "17"}).status_code == 403


BAD_MATERIALS = [
    ("name", {"name": ""}, "required"),
    ("name", {"name": "Test carbon steel"}, "already exists"),
    ("exemption_curve", {"exemption_curve": "E", "thickness": "10"}, "unknown exemption curve"),
    ("thickness", {"exemption_curve": "B", "thickness": "thick"}, "must be a number"),
    ("thickness", {"exemption_curve": "B", "thickness": "150"}, "impact testing is required"),
    ("thickness", {"exemption_curve": "B"}, "governing thickness"),
    ("pwht_credit", {"exemption_curve": "B", "thickness": "10", "curve_code": "B31.3", "pwht_credit": "1"},
     "PWHT"),
    ("min_metal_temperature", {"min_metal_temperature": "chilly"}, "not a number"),
    ("min_metal_temperature", {"min_metal_temperature": "-500"}, "absolute zero"),
    ("min_metal_temperature", {"min_metal_temperature_unit": "Rankine"}, "choose a unit"),
    ("specification", {"specification": "s" * 50_001}, "at most 50000"),
]


@pytest.mark.parametrize("field, overrides, words", BAD_MATERIALS, ids=[f"{f}-{i}" for i, (f, _, _) in
                                                                        enumerate(BAD_MATERIALS)])
def test_bad_material_input_is_shown_at_the_field(app, admin, field, overrides, words):
    data = {"name": unique("Steel"), "min_metal_temperature": "-29", "min_metal_temperature_unit": "degC",
            "specification": "", "notes": "", "source": "", "editable": "1", **overrides}
    materials = count(app, Material)
    resp = admin.post("/materials/new", data=data)
    assert resp.status_code in (409, 422)
    message = field_error(resp.data.decode(), field)
    assert message is not None and words in html.unescape(message)
    assert count(app, Material) == materials


# -- users ------------------------------------------------------------------------------------------------
@pytest.mark.parametrize("field, data", [("email", {"email": "not-an-email", "name": "N", "role": "checker"}),
                                         ("email", {"email": "admin@example.org", "name": "N", "role": "checker"}),
                                         ("name", {"email": "n1@example.org", "name": "", "role": "checker"}),
                                         ("role", {"email": "n2@example.org", "name": "N", "role": "boss"})])
def test_bad_user_input_is_shown_at_the_field(app, admin, field, data):
    from jtcheck.records.models import User

    users = count(app, User)
    resp = admin.post("/users/new", data=data)
    assert resp.status_code in (409, 422)
    assert field_error(resp.data.decode(), field) is not None
    assert count(app, User) == users


def test_admin_makes_a_user_who_can_sign_in_with_the_one_time_password(app, admin):
    resp = admin.post("/users/new", data={"email": "newbie@example.org", "name": "New Engineer", "role": "engineer"})
    page = resp.data.decode()
    password = page.split('<p class="secret">', 1)[1].split("</p>", 1)[0].strip()
    c = app.test_client()
    assert c.post("/login", data={"email": "newbie@example.org", "password": password}).status_code == 302


def test_a_fluid_on_gerg_2008_is_saved_and_its_page_names_the_model(app, engineer):
    name = unique("Hydrogen blend")
    resp = engineer.post("/fluids/new", data={"name": name, "composition": "methane=0.8\nhydrogen=0.2",
                                              "eos": "GERG2008", "kij_mode": "table", "notes": ""})
    assert resp.status_code == 302, resp.data
    record = _fluid(app, name)
    assert record.eos == "GERG2008"
    assert "GERG-2008" in engineer.get(f"/fluids/{record.id}").data.decode()


@pytest.mark.parametrize("field, overrides, words", [
    ("kij_mode", {"kij_mode": "zero"}, "cubic models"),
    ("composition", {"composition": "methane=0.9\nethylene=0.1"}, "not among the 21 components of GERG-2008"),
])
def test_gerg_2008_refusals_are_shown_at_the_field(app, engineer, field, overrides, words):
    data = {"name": unique("Gerg gas"), "composition": "methane=0.9\nethane=0.1", "eos": "GERG2008",
            "kij_mode": "table", "notes": "", **overrides}
    resp = engineer.post("/fluids/new", data=data)
    assert resp.status_code in (409, 422)
    message = field_error(resp.data.decode(), field)
    assert message is not None and words in html.unescape(message)
