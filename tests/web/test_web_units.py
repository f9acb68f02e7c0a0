"""Every entry point of the register speaks the user's units (issue 18 item 5): the JSON API (direct letdowns and
stored cases), the case form and the result page quote values, ranges and the quantities of findings, remedies and
generated-case reasoning in the units typed, never SI with exponents.

The expected numbers are the user's own inputs shown back; the relations (outlet above inlet) and ranges are the
project's rules.
"""
from __future__ import annotations

import html
import json
import re

from test_web_screening import compute
from web_helpers import case_body, case_form, created_id, field_error

from jtcheck.marks import OPEN
from jtcheck.records.models import Role

GAS = "methane=0.85,ethane=0.07,propane=0.03,n-butane=0.01,nitrogen=0.02,CO2=0.02"


def test_the_api_quotes_a_relation_error_in_the_unit_typed(api):
    resp = api(Role.ENGINEER, "POST", "/api/v1/letdown", json={
        "fluid": {"composition": GAS, "eos": "PR"}, "p_in": "1000 psig", "t_in": "40 degF", "p_out": "1200 psig"})
    assert resp.status_code == 422
    err = resp.get_json()["error"]
    assert err["field"] == "p_out"
    assert "outlet pressure 1200 psig is above the inlet pressure 1000 psig" in err["message"]


def test_the_api_quotes_a_range_error_in_the_unit_typed(api):
    resp = api(Role.ENGINEER, "POST", "/api/v1/letdown", json={
        "fluid": {"composition": GAS, "eos": "PR"}, "p_in": "20000 bara", "t_in": "40 degC", "p_out": "10 bara"})
    assert resp.status_code == 422
    assert "inlet pressure 20000 bara is out of range; allowed: above 0 bara and at most 10000 bara" in \
        resp.get_json()["error"]["message"]


def test_the_api_answers_findings_and_reasoning_in_the_units_typed(api):
    resp = api(Role.ENGINEER, "POST", "/api/v1/letdown", json={
        "fluid": {"composition": GAS, "eos": "PR"}, "p_in": "1400 psig", "t_in": "50 degF", "p_out": "150 psig",
        "limit": "-20 degF", "margin": "9 degF"})
    assert resp.status_code == 200, resp.get_json()
    body = resp.get_json()
    text = json.dumps(body, ensure_ascii=False)
    assert OPEN not in text
    reasoning = [g.get("reasoning") or "" for g in body["screening"]["answers"]["generated_cases"]]
    assert any("(0 psig" in r and "1400 psig" in r and "50.0 degF" in r for r in reasoning), reasoning
    cold = next(f for f in body["screening"]["findings"] if f["topic"] == "cold metal")
    assert "degF" in cold["message"] and "delta degF" in cold["message"] and " K" not in cold["message"]


def test_the_register_api_quotes_range_errors_in_the_unit_typed(api, world):
    resp = api(Role.ENGINEER, "POST", "/api/v1/cases", json=case_body(world, inlet_pressure="20000 bara"))
    assert resp.status_code == 422
    message = resp.get_json()["error"]["message"]
    assert "20000 bara" in message and "10000 bara" in message and "e+" not in message


def test_the_case_form_quotes_a_relation_error_in_the_unit_typed(engineer, world):
    resp = engineer.post("/cases/new", data=case_form(
        world, inlet_pressure="1000", inlet_pressure_unit="psig", outlet_pressure="1200",
        outlet_pressure_unit="psig", inlet_temperature_min="", inlet_temperature_min_unit="degC"))
    assert resp.status_code == 422
    page = html.unescape(resp.data.decode())
    error = field_error(page, "outlet_pressure") or page
    assert "1200 psig is above the inlet pressure 1000 psig" in error
    assert OPEN not in page and "e+" not in error


def test_the_result_page_shows_every_sentence_in_the_cases_units(engineer, world):
    resp = engineer.post("/cases/new", data=case_form(
        world, inlet_pressure="1000", inlet_pressure_unit="psig", outlet_pressure="150",
        outlet_pressure_unit="psig", inlet_temperature="50", inlet_temperature_unit="degF",
        inlet_temperature_min="35", inlet_temperature_min_unit="degF", margin="9", margin_unit="degF",
        cold_limit="-20", cold_limit_unit="degF"))
    assert resp.status_code == 302, resp.data
    _, page = compute(engineer, created_id(resp))
    text = html.unescape(re.sub(r"<[^>]+>", " ", page))
    assert OPEN not in text
    sentences = re.sub(r"= [0-9.]+ (Pa|K)\b", "", text)      # the inputs table shows each input in SI beside it
    assert "bar abs" not in sentences and " Pa " not in sentences
    assert "(0 psig" in text and "1000 psig" in text        # the start-up reasoning in the case's units
    assert not re.search(r"\d \(\d+\.\d\d K\)", text)      # no "-61.8 degC (211.34 K)" pairs


def test_every_demo_case_page_reads_without_marks_or_float_noise(app, engineer, world):
    """The demo site's result pages: no mark left, no number with more than about 4 significant digits (float
    noise such as 244.14999999999998 or 0.590228; temperatures keep their 0.01), no SI pressure in a sentence."""
    from sqlalchemy import select

    from jtcheck.records.demo import load_demo
    from jtcheck.records.models import Case
    from jtcheck.web.database import db_session

    with app.app_context():
        s = db_session()
        load_demo(s)
        ids = {c.tag: c.id for c in s.scalars(select(Case)).all()}
    for tag in ("PCV-1101", "PSV-2101", "PSV-4101", "PCV-5101", "BDV-5102", "PCV-3101", "BDV-2102"):
        page = engineer.get(f"/cases/{ids[tag]}").data.decode()
        text = html.unescape(re.sub(r"<[^>]+>", " ", re.sub(r"<(script|style|svg)\b.*?</\1>", " ", page, flags=re.S)))
        text = re.sub(r"= [0-9.]+ (Pa|K)\b", "", text)     # the inputs table's SI echo
        assert OPEN not in text, tag
        numbers = re.findall(r"\d+\.\d+", text)
        def significant(n):
            return len(n.replace(".", "").lstrip("0"))

        noisy = [n for n in numbers if n != "1.01325"     # the entered atmosphere, as typed
                 and (significant(n) > 6 or (len(n.split(".")[1]) >= 5 and significant(n) > 4))]
        assert not noisy, (tag, noisy[:5])
        bad = re.findall(r".{60}(?:bar abs|\d Pa\b).{20}", text)
        assert not bad, (tag, bad)
