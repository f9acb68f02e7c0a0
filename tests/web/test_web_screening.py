"""The screening on the case pages: outcome badges, findings, answers in the case's units, the new case inputs
(hydrates, minimum outlet pressure, relief valve) through the form and the API body, and the outcome filter."""
from __future__ import annotations

import html
import math
import re
from dataclasses import replace

import pytest
from sqlalchemy import select
from web_helpers import P_ATM, PSI, case_body, case_form, count, created_id, field_error, unique

from jtcheck.notices import CAUTION
from jtcheck.records import service
from jtcheck.records.models import AuditEntry, Case, CaseResult
from jtcheck.reports.numbers import fmt_number
from jtcheck.units import pressure_from_pa, temperature_from_k
from jtcheck.web.api.serialize import result_json
from jtcheck.web.cases.results import screening_view
from jtcheck.web.database import db_session

LABELS = {"pass": "PASS", "margin eroded": "MARGIN ERODED", "fail": "FAIL", "not screened": "NOT SCREENED",
          "not computed": "NOT COMPUTED"}


def _degf_to_k(f: float) -> float:
    return (f - 32.0) / 1.8 + 273.15


def outcome_panel(page: str) -> tuple[str, str]:
    """(outcome slug, inner HTML) of the result's outcome panel."""
    m = re.search(r'<div class="outcome-panel outcome-panel-([a-z-]+)" id="outcome">(.*?)</div>', page, re.S)
    assert m, "no outcome panel on the page"
    return m.group(1), m.group(2)


def assert_badge(fragment: str, outcome: str) -> None:
    """The badge of ``outcome`` is in ``fragment``: its own shape (an SVG) and its words."""
    m = re.search(rf'<span class="outcome-badge outcome-{outcome.replace(" ", "-")}[^"]*" data-outcome="{outcome}">'
                  r'<svg class="outcome-icon"[^>]*aria-hidden="true"[^>]*>(.*?)</svg>'
                  r'<span class="outcome-label">([^<]*)</span></span>', fragment, re.S)
    assert m, f"no {outcome!r} badge"
    assert m.group(2) == LABELS[outcome]
    assert "<path" in m.group(1) or "<circle" in m.group(1) or "<rect" in m.group(1)


def compute(client, case_id: int) -> tuple[int, str]:
    """(result id, result page) after "Compute now"."""
    resp = client.post(f"/cases/{case_id}/compute")
    assert resp.status_code == 302
    m = re.search(rf"/cases/{case_id}/results/(\d+)$", resp.headers["Location"])
    assert m
    page = client.get(resp.headers["Location"])
    assert page.status_code == 200
    return int(m.group(1)), page.data.decode()


def stored(app, result_id: int) -> CaseResult:
    with app.app_context():
        result = db_session().get(CaseResult, result_id)
        db_session().expunge(result)
        return result


#: The generated start-up case switched off with a reason, for the tests of outcomes at the user's own conditions
#: (the register screens start-up by default: tests/web/test_web_cases.py).
START_UP_OFF = "start_up: outlet held at pressure by the downstream network (invented)"


def new_case(client, world, **overrides) -> int:
    resp = client.post("/cases/new", data=case_form(world, **overrides))
    assert resp.status_code == 302, field_errors(resp.data.decode())
    return created_id(resp)


def field_errors(page: str) -> list[tuple[str, str]]:
    return re.findall(r'<p class="field-error" id="err-([^"]+)" data-field="[^"]+">(.*?)</p>', page, re.S)


# -- outcome on the result page -------------------------------------------------------------------------
def test_failing_case_shows_fail_badge_findings_and_answers_in_the_case_units(app, engineer, world):
    """70 barg in psig/degF, a cold minimum inlet temperature: the outlet is far below the MDMT."""
    form = case_form(world, inlet_pressure="1000", inlet_pressure_unit="psig", outlet_pressure="150",
                     outlet_pressure_unit="psig", inlet_temperature="68", inlet_temperature_unit="degF",
                     inlet_temperature_min="41", inlet_temperature_min_unit="degF", mdmt="-20", mdmt_unit="degF",
                     margin="9", margin_unit="degF", mass_flow="2", credible_off=START_UP_OFF)
    case_id = created_id(engineer.post("/cases/new", data=form))
    result_id, page = compute(engineer, case_id)
    result = stored(app, result_id)
    assert result.outcome == "fail" and result.screening is not None

    slug, panel = outcome_panel(page)
    assert slug == "fail"
    assert_badge(panel, "fail")
    assert "Outcome: fail." in panel
    assert html.escape(CAUTION) in page

    # findings: severity word, topic, message and basis; hazards first
    findings = re.findall(r'<li class="finding finding-(\w+)">', page)
    assert findings and findings[0] == "hazard"
    assert findings == sorted(findings, key=["hazard", "caution", "information"].index)
    assert '<span class="severity severity-hazard">HAZARD</span> <strong class="topic">Cold metal</strong>' in page
    assert "Below the cold limit by" in page and "Basis: governing limit" in page

    # the required preheat, in degF, with the duty for the given mass flow
    answers = result.screening["answers"]
    gov = answers["preheat"]["governing"]
    t_req = temperature_from_k(gov["t_in_required_k"], "degF")
    rise = gov["temperature_rise_k"] * 1.8
    assert gov["needed"] and gov["duty_w"] > 0
    assert f"Heat the inlet to <strong>{t_req:.2f} degF</strong>" in page
    assert f"a rise of\n    <strong>{rise:.2f} delta degF</strong>" in page
    assert f"heater duty\n    <strong>{gov['duty_w'] / 1e3:.1f} kW</strong>" in page
    # the lowest outlet pressure, in psig
    p_min = answers["outlet_pressure_limit"]["governing"]["p_out_min_pa"]
    p_text = fmt_number(pressure_from_pa(p_min, "psig", P_ATM), "computed")   # an answer: 4 significant digits
    assert f"Keep the outlet pressure at or above <strong>{p_text} psig</strong>" in page

    # the condition table: both models, the model spread, the screened outlet, per-condition bands
    for words in ("Outlet, PR", "Outlet, SRK", "Model spread", "Screened outlet", "Coldest in the operating ranges"):
        assert words in page, words
    coldest = result.screening["t_out_min_k"]
    assert f"<strong>{temperature_from_k(coldest, 'degF'):.2f} degF</strong>" in page
    assert_badge(page, "fail")

    # the operating sweep: worst point, completeness, the table and its chart
    assert "Operating sweep" in page and "Worst point" in page and "yes: every point converged" in page
    assert '<table class="sweep-table small">' in page
    chart = page[page.index('<svg class="sweep-chart"'):]
    chart = chart[:chart.index("</svg>") + 6]
    assert "<path" in chart and " style=" not in chart and "<script" not in chart.lower()
    assert '<svg class="pt-diagram"' in page and "the limit plus\n    margin (dash-dot)" in page

    # the API view of the same result carries the stored screening plus display values in the case's units
    with app.app_context():
        body = result_json(db_session().get(CaseResult, result_id), True)
    scr = body["screening"]
    assert scr["outcome"] == "fail" and scr["findings"] and scr["answers"]["preheat"]
    disp = scr["display"]
    assert disp["preheat_t_in_required"] == {"value": pytest.approx(t_req), "unit": "degF"}
    assert disp["preheat_temperature_rise"] == {"value": pytest.approx(rise), "unit": "degF"}
    assert disp["preheat_duty"]["unit"] == "kW"
    assert disp["outlet_pressure_limit"] == {"value": pytest.approx(pressure_from_pa(p_min, "psig", P_ATM)),
                                             "unit": "psig"}
    assert disp["governing_limit"] == {"value": pytest.approx(-20.0), "unit": "degF"}
    # the target: limit + total margin (5 K entered + the PR-SRK spread), in degF
    assert disp["target"] == {"value": pytest.approx((scr["limits"]["target_k"] - 273.15) * 1.8 + 32.0),
                              "unit": "degF"}
    assert scr["limits"]["target_k"] == pytest.approx(
        scr["limits"]["governing_k"] + 5.0 + scr["limits"]["model_spread_k"])
    assert disp["t_out_min"]["unit"] == "degF"
    assert disp["sweep_worst"]["t_out"]["value"] == pytest.approx(temperature_from_k(coldest, "degF"))
    assert body["caution"] == CAUTION
    assert body["limits"]["governing_k"] == pytest.approx(_degf_to_k(-20))
    assert body["limits"]["target_k"] == pytest.approx(_degf_to_k(-20) + 5.0 + scr["limits"]["model_spread_k"])
    assert all(c["band"] in ("pass", "margin eroded", "fail", "not screened") for c in body["conditions"])


def test_passing_case_shows_pass(app, engineer, world):
    case_id = new_case(engineer, world, inlet_temperature_min="", credible_off=START_UP_OFF)
    result_id, page = compute(engineer, case_id)
    assert stored(app, result_id).outcome == "pass"
    slug, panel = outcome_panel(page)
    assert slug == "pass"
    assert_badge(panel, "pass")
    assert "Outcome: pass." in panel
    assert 'data-outcome="fail"' not in page and "What keeps the outlet above" not in page
    assert html.escape(CAUTION) in page


def test_margin_eroded_between_the_limit_and_limit_plus_margin(app, engineer, world):
    case_id = new_case(engineer, world, inlet_temperature_min="", material_id="", margin="5")
    first, _ = compute(engineer, case_id)
    t_min = stored(app, first).t_out_min_k
    form = case_form(world, inlet_temperature_min="", material_id="", margin="5",
                     cold_limit=f"{t_min - 273.15 - 2.0:.4f}", version="1")
    assert engineer.post(f"/cases/{case_id}/edit", data=form).status_code == 302
    result_id, page = compute(engineer, case_id)
    assert stored(app, result_id).outcome == "margin eroded"
    slug, panel = outcome_panel(page)
    assert slug == "margin-eroded"
    assert_badge(panel, "margin eroded")
    assert "Required preheat" in page and "Outlet-pressure limit" in page
    # the page shows each margin term and the total (issue 12 item 5): the entered 5 K and the PR/SRK spread
    assert "Margin terms" in page and "entered margin: 5" in page
    assert "model spread (PR vs SRK at " in page and "total: " in page


def test_case_without_a_limit_is_not_screened_never_pass(app, engineer, world):
    case_id = new_case(engineer, world, inlet_temperature_min="", material_id="")
    result_id, page = compute(engineer, case_id)
    assert stored(app, result_id).outcome == "not screened"
    slug, panel = outcome_panel(page)
    assert slug == "not-screened"
    assert_badge(panel, "not screened")
    assert "no MDMT and no cold limit" in page
    assert 'data-outcome="pass"' not in page


def test_not_converged_case_is_not_screened_never_pass(app, engineer, world, monkeypatch):
    """SRK 'fails' on every letdown: the case would pass on PR alone, but it is not screened."""
    from jtcheck.screening import screen as screen_module

    real = screen_module.letdown

    def srk_fails(fluid, *args, **kwargs):
        r = real(fluid, *args, **kwargs)
        return replace(r, converged=False, message="did not converge (forced by the test)") \
            if fluid.eos.value == "SRK" else r

    monkeypatch.setattr(screen_module, "letdown", srk_fails)
    case_id = new_case(engineer, world, inlet_temperature_min="")
    result_id, page = compute(engineer, case_id)
    result = stored(app, result_id)
    assert result.outcome == "not screened" and not result.converged
    slug, panel = outcome_panel(page)
    assert slug == "not-screened"
    assert_badge(panel, "not screened")
    assert 'data-outcome="pass"' not in page
    assert "Not every condition converged" in page and "forced by the test" in page


def test_result_stored_before_the_screening_shows_not_screened(app, engineer, world):
    case_id = new_case(engineer, world, inlet_temperature_min="")
    result_id, _ = compute(engineer, case_id)
    keys = ("t_screen_k", "governing_model", "t_out_by_model", "solids", "screen_message")
    with app.app_context():
        s = db_session()
        r = s.get(CaseResult, result_id)
        r.results = [{k: v for k, v in e.items() if k not in keys} for e in r.results]
        r.screening, r.outcome = None, None
        s.commit()
    page = engineer.get(f"/cases/{case_id}/results/{result_id}").data.decode()
    slug, panel = outcome_panel(page)
    assert slug == "not-screened"
    assert_badge(panel, "not screened")
    assert "stored before the hazard screening" in page
    assert 'data-outcome="pass"' not in panel
    assert "Margin to cold limit" in page and html.escape(CAUTION) in page
    with app.app_context():
        r = db_session().get(CaseResult, result_id)
        body = result_json(r)
        view = screening_view(r)
    assert body["screening"] is None and body["conditions"][0]["si"]["t_screen_k"] == body["conditions"][0]["si"][
        "t_out_k"]
    assert view.legacy and view.outcome == "not screened" and view.limits.governing_k == pytest.approx(244.15)
    # the per-condition band still judges the stored outlet against the same limits
    assert body["conditions"][0]["band"] == "pass"


def test_co2_solids_outlet_is_shown(app, engineer, world):
    with app.app_context():
        s = db_session()
        admin = service.get_user_by_email(s, "admin@example.org")
        fluid = service.create_fluid(s, admin, unique("Dense CO2"), {"carbon dioxide": 0.98, "methane": 0.02}, "PR",
                                     "table")
        fluid_id = fluid.id
    case_id = new_case(engineer, world, fluid_id=str(fluid_id), inlet_pressure="60", inlet_pressure_unit="bara",
                       inlet_temperature="15", outlet_pressure="1.5", outlet_pressure_unit="bara",
                       inlet_temperature_min="", mass_flow="")
    result_id, page = compute(engineer, case_id)
    result = stored(app, result_id)
    solids = result.results[0]["solids"]
    assert solids and solids["forms_solid"]
    assert "<th>CO2 solids</th>" in page
    assert f"dry ice: outlet {temperature_from_k(solids['t_out_k'], 'degC'):.2f} degC" in page
    assert "Dry ice forms" in page
    assert "Enter a mass flow on the case for the heater duty." in page


def test_relief_valve_block(app, engineer, world):
    case_id = new_case(engineer, world, kind="relief_valve", inlet_temperature_min="", set_pressure="75",
                       set_pressure_unit="barg", overpressure="10", overpressure_unit="%",
                       superimposed_back_pressure="1", superimposed_back_pressure_unit="barg",
                       built_up_back_pressure="2", built_up_back_pressure_unit="bar", header_limit="-46",
                       header_limit_unit="degC")
    result_id, page = compute(engineer, case_id)
    rv = stored(app, result_id).screening["answers"]["relief_valve"]
    model = rv["governing_model"]
    d = rv["models"][model]
    assert d["p_relieving_pa"] == pytest.approx(75e5 * 1.1 + P_ATM)
    assert "<h3 id=\"relief-heading\">Relief valve</h3>" in page
    assert "<strong>82.5 barg</strong>" in page                 # relieving pressure, in the set pressure's unit
    assert "<strong>3 barg</strong>" in page                    # back pressure: 1 barg + 2 bar
    assert "built-up 2 bar" in page
    flow = "choked" if d["nozzle"]["choked"] else "not choked"
    assert f"<dt>Flow</dt><dd><strong>{flow}</strong></dd>" in page
    # computed ratios to 4 significant digits (issue 18: no more digits than the inputs justify)
    assert fmt_number(d['nozzle']['critical_pressure_ratio'], "computed") in page
    assert f"ideal-gas value {fmt_number(d['nozzle']['ideal_critical_pressure_ratio'], 'computed')}" in page
    assert f"<strong>{temperature_from_k(d['t_downstream_k'], 'degC'):.2f} degC</strong>" in page
    # the header limit is screened at the tip (atmospheric) in the per-limit table, and the page says so
    assert 'id="relief-limits"' in page and "-46.00 degC" in page
    assert "flare header (at the tip, atmospheric)" in page and "a conservative default" in page
    assert "Required preheat" not in page                      # a relief valve is never offered a heater


# -- the case form: new inputs ------------------------------------------------------------------------------
def test_new_fields_round_trip_through_the_form(app, engineer, world):
    form = case_form(world, kind="relief_valve", inlet_pressure="1000", inlet_pressure_unit="psig",
                     outlet_pressure="150", outlet_pressure_unit="psig", outlet_pressure_min="100",
                     outlet_pressure_min_unit="psig", water_saturated="on", hydrate_inhibitor="MEG",
                     set_pressure="1100", set_pressure_unit="psig", overpressure="10", overpressure_unit="%",
                     superimposed_back_pressure="15", superimposed_back_pressure_unit="psig",
                     built_up_back_pressure="30", built_up_back_pressure_unit="psi", header_limit="-50",
                     header_limit_unit="degF")
    case_id = created_id(engineer.post("/cases/new", data=form))
    expected = {"outlet_pressure_min_pa": 100 * PSI + P_ATM, "set_pressure_pa": 1100 * PSI + P_ATM,
                "overpressure_fraction": 0.10, "superimposed_back_pressure_pa": 15 * PSI + P_ATM,
                "built_up_back_pressure_pa": 30 * PSI, "header_limit_k": _degf_to_k(-50)}
    with app.app_context():
        case = db_session().get(Case, case_id)
        for key, value in expected.items():
            assert math.isclose(getattr(case, key), value, rel_tol=1e-12), key
        assert case.water_saturated is True and case.hydrate_inhibitor == "MEG"
        assert case.display_units["overpressure"] == "%"
        assert case.display_units["built_up_back_pressure"] == "psi"
        version = case.version

    view = engineer.get(f"/cases/{case_id}").data.decode()
    assert "10 % <span class=\"muted small\">= 0.1 fraction</span>" in view
    assert "water-saturated gas" in view and "inhibitor MEG" in view

    edit = engineer.get(f"/cases/{case_id}/edit").data.decode()
    for name, value, unit in (("outlet_pressure_min", "100", "psig"), ("set_pressure", "1100", "psig"),
                              ("overpressure", "10", "%"), ("superimposed_back_pressure", "15", "psig"),
                              ("built_up_back_pressure", "30", "psi"), ("header_limit", "-50", "degF")):
        assert re.search(rf'id="f-{name}" name="{name}" type="text" inputmode="decimal" value="{re.escape(value)}"',
                         edit), name
        select_html = edit.split(f'name="{name}_unit"', 1)[1].split("</select>", 1)[0]
        assert f'<option value="{unit}" selected>' in select_html, name
    assert re.search(r'id="f-water_saturated" name="water_saturated" type="checkbox" value="on" checked', edit)
    inhibitor = edit.split('name="hydrate_inhibitor"', 1)[1].split("</select>", 1)[0]
    assert '<option value="MEG" selected>' in inhibitor
    assert "<legend>Relief valve</legend>" in edit

    # sent back as shown: nothing changes
    again = engineer.post(f"/cases/{case_id}/edit", data={**form, "version": str(version)})
    assert again.status_code == 302
    with app.app_context():
        assert db_session().get(Case, case_id).version == version

    # unticking the box and clearing the relief data is an edit
    cleared = {**form, "version": str(version), "water_saturated": "", "kind": "control_valve",
               **{name: "" for name in ("set_pressure", "overpressure", "superimposed_back_pressure",
                                        "built_up_back_pressure", "header_limit")}}
    assert engineer.post(f"/cases/{case_id}/edit", data=cleared).status_code == 302
    with app.app_context():
        case = db_session().get(Case, case_id)
        assert case.version == version + 1 and case.water_saturated is False
        assert case.set_pressure_pa is None and case.overpressure_fraction is None
        assert "overpressure" not in case.display_units


def test_the_form_of_every_case_shows_the_relief_fieldset(engineer):
    page = engineer.get("/cases/new").data.decode()
    assert "<legend>Relief valve</legend>" in page and "<legend>Hydrates</legend>" in page
    for name in ("outlet_pressure_min", "set_pressure", "overpressure", "superimposed_back_pressure",
                 "built_up_back_pressure", "header_limit", "water_saturated", "hydrate_inhibitor"):
        assert f'id="f-{name}"' in page, name
    built_up = page.split('name="built_up_back_pressure_unit"', 1)[1].split("</select>", 1)[0]
    assert re.findall(r'<option value="([^"]+)"', built_up) == ["bar", "kPa", "MPa", "psi"]


RELIEF = {"kind": "relief_valve", "set_pressure": "75", "set_pressure_unit": "barg", "overpressure": "10",
          "overpressure_unit": "%", "superimposed_back_pressure": "1", "superimposed_back_pressure_unit": "barg",
          "built_up_back_pressure": "2", "built_up_back_pressure_unit": "bar"}
BAD_NEW_FIELDS = [
    ("overpressure", {**RELIEF, "overpressure": "150"}, "out of range"),
    ("overpressure", {**RELIEF, "overpressure": "-5"}, "percent"),
    ("overpressure", {**RELIEF, "overpressure": "ten"}, "not a number"),
    ("overpressure", {**RELIEF, "overpressure": ""}, "required with a set pressure"),
    ("overpressure", {"overpressure": "10", "overpressure_unit": "%"}, "need the set pressure"),
    ("built_up_back_pressure", {**RELIEF, "built_up_back_pressure": "100"}, "not below the relieving pressure"),
    ("built_up_back_pressure", {**RELIEF, "built_up_back_pressure": "two"}, "not a number"),
    ("built_up_back_pressure", {**RELIEF, "built_up_back_pressure_unit": "barg"}, "choose a unit"),
    ("built_up_back_pressure", {**RELIEF, "built_up_back_pressure": "-1"}, "out of range"),
    ("superimposed_back_pressure", {**RELIEF, "superimposed_back_pressure": "90", "built_up_back_pressure": ""},
     "not below the relieving"),
    ("set_pressure", {**RELIEF, "kind": "control_valve"}, "only for relief-valve cases"),
    ("set_pressure", {**RELIEF, "set_pressure": "-1"}, "above the atmospheric pressure"),
    ("header_limit", {**RELIEF, "header_limit": "cold", "header_limit_unit": "degC"}, "not a number"),
    ("outlet_pressure_min", {"outlet_pressure_min": "20", "outlet_pressure_min_unit": "barg"},
     "above the normal outlet pressure"),
    ("outlet_pressure_min", {"outlet_pressure_min": "low", "outlet_pressure_min_unit": "barg"}, "not a number"),
    ("hydrate_inhibitor", {"hydrate_inhibitor": "glycerol"}, "unknown hydrate inhibitor"),
    ("water_saturated", {"water_saturated": "maybe"}, "yes/no"),
]


@pytest.mark.parametrize("field, overrides, words", BAD_NEW_FIELDS,
                         ids=[f"{f}-{i}" for i, (f, _, _) in enumerate(BAD_NEW_FIELDS)])
def test_bad_new_field_is_shown_at_that_field_and_nothing_is_stored(app, engineer, world, field, overrides, words):
    cases, audit = count(app, Case), count(app, AuditEntry)
    resp = engineer.post("/cases/new", data=case_form(world, tag=unique("BAD-NEW"), **overrides))
    assert resp.status_code == 422
    page = resp.data.decode()
    message = field_error(page, field)
    assert message is not None, f"no error at {field}: {field_errors(page)}"
    assert words in html.unescape(message), message
    assert f'href="#f-{field}"' in page
    assert "_pa)" not in html.unescape(message)      # fields named as the form names them
    assert count(app, Case) == cases and count(app, AuditEntry) == audit


def test_overpressure_error_explains_percent(engineer, world):
    resp = engineer.post("/cases/new", data=case_form(world, **{**RELIEF, "overpressure": "150"}))
    message = html.unescape(field_error(resp.data.decode(), "overpressure"))
    assert "1.5" in message and "0 to 100 %" in message
    assert 'value="150"' in resp.data.decode()        # what the user typed is kept


# -- the same fields in an API case body --------------------------------------------------------------------
def test_api_case_body_accepts_the_new_fields(app, api, world):
    body = case_body(world, kind="relief_valve", outlet_pressure_min="5 barg", water_saturated=True,
                     hydrate_inhibitor="meg", set_pressure="75 barg", overpressure={"value": 10, "unit": "%"},
                     superimposed_back_pressure="1 barg", built_up_back_pressure="2 barg",
                     header_limit={"value": -50, "unit": "degF"})
    resp = api("engineer", "POST", "/api/v1/cases", json=body)
    assert resp.status_code == 201, resp.get_json()
    case_id = resp.get_json()["id"]
    with app.app_context():
        case = db_session().get(Case, case_id)
        assert math.isclose(case.outlet_pressure_min_pa, 5e5 + P_ATM)
        assert math.isclose(case.set_pressure_pa, 75e5 + P_ATM)
        assert case.overpressure_fraction == pytest.approx(0.10)
        assert math.isclose(case.superimposed_back_pressure_pa, 1e5 + P_ATM)
        assert math.isclose(case.built_up_back_pressure_pa, 2e5)          # a difference: no atmosphere added
        assert math.isclose(case.header_limit_k, _degf_to_k(-50))
        assert case.water_saturated is True and case.hydrate_inhibitor == "MEG"
        assert case.display_units["overpressure"] == "%" and case.display_units["built_up_back_pressure"] == "bar"


@pytest.mark.parametrize("field, value, words", [
    ("overpressure", 10, "has no unit"),
    ("overpressure", "10 bar", "percent"),
    ("overpressure", "150 %", "0 to 100 %"),
    ("built_up_back_pressure", "2 degC", "unknown unit"),
    ("water_saturated", "yes", "true or false"),
    ("hydrate_inhibitor", "glycerol", "unknown hydrate inhibitor"),
    ("outlet_pressure_min", "80 barg", "above the normal outlet pressure"),
])
def test_api_case_body_refuses_bad_new_fields_naming_them(api, world, field, value, words):
    relief = {"kind": "relief_valve", "set_pressure": "75 barg", "overpressure": "10 %"}
    resp = api("engineer", "POST", "/api/v1/cases", json=case_body(world, **{**relief, field: value}))
    assert resp.status_code == 422, resp.get_json()
    error = resp.get_json()["error"]
    assert error["field"] == field and words in error["message"], error


# -- the case list ------------------------------------------------------------------------------------------
def test_case_list_shows_outcome_badges_and_filters_by_outcome(app, engineer, world):
    service_text = unique("outcome-filter")
    failing = new_case(engineer, world, tag=unique("FAIL"), service=service_text)
    passing = new_case(engineer, world, tag=unique("PASS"), service=service_text, inlet_temperature_min="",
                       credible_off=START_UP_OFF)
    unscreened = new_case(engineer, world, tag=unique("NOLIMIT"), service=service_text, inlet_temperature_min="",
                          material_id="")
    fresh = new_case(engineer, world, tag=unique("FRESH"), service=service_text)
    for case_id in (failing, passing, unscreened):
        compute(engineer, case_id)
    with app.app_context():
        tags = {i: db_session().get(Case, i).tag for i in (failing, passing, unscreened, fresh)}

    page = engineer.get("/cases", query_string={"q": service_text}).data.decode()
    options = page.split('id="f-outcome"', 1)[1].split("</select>", 1)[0]
    assert re.findall(r'<option value="([^"]*)"', options) == ["", "pass", "margin eroded", "fail", "not screened",
                                                               "not computed"]
    for case_id, outcome in ((failing, "fail"), (passing, "pass"), (unscreened, "not screened"),
                             (fresh, "not computed")):
        row = page.split(f">{tags[case_id]}</a>", 1)[1].split("</tr>", 1)[0]
        assert_badge(row, outcome)

    for outcome, wanted in (("fail", failing), ("pass", passing), ("not screened", unscreened),
                            ("not computed", fresh)):
        listed = engineer.get("/cases", query_string={"q": service_text, "outcome": outcome}).data.decode()
        assert tags[wanted] in listed, outcome
        assert [t for i, t in tags.items() if i != wanted and t in listed] == [], outcome
        assert "1 case." in listed
    with app.app_context():
        assert db_session().scalars(select(CaseResult.outcome).where(CaseResult.case_id == failing)).one() == "fail"


# -- the MDMT from the material's exemption curve (issue 17) --------------------------------------------
def test_curve_material_shows_the_mdmt_working_and_the_json_carries_it(app, engineer, world, api):
    from jtcheck.records.models import Material, Role, User

    with app.app_context():
        s = db_session()
        admin = s.scalar(select(User).where(User.email == world.emails[Role.ADMIN]))
        m = service.create_material(s, admin, name=unique("SA-106 B pipe"), exemption_curve="B", curve_code="B31.3",
                                    thickness_m=0.0127, allowable_stress_pa=138e6, outside_diameter_m=0.2191)
        material_id = m.id
        assert s.get(Material, material_id).min_metal_temperature_k is None
    case_id = new_case(engineer, world, material_id=str(material_id), inlet_temperature_min="")
    result_id, page = compute(engineer, case_id)
    assert "MDMT working" in page and "Curve B at governing thickness 12.70 mm" in page
    assert "coincident pressure" in page and "verify against the code edition in force" in page.lower()
    body = api(Role.ENGINEER, "GET", f"/api/v1/cases/{case_id}/results").get_json()
    stored_result = next(r for r in body["results"] if r["id"] == result_id)
    working = stored_result["screening"]["limits"]["mdmt_working"]
    assert working["working"]["code"] == "B31.3" and working["stress_ratio"] < 1.0


def test_the_hydrate_block_shows_the_finding_numbers(app, engineer, world):
    # a water-saturated lean gas let down to a cold outlet: the page shows the hydrate temperature at the outlet, the
    # subcooling, the dose in the free water with Hammerschmidt beside it and the injection rate (issue 13)
    case_id = new_case(engineer, world, water_saturated="on", inlet_pressure="80", inlet_pressure_unit="barg",
                       inlet_temperature="20", outlet_pressure="65", outlet_pressure_unit="barg",
                       inlet_temperature_min="", mass_flow="10")
    result_id, page = compute(engineer, case_id)
    hyd = [f for f in stored(app, result_id).screening["findings"] if f["topic"] == "hydrates"][0]
    n = hyd["numbers"]
    assert "Hydrates at the governing outlet" in page and "Hydrate temperature at the outlet pressure" in page
    assert f"{fmt_number(n['t_hydrate_k'] - 273.15, 'temperature')} degC" in page
    assert f"{fmt_number(n['subcooling_k'], 'difference')} K" in page
    assert "Hammerschmidt" in page and n["inhibitor_weight_percent"] is not None, (hyd["message"], hyd["basis"])
    assert f"{fmt_number(n['inhibitor_weight_percent'])} mass %" in page
    assert n["injection_kg_per_s"] > 0.0 and f"{fmt_number(n['injection_kg_per_s'] * 3600)} kg/h" in page
