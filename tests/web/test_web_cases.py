"""Case pages: the form (units, bad input, edits), compute and the result view, list filters, history."""
from __future__ import annotations

import html
import math
import re

import pytest
from sqlalchemy import select
from web_helpers import P_ATM, PSI, case_body, case_form, count, created_id, field_error, unique

from jtcheck.notices import CAUTION
from jtcheck.records.models import AuditEntry, Case, CaseResult, PlantUnit, Role, Site
from jtcheck.units import temperature_from_k
from jtcheck.web.database import db_session


def _degf_to_k(f: float) -> float:
    return (f - 32.0) / 1.8 + 273.15


# -- create, compute, result view ---------------------------------------------------------------------
def test_create_compute_and_result_view_shows_outlet_temperature_and_diagram(app, engineer, world):
    resp = engineer.post("/cases/new", data=case_form(world, tag="PCV-777", inlet_pressure_max="80"))
    assert resp.status_code == 302, resp.data
    case_id = created_id(resp)
    page = engineer.get(f"/cases/{case_id}").data.decode()
    assert "Not computed yet" in page and html.escape(CAUTION) in page

    resp = engineer.post(f"/cases/{case_id}/compute")
    assert resp.status_code == 302
    m = re.search(rf"/cases/{case_id}/results/(\d+)$", resp.headers["Location"])
    assert m
    page = engineer.get(resp.headers["Location"]).data.decode()

    with app.app_context():
        result = db_session().get(CaseResult, int(m.group(1)))
        normal = result.condition("normal")
        conditions = [e["condition"] for e in result.results]
    inlets = ["normal", "min inlet temperature", "max inlet pressure", "min temperature + max pressure"]
    # the user's conditions, the generated start-up into a depressured outlet from each, the sweep (issue 12)
    assert conditions == [*inlets, "start-up into depressured outlet",
                          *(f"start-up into depressured outlet ({c})" for c in inlets[1:]),
                          "coldest in the operating ranges"]
    assert "start-up into depressured outlet" in page
    assert normal["converged"] and normal["t_out"] < normal["t_in"]
    t_out_text = f"{temperature_from_k(normal['t_out'], 'degC'):.2f} degC"
    assert t_out_text in page
    assert html.escape(CAUTION) in page
    for words in ("Margin to cold limit", "Margin to MDMT", "Temperature drop", "Vapour fraction",
                  "Peng-Robinson", "kij basis", "Component data", "Min temperature + max pressure",
                  "Coldest in the operating ranges", "Outlet, PR", "Outlet, SRK", "Model spread", "Screened outlet",
                  "Operating sweep", "Findings"):
        assert words in page, words
    start = page.index('<svg class="pt-diagram"')
    svg = page[start:page.index("</svg>", start) + 6]
    assert 'class="pt-diagram"' in svg and "<path" in svg
    assert " style=" not in svg and "<script" not in svg.lower() and "<style" not in svg
    # the diagram is drawn once per result, then taken from the cache
    renders = app.extensions["jtcheck_diagrams"].renders
    assert engineer.get(f"/cases/{case_id}").status_code == 200
    assert app.extensions["jtcheck_diagrams"].renders == renders


def test_margins_are_to_the_governing_limit_and_the_target_is_limit_plus_margin(app, engineer, world):
    resp = engineer.post("/cases/new", data=case_form(world, mdmt="-100", margin="10", inlet_temperature_min=""))
    case_id = created_id(resp)
    page = engineer.get(engineer.post(f"/cases/{case_id}/compute").headers["Location"]).data.decode()
    assert "-100.00 degC" in page       # the governing limit: the MDMT (no cold limit entered)
    with app.app_context():
        stored = db_session().scalars(select(CaseResult).where(CaseResult.case_id == case_id)).one()
        t_out, limits = stored.t_out_min_k, stored.screening["limits"]
    # the target: limit + total margin (the 10 K entered plus the PR-SRK spread, issue 12)
    assert limits["total_margin_k"] == pytest.approx(10.0 + limits["model_spread_k"])
    assert f"{limits['target_k'] - 273.15:.2f} degC" in page
    expected = t_out - 173.15
    assert f"{expected:+.2f} K" in page
    assert "pass: at or above the cold limit plus the required margin" in page


# -- units ------------------------------------------------------------------------------------------
def test_case_in_psig_and_degf_keeps_the_same_si_values(app, engineer, api, world):
    form = case_form(world, inlet_pressure="1000", inlet_pressure_unit="psig", outlet_pressure="150",
                     outlet_pressure_unit="psig", inlet_temperature="100", inlet_temperature_unit="degF",
                     inlet_temperature_min="40", inlet_temperature_min_unit="degF", mdmt="-20", mdmt_unit="degF",
                     margin="9", margin_unit="degF", p_atm="14.696", p_atm_unit="psia")
    case_id = created_id(engineer.post("/cases/new", data=form))
    p_atm = 14.696 * PSI
    expected = {"inlet_pressure_pa": 1000 * PSI + p_atm, "outlet_pressure_pa": 150 * PSI + p_atm,
                "inlet_temperature_k": _degf_to_k(100), "inlet_temperature_min_k": _degf_to_k(40),
                "mdmt_k": _degf_to_k(-20), "margin_k": 5.0, "p_atm_pa": p_atm}
    with app.app_context():
        case = db_session().get(Case, case_id)
        for key, value in expected.items():
            assert math.isclose(getattr(case, key), value, rel_tol=1e-12), key
        assert case.display_units["inlet_pressure"] == "psig"
        assert case.display_units["inlet_temperature"] == "degF"
        assert case.mdmt_source == "entered"
        version = case.version

    edit = engineer.get(f"/cases/{case_id}/edit").data.decode()
    for name, value, unit in (("inlet_pressure", "1000", "psig"), ("outlet_pressure", "150", "psig"),
                              ("inlet_temperature", "100", "degF"), ("mdmt", "-20", "degF"),
                              ("margin", "9", "degF"), ("p_atm", "14.696", "psia")):
        assert re.search(rf'id="f-{name}" name="{name}" type="text" inputmode="decimal" value="{re.escape(value)}"',
                         edit), name
        select_html = edit.split(f'name="{name}_unit"', 1)[1].split("</select>", 1)[0]
        assert f'<option value="{unit}" selected>' in select_html, name

    body = api("engineer", "GET", f"/api/v1/cases/{case_id}").get_json()
    for key, value in expected.items():
        assert math.isclose(body["si"][key], value, rel_tol=1e-12), key
    assert body["display"]["inlet_pressure"] == {"value": pytest.approx(1000.0, rel=1e-12), "unit": "psig"}
    assert body["display"]["inlet_temperature"]["unit"] == "degF"

    # the form sent back as shown changes nothing
    again = engineer.post(f"/cases/{case_id}/edit", data={**form, "version": str(version)})
    assert again.status_code == 302
    with app.app_context():
        assert db_session().get(Case, case_id).version == version


# -- bad input ----------------------------------------------------------------------------------------
BAD_CASE_FIELDS = [
    ("tag", {"tag": ""}, "required"),
    ("tag", {"tag": "T" * 65}, "at most 64"),
    ("service", {"service": "s" * 2001}, "at most 2000"),
    ("kind", {"kind": "teleporter"}, "unknown kind"),
    ("unit_id", {"unit_id": ""}, "required"),
    ("unit_id", {"unit_id": "999999"}, "no unit"),
    ("unit_id", {"unit_id": "abc"}, "integer id"),
    ("fluid_id", {"fluid_id": ""}, "required"),
    ("fluid_id", {"fluid_id": "999999"}, "no fluid"),
    ("material_id", {"material_id": "999999"}, "no material"),
    ("inlet_pressure", {"inlet_pressure": "abc"}, "not a number"),
    ("inlet_pressure", {"inlet_pressure": ""}, "required"),
    ("inlet_pressure", {"inlet_pressure": "-5", "inlet_pressure_unit": "bara"}, "above 0 bara"),
    ("inlet_pressure", {"inlet_pressure_unit": "furlongs"}, "choose a unit"),
    ("inlet_temperature", {"inlet_temperature": "warm"}, "not a number"),
    ("inlet_temperature", {"inlet_temperature": "-300"}, "absolute zero"),
    ("outlet_pressure", {"outlet_pressure": "100"}, "above the inlet pressure"),
    ("inlet_temperature_min", {"inlet_temperature_min": "30"}, "above the normal inlet temperature"),
    ("inlet_pressure_max", {"inlet_pressure_max": "50"}, "below the normal inlet pressure"),
    ("mass_flow", {"mass_flow": "lots"}, "kg/s"),
    ("mass_flow", {"mass_flow": "-1"}, "out of range"),
    ("mdmt", {"mdmt": "cold"}, "not a number"),
    ("cold_limit", {"cold_limit": "1e9"}, "out of range"),
    ("margin", {"margin": "-3"}, "out of range"),
    ("margin", {"margin": "plenty"}, "not a number"),
    ("p_atm", {"p_atm": "0.1"}, "out of range"),
    ("p_atm", {"p_atm": "air"}, "not a number"),
    ("basis", {"basis": "b" * 50_001}, "at most 50000"),
    ("references", {"references": "r" * 50_001}, "at most 50000"),
]


@pytest.mark.parametrize("field, overrides, words", BAD_CASE_FIELDS,
                         ids=[f"{f}-{i}" for i, (f, _, _) in enumerate(BAD_CASE_FIELDS)])
def test_bad_input_on_each_case_field_is_shown_at_that_field_and_nothing_is_stored(app, engineer, world, field,
                                                                                   overrides, words):
    cases, audit = count(app, Case), count(app, AuditEntry)
    resp = engineer.post("/cases/new", data=case_form(world, tag=overrides.get("tag", "BAD-1"),
                                                      **{k: v for k, v in overrides.items() if k != "tag"}))
    assert resp.status_code == 422
    page = resp.data.decode()
    message = field_error(page, field)
    assert message is not None, f"no error shown at {field}"
    assert words in html.unescape(message)
    assert f'href="#f-{field}"' in page                 # the summary links to the field
    for value in overrides.values():                     # what the user typed is kept
        if value and len(value) < 100 and field != "kind":
            assert html.escape(value) in page
    assert count(app, Case) == cases and count(app, AuditEntry) == audit


def test_bad_input_on_edit_keeps_the_stored_case(app, engineer, world):
    case_id = created_id(engineer.post("/cases/new", data=case_form(world)))
    with app.app_context():
        before = db_session().get(Case, case_id).inlet_pressure_pa
    audit = count(app, AuditEntry)
    resp = engineer.post(f"/cases/{case_id}/edit", data=case_form(world, inlet_pressure="7O", version="1"))
    assert resp.status_code == 422 and field_error(resp.data.decode(), "inlet_pressure")
    assert 'value="7O"' in resp.data.decode()
    with app.app_context():
        assert db_session().get(Case, case_id).inlet_pressure_pa == before
    assert count(app, AuditEntry) == audit


def test_edit_changes_the_case_and_a_stale_form_is_refused(app, engineer, admin, world):
    form = case_form(world)
    case_id = created_id(engineer.post("/cases/new", data=form))
    first = engineer.post(f"/cases/{case_id}/edit", data={**form, "inlet_pressure": "75", "version": "1"})
    assert first.status_code == 302
    with app.app_context():
        case = db_session().get(Case, case_id)
        assert case.version == 2 and math.isclose(case.inlet_pressure_pa, 75e5 + P_ATM)
    stale = admin.post(f"/cases/{case_id}/edit", data={**form, "inlet_pressure": "60", "version": "1"})
    assert stale.status_code == 409
    assert "changed by someone else" in stale.data.decode()
    with app.app_context():
        assert math.isclose(db_session().get(Case, case_id).inlet_pressure_pa, 75e5 + P_ATM)
    history = engineer.get(f"/cases/{case_id}/history").data.decode()
    assert "inlet_pressure_pa" in history and "update" in history and "create" in history


def test_a_new_result_is_marked_stale_after_an_edit(engineer, world):
    form = case_form(world, inlet_temperature_min="")
    case_id = created_id(engineer.post("/cases/new", data=form))
    engineer.post(f"/cases/{case_id}/compute")
    assert "computed from an earlier version" not in engineer.get(f"/cases/{case_id}").data.decode()
    engineer.post(f"/cases/{case_id}/edit", data={**form, "outlet_pressure": "12", "version": "1"})
    assert "computed from an earlier version" in engineer.get(f"/cases/{case_id}").data.decode()


# -- list ----------------------------------------------------------------------------------------------
def test_case_list_filters(app, engineer, world):
    tag = unique("FILTER-PSV")
    engineer.post("/cases/new", data=case_form(world, tag=tag, kind="relief_valve", service="flare relief"))
    page = engineer.get("/cases", query_string={"q": tag}).data.decode()
    assert tag in page and "1 case." in page
    assert tag in engineer.get("/cases", query_string={"kind": "relief_valve"}).data.decode()
    assert tag not in engineer.get("/cases", query_string={"kind": "choke"}).data.decode()
    assert tag in engineer.get("/cases", query_string={"site_id": world.site_id, "unit_id": world.unit_id,
                                                       "status": "draft", "outcome": "not computed"}).data.decode()
    assert tag in engineer.get("/cases", query_string={"q": "FLARE RELIEF"}).data.decode()
    assert tag not in engineer.get("/cases", query_string={"q": "%"}).data.decode()
    bad = engineer.get("/cases", query_string={"site_id": "x", "kind": "nope"}).data.decode()
    assert field_error(bad, "site_id") and field_error(bad, "kind")


# -- sites and units -------------------------------------------------------------------------------------
def test_sites_and_units_forms(app, engineer, world):
    name = unique("Site")
    assert engineer.post("/sites/new", data={"name": name, "description": "d"}).status_code == 302
    sites = count(app, Site)
    dup = engineer.post("/sites/new", data={"name": name})
    assert dup.status_code == 409 and field_error(dup.data.decode(), "name")
    empty = engineer.post("/sites/new", data={"name": "  "})
    assert empty.status_code == 422 and field_error(empty.data.decode(), "name")
    assert count(app, Site) == sites
    units = count(app, PlantUnit)
    for data, field in (({"site_id": "", "unit_name": "U"}, "site_id"), ({"site_id": "999999", "unit_name": "U"},
                                                                         "site_id"),
                        ({"site_id": str(world.site_id), "unit_name": ""}, "unit_name")):
        resp = engineer.post("/sites/units/new", data=data)
        assert resp.status_code == 422 and field_error(resp.data.decode(), field), data
    assert count(app, PlantUnit) == units
    assert engineer.post("/sites/units/new", data={"site_id": str(world.site_id),
                                                   "unit_name": unique("Unit")}).status_code == 302


def test_missing_case_and_result_are_404(engineer, world):
    assert engineer.get("/cases/999999").status_code == 404
    assert engineer.get("/cases/999999/edit").status_code == 404
    assert engineer.post("/cases/999999/compute").status_code == 404
    case_id = created_id(engineer.post("/cases/new", data=case_form(world)))
    assert engineer.get(f"/cases/{case_id}/results/999999").status_code == 404


def test_result_page_survives_a_diagram_that_cannot_be_drawn(app, engineer, world, monkeypatch):
    from jtcheck.web.cases import diagram

    def broken(result):
        raise ValueError("no drawing today")

    monkeypatch.setattr(diagram, "render", broken)
    case_id = created_id(engineer.post("/cases/new", data=case_form(world, inlet_temperature_min="")))
    resp = engineer.get(engineer.post(f"/cases/{case_id}/compute").headers["Location"])
    assert resp.status_code == 200
    page = resp.data.decode()
    assert "The diagram could not be drawn" in page and "Margin to cold limit" in page
    assert 'class="pt-diagram"' not in page


def test_the_case_list_comes_a_page_at_a_time(app, engineer, api, world, monkeypatch):
    from jtcheck.web.cases import views as case_views

    monkeypatch.setattr(case_views, "CASES_PER_PAGE", 2)
    prefix = unique("PAGED")
    for k in range(3):
        made = api(Role.ENGINEER, "POST", "/api/v1/cases", json=case_body(world, tag=f"{prefix}-{k}"))
        assert made.status_code == 201
    first = engineer.get(f"/cases?q={prefix}").data.decode()
    assert f"{prefix}-0" in first and f"{prefix}-1" in first and f"{prefix}-2" not in first
    assert "page=2" in first and "Cases 1–2" in first
    second = engineer.get(f"/cases?q={prefix}&page=2").data.decode()
    assert f"{prefix}-2" in second and f"{prefix}-0" not in second and "page=1" in second
