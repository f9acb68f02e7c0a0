"""The JSON API: compute without storing, case and fluid CRUD, errors as JSON, and its OpenAPI document."""
from __future__ import annotations

import math
import re

import pytest
from openapi_spec_validator import validate
from web_helpers import LEAN_GAS, P_ATM, PSI, case_body, count, unique

from jtcheck import Fluid, letdown
from jtcheck.records.models import AuditEntry, Case, CaseResult, FluidRecord, Role
from jtcheck.web.database import db_session

LETDOWN = {"fluid": {"composition": {"methane": 0.9, "ethane": 0.1}, "eos": "PR", "kij": "table"},
           "p_in": "100 bara", "t_in": "40 degC", "p_out": "10 barg", "p_atm": "1.01325 bar"}


# -- compute without storing ------------------------------------------------------------------------------
def test_letdown_returns_si_and_display_values(app, api):
    results = count(app, CaseResult)
    resp = api(Role.CHECKER, "POST", "/api/v1/letdown", json=LETDOWN)
    assert resp.status_code == 200, resp.get_json()
    body = resp.get_json()
    expected = letdown(Fluid({"methane": 0.9, "ethane": 0.1}, eos="PR"), p_in=100e5, t_in=313.15, p_out=10e5 + P_ATM)
    assert body["converged"] is True and body["phase"] == expected.phase
    assert body["si"]["t_out_k"] == pytest.approx(expected.t_out, abs=1e-6)
    assert body["si"]["p_out_pa"] == pytest.approx(10e5 + P_ATM)
    assert body["display"]["t_out"] == {"value": pytest.approx(expected.t_out - 273.15, abs=1e-6), "unit": "degC"}
    assert body["display"]["p_in"] == {"value": pytest.approx(100.0), "unit": "bara"}
    assert body["basis"]["eos"] == "PR" and body["caution"]
    assert any("gauge pressures" in n for n in body["notes"])
    assert count(app, CaseResult) == results          # nothing stored


def test_letdown_accepts_value_unit_objects_a_stored_fluid_and_chosen_units(api, world):
    resp = api(Role.ENGINEER, "POST", "/api/v1/letdown", json={
        "fluid_id": world.fluid_id, "p_in": {"value": 1000, "unit": "psig"}, "t_in": {"value": 100, "unit": "degF"},
        "p_out": {"value": 200, "unit": "psig"}, "units": {"pressure": "barg", "temperature": "K"}})
    assert resp.status_code == 200, resp.get_json()
    body = resp.get_json()
    assert body["si"]["p_in_pa"] == pytest.approx(1000 * PSI + P_ATM)
    assert body["si"]["t_in_k"] == pytest.approx((100 - 32) / 1.8 + 273.15)
    assert body["display"]["t_out"]["unit"] == "K"
    assert body["display"]["t_out"]["value"] == pytest.approx(body["si"]["t_out_k"])
    assert body["display"]["p_in"]["value"] == pytest.approx((1000 * PSI) / 1e5)
    expected = letdown(Fluid(LEAN_GAS, eos="PR"), p_in=1000 * PSI + P_ATM, t_in=(100 - 32) / 1.8 + 273.15,
                       p_out=200 * PSI + P_ATM)
    assert body["si"]["t_out_k"] == pytest.approx(expected.t_out, abs=1e-6)


BAD_LETDOWN = [
    ("p_in", {"p_in": None}), ("p_in", {"p_in": 100}), ("p_in", {"p_in": "100 furlongs"}),
    ("p_in", {"p_in": {"value": "x", "unit": "bara"}}), ("p_in", {"p_in": {"value": 1, "unit": "bara", "x": 1}}),
    ("t_in", {"t_in": "hot"}), ("t_in", {"t_in": "-500 degC"}), ("p_out", {"p_out": "200 bara"}),
    ("p_out", {"p_out": "-5 bara"}), ("p_atm", {"p_atm": "0.1 bar"}), ("p_atm", {"p_atm": "1 barg"}),
    ("fluid", {"fluid": "methane"}), ("fluid.composition", {"fluid": {"composition": {"unobtainium": 1}}}),
    ("fluid.composition", {"fluid": {"composition": {"methane": 0.5}}}),
    ("fluid.composition", {"fluid": {"composition": [["methane"]]}}),
    ("fluid.eos", {"fluid": {"composition": {"methane": 1}, "eos": "BWRS"}}),
    ("fluid.kij", {"fluid": {"composition": {"methane": 1}, "kij": "guess"}}),
    ("units.pressure", {"units": {"pressure": "furlongs"}}), ("units.temperature", {"units": {"temperature": "x"}}),
    ("colour", {"colour": "blue"}), ("fluid_id", {"fluid": None, "fluid_id": "1"}),
]


@pytest.mark.parametrize("field, change", BAD_LETDOWN, ids=[f"{f}-{i}" for i, (f, _) in enumerate(BAD_LETDOWN)])
def test_letdown_bad_field_is_named(api, field, change):
    data = {**LETDOWN, **change}
    if data.get("fluid") is None:
        data.pop("fluid")
    resp = api(Role.ENGINEER, "POST", "/api/v1/letdown", json=data)
    assert resp.status_code == 422, resp.get_json()
    error = resp.get_json()["error"]
    assert error["field"] == field and error["message"]


def test_letdown_with_a_missing_fluid_is_404(api):
    data = {k: v for k, v in LETDOWN.items() if k != "fluid"}
    resp = api(Role.ENGINEER, "POST", "/api/v1/letdown", json={**data, "fluid_id": 999999})
    assert resp.status_code == 404 and resp.get_json()["error"]["field"] == "fluid_id"


@pytest.mark.parametrize("kwargs", [{"data": "{not json", "content_type": "application/json"},
                                    {"data": "[1, 2]", "content_type": "application/json"},
                                    {"data": "p_in=1", "content_type": "application/x-www-form-urlencoded"}])
def test_body_that_is_not_a_json_object_is_400(api, kwargs):
    resp = api(Role.ENGINEER, "POST", "/api/v1/letdown", **kwargs)
    assert resp.status_code == 400
    assert resp.get_json()["error"]["message"]


# -- cases -------------------------------------------------------------------------------------------------
def test_case_create_read_update_compute_results_delete(app, api, world):
    resp = api(Role.ENGINEER, "POST", "/api/v1/cases", json=case_body(world, tag="API-1", mdmt="-40 degC"))
    assert resp.status_code == 201, resp.get_json()
    case = resp.get_json()
    case_id = case["id"]
    assert resp.headers["Location"].endswith(f"/api/v1/cases/{case_id}")
    assert case["si"]["inlet_pressure_pa"] == pytest.approx(70e5 + P_ATM)
    assert case["display"]["inlet_pressure"] == {"value": pytest.approx(70.0), "unit": "barg"}
    assert case["display"]["mdmt"] == {"value": pytest.approx(-40.0), "unit": "degC"}
    assert case["version"] == 1 and case["status"] == "draft" and case["latest_result"] is None

    listed = api(Role.CHECKER, "GET", "/api/v1/cases", query_string={"q": "API-1"}).get_json()
    assert [c["id"] for c in listed["cases"]] == [case_id]
    listed = api(Role.CHECKER, "GET", "/api/v1/cases", query_string={"kind": "choke"}).get_json()
    assert case_id not in [c["id"] for c in listed["cases"]]

    resp = api(Role.ENGINEER, "PATCH", f"/api/v1/cases/{case_id}", json={"inlet_pressure": "75 barg", "version": 1})
    assert resp.status_code == 200, resp.get_json()
    assert resp.get_json()["version"] == 2
    assert resp.get_json()["si"]["inlet_pressure_pa"] == pytest.approx(75e5 + P_ATM)
    stale = api(Role.ENGINEER, "PATCH", f"/api/v1/cases/{case_id}", json={"inlet_pressure": "80 barg", "version": 1})
    assert stale.status_code == 409 and stale.get_json()["error"]["field"] == "version"

    resp = api(Role.APPROVER, "POST", f"/api/v1/cases/{case_id}/compute")
    assert resp.status_code == 201
    result = resp.get_json()
    normal = result["conditions"][0]
    assert normal["condition"] == "normal" and normal["converged"]
    assert normal["display"]["t_out"]["unit"] == "degC"
    assert normal["si"]["margin_to_mdmt_k"] == pytest.approx(normal["si"]["t_out_k"] - 233.15)
    assert result["basis"]["eos"] == "PR" and result["caution"]

    results = api(Role.CHECKER, "GET", f"/api/v1/cases/{case_id}/results").get_json()["results"]
    assert [r["id"] for r in results] == [result["id"]] and results[0]["current"] is True
    got = api(Role.CHECKER, "GET", f"/api/v1/cases/{case_id}").get_json()
    assert got["latest_result"]["id"] == result["id"]
    audit = api(Role.CHECKER, "GET", f"/api/v1/cases/{case_id}/audit").get_json()["entries"]
    assert [e["action"] for e in audit] == ["create", "update", "compute"]

    assert api(Role.ENGINEER, "DELETE", f"/api/v1/cases/{case_id}").status_code == 204
    assert api(Role.ENGINEER, "GET", f"/api/v1/cases/{case_id}").status_code == 404
    assert api(Role.ENGINEER, "DELETE", f"/api/v1/cases/{case_id}").status_code == 404


BAD_CASE_API = [
    ("tag", {"tag": ""}), ("tag", {"tag": 5}), ("kind", {"kind": "teleporter"}), ("unit_id", {"unit_id": 999999}),
    ("unit_id", {"unit_id": "1"}), ("fluid_id", {"fluid_id": None}), ("material_id", {"material_id": 999999}),
    ("inlet_pressure", {"inlet_pressure": 70}), ("inlet_pressure", {"inlet_pressure": "70 bogus"}),
    ("inlet_pressure", {"inlet_pressure": None}), ("inlet_temperature", {"inlet_temperature": {"value": 20}}),
    ("outlet_pressure", {"outlet_pressure": "100 barg"}),
    ("inlet_temperature_min", {"inlet_temperature_min": "90 degC"}),
    ("inlet_pressure_max", {"inlet_pressure_max": "1 barg"}), ("mass_flow", {"mass_flow": "3 t/h"}),
    ("mdmt", {"mdmt": "-1000 degC"}), ("cold_limit", {"cold_limit": "abc"}), ("margin", {"margin": "500 K"}),
    ("p_atm", {"p_atm": "3 bar"}), ("service", {"service": ["a"]}), ("basis", {"basis": 1}),
    ("references", {"references": {"a": 1}}), ("status", {"status": "approved"}), ("colour", {"colour": "red"}),
    # screening fields of a case
    ("outlet_pressure_min", {"outlet_pressure_min": "20 barg"}), ("water_saturated", {"water_saturated": "yes"}),
    ("hydrate_inhibitor", {"hydrate_inhibitor": "glycerol"}), ("overpressure", {"overpressure": 10}),
    ("set_pressure", {"set_pressure": "80 barg", "overpressure": "10 %"}),
    ("header_limit", {"header_limit": "cold"}),
]


@pytest.mark.parametrize("field, change", BAD_CASE_API, ids=[f"{f}-{i}" for i, (f, _) in enumerate(BAD_CASE_API)])
def test_case_api_bad_field_is_named_and_nothing_is_stored(app, api, world, field, change):
    cases, audit = count(app, Case), count(app, AuditEntry)
    resp = api(Role.ENGINEER, "POST", "/api/v1/cases", json=case_body(world, **change))
    assert resp.status_code == 422, resp.get_json()
    assert resp.get_json()["error"]["field"] == field
    assert count(app, Case) == cases and count(app, AuditEntry) == audit


@pytest.mark.parametrize("field, change", [c for c in BAD_CASE_API if c[0] not in ("status", "colour")][:12])
def test_case_api_bad_patch_changes_nothing(app, api, world, field, change):
    case_id = api(Role.ENGINEER, "POST", "/api/v1/cases", json=case_body(world)).get_json()["id"]
    audit = count(app, AuditEntry)
    resp = api(Role.ENGINEER, "PATCH", f"/api/v1/cases/{case_id}", json={**change, "version": 1})
    assert resp.status_code == 422, resp.get_json()
    assert resp.get_json()["error"]["field"] == field
    assert count(app, AuditEntry) == audit
    assert api(Role.ENGINEER, "GET", f"/api/v1/cases/{case_id}").get_json()["version"] == 1


def test_case_api_missing_records_are_404(api):
    for method, path in (("GET", "/api/v1/cases/999999"), ("PATCH", "/api/v1/cases/999999"),
                         ("POST", "/api/v1/cases/999999/compute"), ("GET", "/api/v1/cases/999999/results"),
                         ("GET", "/api/v1/fluids/999999"), ("PATCH", "/api/v1/fluids/999999"),
                         ("DELETE", "/api/v1/fluids/999999"), ("GET", "/api/v1/nothing-here")):
        resp = api(Role.ENGINEER, method, path, json={} if method == "PATCH" else None)
        assert resp.status_code == 404, (method, path)
        assert resp.get_json()["error"]["message"]


def test_case_api_filters_are_checked(api):
    resp = api(Role.ENGINEER, "GET", "/api/v1/cases", query_string={"site_id": "abc"})
    assert resp.status_code == 422 and resp.get_json()["error"]["field"] == "site_id"
    resp = api(Role.ENGINEER, "GET", "/api/v1/cases", query_string={"limit": "0"})
    assert resp.status_code == 422 and resp.get_json()["error"]["field"] == "limit"


# -- fluids -------------------------------------------------------------------------------------------------
def test_fluid_crud_and_conflicts(app, api):
    name = unique("API gas")
    resp = api(Role.ENGINEER, "POST", "/api/v1/fluids", json={"name": name, "composition": [["methane", 95],
                                                                                          ["ethane", 5]]})
    assert resp.status_code == 201, resp.get_json()
    fluid = resp.get_json()
    assert fluid["eos"] == "PR" and fluid["kij"] == "table"
    assert fluid["composition"][0] == {"component": "methane", "mole_fraction": pytest.approx(0.95)}
    dup = api(Role.ENGINEER, "POST", "/api/v1/fluids", json={"name": name, "composition": {"methane": 1}})
    assert dup.status_code == 409 and dup.get_json()["error"]["field"] == "name"
    bad = api(Role.ENGINEER, "POST", "/api/v1/fluids", json={"name": unique("x"), "composition": {"methane": 2}})
    assert bad.status_code == 422 and bad.get_json()["error"]["field"] == "composition"
    patched = api(Role.ENGINEER, "PATCH", f"/api/v1/fluids/{fluid['id']}", json={"eos": "SRK", "kij": "zero",
                                                                           "version": fluid["version"]})
    assert patched.status_code == 200 and patched.get_json()["eos"] == "SRK" and patched.get_json()["kij"] == "zero"
    assert api(Role.CHECKER, "GET", f"/api/v1/fluids/{fluid['id']}").get_json()["name"] == name
    assert name in [f["name"] for f in api(Role.CHECKER, "GET", "/api/v1/fluids").get_json()["fluids"]]
    assert api(Role.CHECKER, "DELETE", f"/api/v1/fluids/{fluid['id']}").status_code == 403
    assert api(Role.ENGINEER, "DELETE", f"/api/v1/fluids/{fluid['id']}").status_code == 204
    with app.app_context():
        assert db_session().get(FluidRecord, fluid["id"]) is None


def test_reference_lists(api, world):
    materials = api(Role.CHECKER, "GET", "/api/v1/materials").get_json()["materials"]
    assert "Test carbon steel" in [m["name"] for m in materials]
    sites = api(Role.CHECKER, "GET", "/api/v1/sites").get_json()["sites"]
    assert any(u["id"] == world.unit_id for s in sites for u in s["units"])


# -- errors --------------------------------------------------------------------------------------------------
def test_internal_error_is_a_json_500_without_traceback(api, monkeypatch, caplog):
    from jtcheck.web.api import library as api_module

    def explode(*args, **kwargs):
        raise RuntimeError("secret internals at /srv/db password=hunter2")

    monkeypatch.setattr(api_module.service, "list_fluids", explode)
    resp = api(Role.ENGINEER, "GET", "/api/v1/fluids")
    assert resp.status_code == 500
    body = resp.get_json()
    assert set(body) == {"error"} and body["error"]["field"] is None
    text = resp.data.decode()
    assert "Traceback" not in text and "hunter2" not in text and "RuntimeError" not in text
    assert "hunter2" in caplog.text            # but it is logged for the operator


def test_internal_error_on_a_page_is_a_plain_500(engineer, monkeypatch):
    from jtcheck.web.fluids import views as fluids_module

    def explode(*args, **kwargs):
        raise RuntimeError("hunter2")

    monkeypatch.setattr(fluids_module.service, "list_fluids", explode)
    resp = engineer.get("/fluids")
    assert resp.status_code == 500
    assert b"internal error" in resp.data and b"hunter2" not in resp.data and b"Traceback" not in resp.data


def test_wrong_method_is_405_json(api):
    resp = api(Role.ENGINEER, "PUT", "/api/v1/cases")
    assert resp.status_code == 405 and resp.get_json()["error"]["message"]


# -- OpenAPI -------------------------------------------------------------------------------------------------
def test_openapi_document_is_valid_and_lists_every_api_route(app, api):
    resp = api(Role.CHECKER, "GET", "/api/v1/openapi.json")
    assert resp.status_code == 200
    doc = resp.get_json()
    validate(doc)
    assert doc["openapi"].startswith("3.")
    server = doc["servers"][0]["url"]
    assert server.endswith("/api/v1")
    documented = {(m.upper(), "/api/v1" + p) for p, ops in doc["paths"].items() for m in ops}
    served = set()
    for rule in app.url_map.iter_rules():
        if not rule.endpoint.startswith("api."):
            continue
        path = re.sub(r"<(?:\w+:)?(\w+)>", r"{\1}", rule.rule)
        for method in rule.methods - {"HEAD", "OPTIONS"}:
            served.add((method, path))
    assert served == documented
    assert len(served) >= 17
    for path, ops in doc["paths"].items():
        for method, op in ops.items():
            assert op["summary"], (method, path)
            assert "401" in op["responses"], (method, path)
    schemas = doc["components"]["schemas"]
    for name in ("Error", "Quantity", "LetdownRequest", "CaseInput", "Case", "Result", "Fluid"):
        assert name in schemas


def test_openapi_document_is_readable_in_a_signed_in_browser(engineer, client):
    assert engineer.get("/api/v1/openapi.json").status_code == 200
    assert client.get("/api/v1/openapi.json").status_code == 401


def test_api_case_in_psig_round_trips(api, world):
    body = case_body(world, inlet_pressure="1000 psig", outlet_pressure={"value": 150, "unit": "psig"},
                     inlet_temperature="100 degF", p_atm="14.7 psia")
    case = api(Role.ENGINEER, "POST", "/api/v1/cases", json=body).get_json()
    p_atm = 14.7 * PSI
    assert math.isclose(case["si"]["inlet_pressure_pa"], 1000 * PSI + p_atm, rel_tol=1e-12)
    assert math.isclose(case["si"]["p_atm_pa"], p_atm, rel_tol=1e-12)
    assert case["display"]["inlet_pressure"]["value"] == pytest.approx(1000.0, rel=1e-12)
    assert case["display"]["outlet_pressure"] == {"value": pytest.approx(150.0, rel=1e-12), "unit": "psig"}
    assert case["display"]["inlet_temperature"] == {"value": pytest.approx(100.0, rel=1e-12), "unit": "degF"}


def test_results_and_lists_come_a_page_at_a_time(api, world):
    case_id = api(Role.ENGINEER, "POST", "/api/v1/cases", json=case_body(world)).get_json()["id"]
    ids = [api(Role.ENGINEER, "POST", f"/api/v1/cases/{case_id}/compute").get_json()["id"] for _ in range(3)]
    first = api(Role.CHECKER, "GET", f"/api/v1/cases/{case_id}/results?limit=2").get_json()
    assert [r["id"] for r in first["results"]] == ids[::-1][:2]           # newest first
    assert (first["count"], first["total"], first["next_offset"]) == (2, 3, 2)
    last = api(Role.CHECKER, "GET", f"/api/v1/cases/{case_id}/results?limit=2&offset=2").get_json()
    assert [r["id"] for r in last["results"]] == [ids[0]] and last["next_offset"] is None
    assert api(Role.CHECKER, "GET", f"/api/v1/cases/{case_id}/results").get_json()["limit"] == 20
    for bad in ("limit=0", "limit=1001", "offset=-1", "offset=2147483648"):
        resp = api(Role.CHECKER, "GET", f"/api/v1/fluids?{bad}")
        assert resp.status_code == 422 and resp.get_json()["error"]["field"] == bad.split("=")[0]
    fluids = api(Role.CHECKER, "GET", "/api/v1/fluids?limit=1").get_json()
    assert fluids["count"] == 1 and fluids["total"] >= 1 and fluids["limit"] == 1


# -- GERG-2008 ----------------------------------------------------------------------------------------------
def test_letdown_on_gerg_2008_returns_the_model_its_version_and_range(api):
    data = {**LETDOWN, "fluid": {"composition": {"nitrogen": 1.0}, "eos": "GERG2008", "kij": "table"},
            "p_in": "200 bara", "t_in": "300 K", "p_out": "20 bara"}
    resp = api(Role.ENGINEER, "POST", "/api/v1/letdown", json=data)
    assert resp.status_code == 200, resp.get_json()
    body = resp.get_json()
    assert body["basis"]["eos"] == "GERG2008" and body["basis"]["eos_version"] == "GERG-2008, Kunz and Wagner 2012"
    assert "extended range 60-700 K" in body["basis"]["eos_range"]
    expected = letdown(Fluid({"nitrogen": 1.0}, eos="GERG2008"), p_in=200e5, t_in=300.0, p_out=20e5)
    assert body["si"]["t_out_k"] == pytest.approx(expected.t_out, abs=1e-6)


@pytest.mark.parametrize("fluid, field", [
    ({"composition": {"methane": 0.9, "ethylene": 0.1}, "eos": "GERG2008"}, "fluid.composition"),
    ({"composition": {"methane": 1.0}, "eos": "GERG2008", "kij": "zero"}, "fluid.kij"),
])
def test_letdown_on_gerg_2008_names_the_refused_field(api, fluid, field):
    resp = api(Role.ENGINEER, "POST", "/api/v1/letdown", json={**LETDOWN, "fluid": fluid})
    assert resp.status_code == 422 and resp.get_json()["error"]["field"] == field


def test_openapi_document_offers_gerg2008_wherever_a_model_is_chosen(api):
    doc = api(Role.CHECKER, "GET", "/api/v1/openapi.json").get_json()
    assert "GERG2008" in doc["components"]["schemas"]["FluidSpec"]["properties"]["eos"]["enum"]
