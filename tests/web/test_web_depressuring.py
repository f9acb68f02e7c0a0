"""A vessel depressuring case through the web form and the JSON API: created, computed, shown with its curves,
and bad inputs shown at their field (invented vessel and numbers)."""
from __future__ import annotations

import html
import re

from web_helpers import case_body, case_form, count, created_id, field_error, unique

from jtcheck.notices import CAUTION
from jtcheck.records.models import Case, CaseResult, Role
from jtcheck.web.database import db_session

VESSEL_TEXT = "orientation=vertical; diameter=1.2 m; length=3 m; wall=20 mm"
ORIFICE_TEXT = "BDV-9; 30 mm; 0.85"


def depressuring_form(world, **overrides):
    data = case_form(world, tag=unique("BDV"), kind="vessel_depressuring", service="test blowdown",
                     inlet_temperature_min="", mass_flow="", outlet_pressure="2",
                     vessel=VESSEL_TEXT, orifices=ORIFICE_TEXT, heat_input="none", run="end=10 min; design=100 barg")
    data.update(overrides)
    return data


def test_a_depressuring_case_from_the_form_is_computed_and_shown_with_its_curves(app, engineer, world):
    form = engineer.get("/cases/new").data.decode()
    assert 'name="vessel"' in form and 'name="orifices"' in form and "vessel_depressuring" in form
    resp = engineer.post("/cases/new", data=depressuring_form(world))
    assert resp.status_code == 302, field_error(resp.data.decode(), "vessel") or resp.data[:2000]
    case_id = created_id(resp)
    with app.app_context():
        case = db_session().get(Case, case_id)
        assert case.parameters["vessel"] == {"orientation": "vertical", "inner_diameter_m": 1.2, "length_m": 3.0,
                                             "wall_thickness_m": 0.02}
        assert case.parameters["orifices"] == [{"name": "BDV-9", "diameter_m": 0.03, "discharge_coefficient": 0.85}]
    # the case page shows them, and the edit form gives them back as text
    view = engineer.get(f"/cases/{case_id}").data.decode()
    assert "orientation=vertical; diameter=1.2 m; length=3 m; wall=20 mm" in view and "BDV-9; 30 mm; 0.85" in view
    edit = engineer.get(f"/cases/{case_id}/edit").data.decode()
    assert "diameter=1.2 m" in edit and "BDV-9; 30 mm; 0.85" in edit and "design=100 barg" in edit
    resp = engineer.post(f"/cases/{case_id}/compute")
    assert resp.status_code == 302
    m = re.search(rf"/cases/{case_id}/results/(\d+)$", resp.headers["Location"])
    page = engineer.get(resp.headers["Location"]).data.decode()
    with app.app_context():
        result = db_session().get(CaseResult, int(m.group(1)))
        run = result.screening["answers"]["depressuring"]
    assert html.escape(CAUTION) in page
    for words in ("Vessel depressuring", "Depressuring target", "Time to the target", "Peak mass flow (to flare)",
                  "Minimum gas-wetted inner wall temperature", "Blowdown valve outlet", "Coincident pressure"):
        assert words in page, words
    # the numbers in the case's units: the minimum valve outlet in degC, the initial pressure 70 barg
    assert f"{run['min_valve_outlet_t']['value'] - 273.15:.2f} degC" in page
    start = page.index('<svg class="depressuring-chart"')
    svg = page[start:page.index("</svg>", start) + 6]
    assert "<path" in svg and " style=" not in svg and "<script" not in svg.lower()
    assert "Conditions and models" not in page      # no letdown conditions table for a run in time
    assert "Pressure-temperature diagram" not in page


def test_bad_depressuring_form_inputs_are_shown_at_their_field(app, engineer, world):
    before = count(app, Case)
    for field, value, words in (("vessel", "orientation=sideways; diameter=1 m; length=2 m; wall=10 mm", "sideways"),
                                ("vessel", "diameter=1 parsec", "diameter"),
                                ("orifices", "BDV-9; 30 mm", "discharge coefficient"),
                                ("run", "end=ten minutes", "time"),
                                ("run", "end=10 min; model=three-zone", "two-zone"),
                                ("heat_input", "fire; drainage=maybe", "drainage")):
        resp = engineer.post("/cases/new", data=depressuring_form(world, **{field: value}))
        assert resp.status_code == 422, (field, value)
        shown = field_error(resp.data.decode(), field)
        assert shown and words in html.unescape(shown), (field, shown)
    assert count(app, Case) == before


def test_the_api_creates_reads_and_computes_a_depressuring_case(app, api, world):
    body = case_body(world, tag=unique("BDV"), kind="vessel_depressuring", outlet_pressure="2 barg",
                     vessel={"orientation": "horizontal", "inner_diameter_m": 1.0, "volume_m3": 3.0,
                             "wall_thickness_m": 0.015},
                     orifices=[{"name": "RO-1", "diameter_m": 0.025, "discharge_coefficient": 0.8}],
                     heat_input={"kind": "none"}, run={"end_time_s": 600, "target_pressure_pa": 800000.0})
    resp = api(Role.ENGINEER, "POST", "/api/v1/cases", json=body)
    assert resp.status_code == 201, resp.get_json()
    case = resp.get_json()
    assert case["kind"] == "vessel_depressuring"
    assert case["parameters"]["orifices"][0]["name"] == "RO-1"
    assert case["parameters"]["vessel"]["volume_m3"] == 3.0
    got = api(Role.CHECKER, "GET", f"/api/v1/cases/{case['id']}").get_json()
    assert got["parameters"]["run"] == {"end_time_s": 600, "target_pressure_pa": 800000.0}
    resp = api(Role.ENGINEER, "POST", f"/api/v1/cases/{case['id']}/compute")
    assert resp.status_code in (200, 201), resp.get_json()
    result = resp.get_json()
    run = result["screening"]["answers"]["depressuring"]
    assert run["run"]["target_pressure_pa"] == 800000.0 and run["converged"]
    assert result["outcome"] in ("pass", "margin eroded", "fail")


def test_api_errors_name_the_field_of_the_object(app, api, world):
    body = case_body(world, tag=unique("BDV"), kind="vessel_depressuring", outlet_pressure="2 barg",
                     vessel={"orientation": "vertical", "inner_diameter_m": 1.0, "length_m": 2.0,
                             "wall_thickness_m": 0.015},
                     orifices=[{"name": "RO-1", "diameter_m": 0.025, "discharge_coefficient": 1.8}])
    resp = api(Role.ENGINEER, "POST", "/api/v1/cases", json=body)
    assert resp.status_code == 422, resp.get_json()
    text = str(resp.get_json())
    assert "orifices[0].discharge_coefficient" in text
    no_vessel = {k: v for k, v in body.items() if k != "vessel"}
    no_vessel["orifices"] = [{"name": "RO-1", "diameter_m": 0.025, "discharge_coefficient": 0.8}]
    resp = api(Role.ENGINEER, "POST", "/api/v1/cases", json=no_vessel)
    assert resp.status_code == 422 and "vessel" in str(resp.get_json())


def test_the_openapi_document_describes_the_depressuring_objects(api):
    doc = api(Role.CHECKER, "GET", "/api/v1/openapi.json").get_json()
    props = doc["components"]["schemas"]["CaseInput"]["properties"]
    assert "vessel_depressuring" in props["kind"]["enum"]
    vessel = next(o for o in props["vessel"]["oneOf"] if o.get("type") == "object")
    assert {"orientation", "inner_diameter_m", "length_m", "volume_m3", "wall_thickness_m"} <= set(vessel["properties"])
    orifice = next(o for o in props["orifices"]["oneOf"] if o.get("type") == "array")["items"]
    assert orifice["required"] == ["name", "diameter_m", "discharge_coefficient"]
    heat = next(o for o in props["heat_input"]["oneOf"] if o.get("type") == "object")
    assert "fire" in heat["properties"]["kind"]["enum"]
    run = next(o for o in props["run"]["oneOf"] if o.get("type") == "object")["properties"]
    assert "API 521" in run["design_pressure_pa"]["description"]
    assert set(run["model"]["enum"]) >= {"equilibrium", "two-zone"}
    assert "parameters" in doc["components"]["schemas"]["Case"]["properties"]


def test_a_liquid_level_in_a_gas_is_refused_at_compute_naming_the_field(app, api, world):
    body = case_body(world, tag=unique("BDV"), kind="vessel_depressuring", outlet_pressure="2 barg",
                     vessel={"orientation": "vertical", "inner_diameter_m": 1.0, "length_m": 2.0,
                             "wall_thickness_m": 0.015, "liquid_level_m": 0.5},
                     orifices=[{"name": "RO-1", "diameter_m": 0.025, "discharge_coefficient": 0.8}])
    case = api(Role.ENGINEER, "POST", "/api/v1/cases", json=body).get_json()
    resp = api(Role.ENGINEER, "POST", f"/api/v1/cases/{case['id']}/compute")
    assert resp.status_code == 422, resp.get_json()
    assert "vessel.liquid_level_m" in str(resp.get_json()) and "two-phase" in str(resp.get_json())


def test_the_api_computes_a_two_zone_case(app, api, engineer, world):
    # the run's model travels through the JSON API into the engine and back out in the stored run (a gas case:
    # without liquid the two-zone model runs as the equilibrium model, so this stays quick)
    body = case_body(world, tag=unique("BDV"), kind="vessel_depressuring", outlet_pressure="2 barg",
                     vessel={"orientation": "vertical", "inner_diameter_m": 1.0, "length_m": 2.0,
                             "wall_thickness_m": 0.015},
                     orifices=[{"name": "RO-1", "diameter_m": 0.025, "discharge_coefficient": 0.8}],
                     heat_input={"kind": "none"}, run={"end_time_s": 300, "model": "two-zone"})
    resp = api(Role.ENGINEER, "POST", "/api/v1/cases", json=body)
    assert resp.status_code == 201, resp.get_json()
    case = resp.get_json()
    assert case["parameters"]["run"]["model"] == "two-zone"
    resp = api(Role.ENGINEER, "POST", f"/api/v1/cases/{case['id']}/compute")
    assert resp.status_code in (200, 201), resp.get_json()
    run = resp.get_json()["screening"]["answers"]["depressuring"]
    assert run["converged"] and run["run"]["model"] == "two-zone"
    assert run["method"].startswith("two-zone")
    # the result page says which model ran
    page = engineer.get(f"/cases/{case['id']}/results/{resp.get_json()['id']}").data.decode()
    assert "Two-zone model: gas and liquid at their own temperatures." in page
