"""The API's screening: POST /api/v1/letdown with limits, ranges and hydrate inputs; outcome, answers and
display values; a stored case result carrying its outcome and screening; the OpenAPI schemas of both."""
from __future__ import annotations

import dataclasses
import math

import pytest
from jsonschema import Draft202012Validator
from web_helpers import LEAN_GAS, P_ATM, PSI, case_body

from jtcheck import Fluid, letdown
from jtcheck.records.models import Role
from jtcheck.screening import screen as screen_module
from jtcheck.web.api import schemas as api_schemas
from jtcheck.web.api.letdown import _LETDOWN_KEYS
from jtcheck.web.cases import inputs as caseinput

LIMIT_K = 273.15 - 29.0
MARGIN_K = 5.0
TARGET_K = LIMIT_K + MARGIN_K
#: The cold case of the brief: a lean gas from 100 bar to 10 bar at 10 degC against -29 degC with 5 K margin.
#: The generated start-up case is switched off (with a reason) so that these tests see the user's conditions
#: only; test_start_up_is_screened_unless_switched_off checks it.
START_UP_OFF = {"start_up": "outlet held at pressure by the downstream network (invented)"}
COLD = {"fluid": {"composition": LEAN_GAS, "eos": "PR"}, "p_in": "100 bara", "t_in": "10 degC", "p_out": "10 bara",
        "limit": "-29 degC", "margin": "5 K", "credible_off": START_UP_OFF}
#: A warm one: 100 bar to 90 bar at 40 degC cools by a few kelvin only.
WARM = {**COLD, "t_in": "40 degC", "p_out": "90 bara"}


def _post(api, data, role=Role.CHECKER):
    return api(role, "POST", "/api/v1/letdown", json=data)


def _ok(api, data):
    resp = _post(api, data)
    assert resp.status_code == 200, resp.get_json()
    return resp.get_json()


def _schema_validator(api, name: str) -> Draft202012Validator:
    """A JSON Schema validator for component ``name`` of the served OpenAPI document ($refs resolved in it)."""
    doc = api(Role.CHECKER, "GET", "/api/v1/openapi.json").get_json()
    return Draft202012Validator({**doc["components"]["schemas"][name], "components": doc["components"]})


@pytest.fixture(scope="module")
def cold(api):
    return _ok(api, {**COLD, "mass_flow": "12 kg/s"})


def _preheat(body):
    return body["screening"]["answers"]["preheat"]["governing"]


def _pressure_limit(body):
    return body["screening"]["answers"]["outlet_pressure_limit"]["governing"]


# -- outcome and answers -------------------------------------------------------------------------------------
def test_cold_letdown_fails_with_preheat_and_outlet_pressure_answers(cold):
    scr = cold["screening"]
    assert cold["outcome"] == "fail" and scr["outcome"] == "fail"
    assert cold["outcome_sentence"] == scr["outcome_sentence"] and cold["converged"] is True
    assert scr["limits"]["governing_k"] == pytest.approx(LIMIT_K)
    # the target is the limit plus the total margin: the 5 K entered plus the PR-SRK spread (issue 12)
    assert scr["limits"]["margin_k"] == pytest.approx(5.0)
    assert scr["limits"]["total_margin_k"] == pytest.approx(5.0 + scr["limits"]["model_spread_k"])
    assert scr["limits"]["target_k"] == pytest.approx(LIMIT_K + scr["limits"]["total_margin_k"])
    assert scr["t_out_min_k"] < LIMIT_K and scr["coldest_condition"] == "normal"
    assert scr["models"] == ["PR", "SRK"]
    assert scr["findings"][0]["topic"] == "cold metal" and scr["findings"][0]["severity"] == "hazard"
    # the key numbers in the request's units
    shown = scr["display"]
    assert set(shown) == set(api_schemas.SCREENING_DISPLAY)
    assert shown["governing_limit"] == {"value": pytest.approx(-29.0), "unit": "degC"}
    assert shown["target"] == {"value": pytest.approx(scr["limits"]["target_k"] - 273.15), "unit": "degC"}
    assert shown["margin"] == {"value": pytest.approx(5.0), "unit": "K"}
    assert shown["mdmt"] == {"value": None, "unit": "degC"}
    assert shown["t_out_min"] == {"value": pytest.approx(scr["t_out_min_k"] - 273.15), "unit": "degC"}
    assert shown["preheat_t_in_required"] == {"value": pytest.approx(_preheat(cold)["t_in_required_k"] - 273.15),
                                              "unit": "degC"}
    assert shown["preheat_temperature_rise"] == {"value": pytest.approx(_preheat(cold)["temperature_rise_k"]),
                                                 "unit": "K"}
    assert shown["preheat_duty"] == {"value": pytest.approx(_preheat(cold)["duty_w"] / 1e3), "unit": "kW"}
    assert shown["outlet_pressure_limit"] == {"value": pytest.approx(_pressure_limit(cold)["p_out_min_pa"] / 1e5),
                                              "unit": "bara"}
    assert shown["sweep_worst"] is None and shown["relief_t_downstream"]["value"] is None
    assert cold["display"]["t_out"]["value"] == pytest.approx(shown["t_out_min"]["value"])   # PR governs here


def _target(body) -> float:
    """The screening's target [K]: the limit plus the total margin (entered + model spread)."""
    return body["screening"]["limits"]["target_k"]


def test_preheat_answer_checks_out(cold):
    """Letting down again from the reported preheat temperature lands at limit + margin."""
    TARGET_K = _target(cold)     # noqa: N806 - the target of this screening
    gov = _preheat(cold)
    t_req = gov["t_in_required_k"]
    assert gov["needed"] is True and gov["condition"] == "normal"
    assert gov["temperature_rise_k"] == pytest.approx(t_req - 283.15)
    again = letdown(Fluid(LEAN_GAS, eos=gov["model"]), p_in=100e5, t_in=t_req, p_out=10e5)
    assert again.converged
    assert again.t_out == pytest.approx(TARGET_K, abs=0.05)
    # the other model, from the same inlet temperature, is no colder (the colder model governs)
    for eos in cold["screening"]["models"]:
        other = letdown(Fluid(LEAN_GAS, eos=eos), p_in=100e5, t_in=t_req, p_out=10e5)
        assert other.t_out >= TARGET_K - 0.05
    # heater duty at 12 kg/s: mass flow / molar mass x enthalpy rise
    duty = 12.0 / gov["molar_mass_kg_per_mol"] * (gov["h_required_j_per_mol"] - gov["h_in_j_per_mol"])
    assert gov["duty_w"] == pytest.approx(duty, rel=1e-9)
    assert 0.3e6 < duty < 1.5e6      # about 0.7 MW for 19 K on 12 kg/s of gas (cp about 2.6 kJ/kg K)


def test_outlet_pressure_answer_checks_out(cold):
    TARGET_K = _target(cold)     # noqa: N806 - the target of this screening
    p_lim = _pressure_limit(cold)["p_out_min_pa"]
    assert 10e5 < p_lim < 100e5
    t_at = min(letdown(Fluid(LEAN_GAS, eos=eos), p_in=100e5, t_in=283.15, p_out=p_lim).t_out
               for eos in cold["screening"]["models"])
    assert t_at == pytest.approx(TARGET_K, abs=0.05)
    assert t_at >= TARGET_K - 1e-3      # on the safe side of the crossing
    lower = letdown(Fluid(LEAN_GAS, eos="PR"), p_in=100e5, t_in=283.15, p_out=p_lim - 1e5)
    assert lower.t_out < TARGET_K       # 1 bar lower is too cold


def test_warm_letdown_passes_without_answers(api):
    body = _ok(api, WARM)
    assert body["outcome"] == "pass"
    assert body["screening"]["t_out_min_k"] >= TARGET_K
    assert not {"preheat", "outlet_pressure_limit"} & set(body["screening"]["answers"])   # no remedies on a pass
    shown = body["screening"]["display"]
    assert shown["preheat_t_in_required"]["value"] is None and shown["outlet_pressure_limit"]["value"] is None


def test_margin_eroded_between_limit_and_limit_plus_margin(api, cold):
    # the same cold letdown against a limit 3 K below its coldest outlet, with a 5 K margin
    limit_c = cold["screening"]["t_out_min_k"] - 273.15 - 3.0
    body = _ok(api, {**COLD, "limit": f"{limit_c:.6f} degC"})
    assert body["outcome"] == "margin eroded"
    cold_metal = body["screening"]["findings"][0]
    assert cold_metal["numbers"]["margin_to_limit_k"] == pytest.approx(3.0, abs=1e-5)
    assert _preheat(body)["temperature_rise_k"] > 0


def test_without_a_limit_the_outcome_is_not_screened(api):
    data = {k: v for k, v in COLD.items() if k not in ("limit", "margin")}
    body = _ok(api, data)
    assert body["outcome"] == "not screened" and body["converged"] is True
    assert body["screening"]["t_out_min_k"] is not None and body["screening"]["limits"]["governing_k"] is None
    assert body["screening"]["display"]["governing_limit"] == {"value": None, "unit": "degC"}
    assert not {"preheat", "outlet_pressure_limit"} & set(body["screening"]["answers"])
    assert any("no cold limit" in n for n in body["notes"])
    assert {f["topic"] for f in body["screening"]["findings"]} >= {"cold metal", "liquid dropout"}


def test_start_up_is_screened_unless_switched_off(api):
    """Without credible_off the API screens the generated start-up into a depressured outlet too (issue 12), as
    the register, the CLI and a letdown list do; switched off, it is listed with the reason."""
    data = {k: v for k, v in WARM.items() if k != "credible_off"}
    body = _ok(api, data)
    names = [c["condition"] for c in body["screening"]["conditions"]]
    assert names == ["normal", "start-up into depressured outlet"]
    start_up = body["screening"]["conditions"][1]
    assert start_up["p_out_pa"] == pytest.approx(P_ATM)
    assert body["screening"]["coldest_condition"] == "start-up into depressured outlet"
    normal_k, start_up_k = (c["t_screen_k"] for c in body["screening"]["conditions"])
    assert start_up_k < normal_k - 30.0       # 100 bar to the atmosphere cools far more than 100 to 90 bar
    off = _ok(api, WARM)
    assert [c["condition"] for c in off["screening"]["conditions"]] == ["normal"] and off["outcome"] == "pass"
    listed = {e["case"]: e for e in off["screening"]["answers"]["generated_cases"]}
    assert listed["start_up"]["status"] == "off" and listed["start_up"]["reason"] == START_UP_OFF["start_up"]


def test_mdmt_and_limit_the_warmer_governs(api):
    body = _ok(api, {**WARM, "limit": "-46 degC", "mdmt": {"value": -20, "unit": "degF"}})
    limits = body["screening"]["limits"]
    assert limits["governing_k"] == pytest.approx((-20 - 32) / 1.8 + 273.15)
    assert limits["mdmt_source"] == "entered" and "MDMT" in limits["basis"]
    assert body["screening"]["display"]["mdmt"] == {"value": pytest.approx(-28.888889), "unit": "degC"}


@pytest.mark.parametrize("failing", [("PR", "SRK"), ("SRK",)], ids=["every-model", "one-model"])
def test_a_letdown_that_does_not_converge_is_not_screened_never_pass(api, monkeypatch, failing):
    real = screen_module.letdown

    def no_convergence(fluid, p_in, t_in, p_out):
        r = real(fluid, p_in, t_in, p_out)
        if fluid.eos.value not in failing:
            return r
        return dataclasses.replace(r, t_out=math.nan, dt=math.nan, vapor_fraction=math.nan, phase="unknown",
                                   converged=False, message="outlet flash failed: forced for the test")

    monkeypatch.setattr(screen_module, "letdown", no_convergence)
    resp = _post(api, WARM)          # would pass if it converged
    assert resp.status_code == 200, resp.get_json()
    body = resp.get_json()
    assert body["outcome"] == "not screened" and body["screening"]["outcome"] == "not screened"
    assert body["screening"]["t_out_min_k"] is None
    assert body["screening"]["display"]["t_out_min"]["value"] is None
    assert body["screening"]["conditions"][0]["converged"] is False
    assert body["converged"] is ("PR" not in failing)
    if "PR" in failing:
        assert body["si"]["t_out_k"] is None and body["display"]["t_out"]["value"] is None
    assert any(f["topic"] == "convergence" for f in body["screening"]["findings"])


# -- ranges, hydrates, units -------------------------------------------------------------------------------------
def test_ranges_add_conditions_and_a_sweep(api):
    body = _ok(api, {**WARM, "p_in_max": "110 bara", "t_in_min": {"value": 30, "unit": "degC"},
                     "p_out_min": "85 bara"})
    names = [c["condition"] for c in body["screening"]["conditions"]]
    assert names == ["normal", "min inlet temperature", "max inlet pressure", "min temperature + max pressure",
                     "coldest in the operating ranges"]
    sweep = body["screening"]["answers"]["sweep"]
    assert sweep["complete"] is True
    assert sweep["ranges"]["p_out_pa"] == [pytest.approx(85e5), pytest.approx(90e5)]
    worst = body["screening"]["conditions"][-1]
    assert worst["t_screen_k"] == pytest.approx(body["screening"]["t_out_min_k"])
    shown = body["screening"]["display"]["sweep_worst"]
    assert shown["t_out"]["value"] == pytest.approx(sweep["worst"]["t_out_k"] - 273.15)
    assert shown["p_out"] == {"value": pytest.approx(sweep["worst"]["p_out_pa"] / 1e5), "unit": "bara"}
    # the coldest corner: most pressure drop from the coldest inlet
    assert worst["t_in_k"] == pytest.approx(303.15, abs=0.01)
    assert body["si"]["p_in_max_pa"] == pytest.approx(110e5) and body["si"]["t_in_min_k"] == pytest.approx(303.15)
    assert body["display"]["p_out_min"] == {"value": pytest.approx(85.0), "unit": "bara"}
    assert body["display"]["t_in_min"] == {"value": pytest.approx(30.0), "unit": "degC"}


def test_water_saturated_gas_is_screened_for_hydrates_with_the_inhibitor_chosen(api):
    data = {k: v for k, v in COLD.items() if k not in ("limit", "margin")}
    dry = _ok(api, data)
    wet = _ok(api, {**data, "water_saturated": True, "inhibitor": "MEG"})

    def hydrates(body):
        return next(f for f in body["screening"]["findings"] if f["topic"] == "hydrates")

    assert "Not screened for hydrates" in hydrates(dry)["message"]
    found = hydrates(wet)
    assert found["severity"] == "hazard" and found["numbers"]["inhibitor"] == "MEG"
    assert found["numbers"]["t_hydrate_k"] > found["numbers"]["t_out_k"]
    # the same numbers as the result page's hydrate block: subcooling, the dose with Hammerschmidt beside it, the
    # injection and its parts, the water basis (saturated at inlet: the default)
    n = found["numbers"]
    assert n["subcooling_k"] == pytest.approx(n["t_hydrate_k"] - n["t_out_k"])
    for key in ("inhibitor_weight_percent", "model_weight_percent", "hammerschmidt_weight_percent",
                "injection_kg_per_s",
                "injection_to_water_kg_per_s", "injection_lost_to_gas_kg_per_s", "dose_upper_bound"):
        assert key in n
    assert n["water_basis"] == "saturated at inlet"


def test_water_content_makes_a_dry_gas_not_a_hydrate_risk(api):
    # issue 13: 100 bar, 20 degC let down to 30 bar (outlet about -10 degC): saturated at the inlet (the default)
    # the gas drops water there and lies inside the hydrate region; with 20 mg/Sm3 (a dried gas, about
    # 1.2 lb/MMscf) it holds no free water (Bukacek) and is too dry for hydrate to form from the gas
    base = {**{k: v for k, v in COLD.items() if k not in ("limit", "margin")}, "t_in": "20 degC", "p_out": "30 bara"}
    wet = _ok(api, {**base, "water_saturated": True})
    dry = _ok(api, {**base, "water_saturated": True, "water_content": "20 mg/Sm3"})
    lb = _ok(api, {**base, "water_saturated": True, "water_content": {"value": 1.2487, "unit": "lb/MMscf"}})

    def hydrates(body):
        return next(f for f in body["screening"]["findings"] if f["topic"] == "hydrates")

    assert hydrates(wet)["severity"] == "hazard"
    assert hydrates(dry)["message"].startswith("Not a hydrate risk: the gas is dry enough")
    assert hydrates(lb)["message"] == hydrates(dry)["message"]     # 1.2487 lb/MMscf = 20.0 mg/Sm3


def test_single_model_when_compare_models_is_false(api):
    body = _ok(api, {**WARM, "compare_models": False})
    assert body["screening"]["models"] == ["PR"]
    assert list(body["screening"]["conditions"][0]["models"]) == ["PR"]


def test_display_in_degf_and_psig(api, cold):
    body = _ok(api, {**COLD, "units": {"temperature": "degF", "pressure": "psig"}})
    assert body["outcome"] == "fail"
    shown = body["screening"]["display"]
    assert shown["preheat_temperature_rise"] == {
        "value": pytest.approx(_preheat(cold)["temperature_rise_k"] * 1.8, rel=1e-6), "unit": "degF"}
    assert shown["margin"] == {"value": pytest.approx(9.0), "unit": "degF"}
    assert shown["governing_limit"]["value"] == pytest.approx(-29 * 1.8 + 32)
    assert shown["outlet_pressure_limit"] == {
        "value": pytest.approx((_pressure_limit(cold)["p_out_min_pa"] - P_ATM) / PSI, rel=1e-6), "unit": "psig"}


def test_joule_thomson_rule_of_thumb_for_a_lean_gas(api):
    """Common practice: a lean natural gas cools by roughly 0.5 K per bar (about 7 degF per 100 psi).

    Loose check over 70 -> 20 bar at 10 degC: 0.3 to 0.8 K/bar, the same in degF per 100 psi.
    """
    body = _ok(api, {"fluid": {"composition": LEAN_GAS}, "p_in": "70 bara", "t_in": "10 degC", "p_out": "20 bara"})
    drop_k = -body["si"]["dt_k"]
    per_bar = drop_k / 50.0
    assert 0.3 <= per_bar <= 0.8, per_bar
    per_100_psi_degf = drop_k * 1.8 / (50e5 / PSI / 100.0)
    assert 0.3 * 1.8 * PSI / 1e3 <= per_100_psi_degf <= 0.8 * 1.8 * PSI / 1e3   # about 3.7 to 9.9 degF/100 psi


# -- bad input -----------------------------------------------------------------------------------------------------
BAD_SCREENING = [
    ("limit", {"limit": "cold"}), ("limit", {"limit": -29}), ("limit", {"limit": "-29 furlongs"}),
    ("limit", {"limit": "1000 degC"}), ("mdmt", {"mdmt": "-300 degC"}), ("mdmt", {"mdmt": {"value": -46}}),
    ("margin", {"margin": "-1 K"}), ("margin", {"margin": "500 K"}), ("margin", {"margin": "5 bar"}),
    ("p_in_max", {"p_in_max": "50 bara"}), ("p_in_max", {"p_in_max": "lots"}),
    ("t_in_min", {"t_in_min": "50 degC"}), ("p_out_min", {"p_out_min": "95 bara"}),
    ("p_out_min", {"p_out_min": "-5 bara"}),
    ("water_saturated", {"water_saturated": "yes"}), ("water_saturated", {"water_saturated": 1}),
    ("inhibitor", {"inhibitor": "glycerol"}), ("inhibitor", {"inhibitor": 3}),
    ("mass_flow", {"mass_flow": -1}), ("mass_flow", {"mass_flow": 0}), ("mass_flow", {"mass_flow": "3 t/h"}),
    ("mass_flow", {"mass_flow": True}), ("mass_flow", {"mass_flow": {"value": 1, "unit": "lb/s"}}),
    ("mass_flow", {"mass_flow": 1e9}), ("compare_models", {"compare_models": "no"}),
    ("water_content", {"water_content": "110 g/m3"}), ("water_content", {"water_content": "-5 mg/Sm3"}),
    ("water_dew_point", {"water_dew_point": "-10 bar"}),
    ("water_dew_point", {"water_content": "110 mg/Sm3", "water_dew_point": "-10 degC"}),
]


@pytest.mark.parametrize("field, change", BAD_SCREENING, ids=[f"{f}-{i}" for i, (f, _) in enumerate(BAD_SCREENING)])
def test_bad_screening_input_is_named(api, field, change):
    resp = _post(api, {**WARM, **change}, role=Role.ENGINEER)
    assert resp.status_code == 422, resp.get_json()
    error = resp.get_json()["error"]
    assert error["field"] == field and error["message"]


@pytest.mark.parametrize("field, change, words", [
    ("inhibitor", {"inhibitor": "glycerol"}, "allowed: methanol, MEG, ethanol, DEG, TEG"),
    ("p_in_max", {"p_in_max": "50 bara"}, "allowed: >= p_in"),
    ("margin", {"margin": "-1 K"}, "between 0 and 100 K"),
    ("mass_flow", {"mass_flow": "3 t/h"}, "kg/s is the only unit"),
    ("water_saturated", {"water_saturated": "yes"}, "true or false"),
])
def test_bad_screening_input_says_what_is_allowed(api, field, change, words):
    error = _post(api, {**WARM, **change}).get_json()["error"]
    assert error["field"] == field and words in error["message"]


@pytest.mark.parametrize("value, expected", [(12, 12.0), (12.5, 12.5), ("12 kg/s", 12.0), ("12", 12.0),
                                             ({"value": 3, "unit": "kg/s"}, 3.0), (None, None)])
def test_mass_flow_forms(api, value, expected):
    body = _ok(api, {**COLD, "mass_flow": value})
    gov = _preheat(body)
    assert gov["mass_flow_kg_per_s"] == expected
    assert (gov["duty_w"] is None) is (expected is None)
    assert (body["screening"]["display"]["preheat_duty"]["value"] is None) is (expected is None)


def test_inhibitor_is_matched_without_regard_to_case(api):
    body = _ok(api, {**WARM, "water_saturated": True, "inhibitor": "meg"})
    hyd = next(f for f in body["screening"]["findings"] if f["topic"] == "hydrates")
    assert hyd["numbers"]["inhibitor"] == "MEG"


# -- stored case results ----------------------------------------------------------------------------------------------
def test_computed_case_result_carries_outcome_and_screening(api, world):
    # the test material's MDMT is -29 degC; 70 barg at 20 degC to 10 barg comes out near -10 degC: pass
    case = api(Role.ENGINEER, "POST", "/api/v1/cases", json=case_body(world, inlet_temperature_min="5 degC")
               ).get_json()
    resp = api(Role.APPROVER, "POST", f"/api/v1/cases/{case['id']}/compute")
    assert resp.status_code == 201, resp.get_json()
    result = resp.get_json()
    assert result["outcome"] in ("pass", "margin eroded", "fail", "not screened")
    assert result["screening"]["outcome"] == result["outcome"]
    assert result["outcome_sentence"]
    assert result["screening"]["limits"]["governing_k"] == pytest.approx(244.15)
    assert result["t_out_min_k"] == pytest.approx(result["screening"]["t_out_min_k"])
    assert [c["condition"] for c in result["screening"]["conditions"]][:2] == ["normal", "min inlet temperature"]
    # the key numbers in the case's units, under the same names as a letdown answer's
    assert set(result["screening"]["display"]) == set(api_schemas.SCREENING_DISPLAY)
    assert result["screening"]["display"]["governing_limit"] == {"value": pytest.approx(-29.0), "unit": "degC"}
    _schema_validator(api, "Result").validate(result)

    listed = api(Role.CHECKER, "GET", f"/api/v1/cases/{case['id']}/results").get_json()["results"]
    assert listed[0]["screening"] == result["screening"] and listed[0]["outcome"] == result["outcome"]
    got = api(Role.CHECKER, "GET", f"/api/v1/cases/{case['id']}").get_json()
    assert got["latest_result"]["outcome"] == result["outcome"]
    assert got["latest_result"]["outcome_sentence"] == result["outcome_sentence"]
    _schema_validator(api, "Case").validate(got)


def test_cold_case_result_fails_with_answers(api, world):
    case = api(Role.ENGINEER, "POST", "/api/v1/cases", json=case_body(
        world, inlet_pressure="100 bara", inlet_temperature="10 degC", outlet_pressure="10 bara",
        cold_limit="-29 degC")).get_json()
    result = api(Role.APPROVER, "POST", f"/api/v1/cases/{case['id']}/compute").get_json()
    assert result["outcome"] == "fail"
    preheat = result["screening"]["answers"]["preheat"]["governing"]
    # the governing condition is the generated start-up (outlet at the atmosphere), the coldest
    assert preheat["condition"] == "start-up into depressured outlet"
    p_out = {c["condition"]: c["p_out_pa"] for c in result["screening"]["conditions"]}[preheat["condition"]]
    assert p_out == pytest.approx(P_ATM)
    again = letdown(Fluid(LEAN_GAS, eos=preheat["model"]), p_in=100e5, t_in=preheat["t_in_required_k"], p_out=p_out)
    assert again.t_out == pytest.approx(_target(result), abs=0.05)


def test_case_body_takes_the_hydrate_fields(api, world):
    resp = api(Role.ENGINEER, "POST", "/api/v1/cases", json=case_body(world, water_saturated=True,
                                                                       hydrate_inhibitor="MEG"))
    assert resp.status_code == 201, resp.get_json()
    case = resp.get_json()
    assert case["water_saturated"] is True and case["hydrate_inhibitor"] == "MEG"
    bad = api(Role.ENGINEER, "PATCH", f"/api/v1/cases/{case['id']}", json={"hydrate_inhibitor": "glycerol",
                                                                               "version": case["version"]})
    assert bad.status_code == 422 and bad.get_json()["error"]["field"] == "hydrate_inhibitor"


def test_relief_valve_case_through_the_api(api, world):
    body = case_body(world, kind="relief_valve", inlet_pressure="80 barg", inlet_temperature="20 degC",
                     outlet_pressure="2 barg", set_pressure="80 barg", overpressure={"value": 10, "unit": "%"},
                     superimposed_back_pressure="1 barg", built_up_back_pressure="1 bar", header_limit="-46 degC",
                     outlet_pressure_min="1 barg")
    resp = api(Role.ENGINEER, "POST", "/api/v1/cases", json=body)
    assert resp.status_code == 201, resp.get_json()
    case = resp.get_json()
    assert case["si"]["overpressure_fraction"] == pytest.approx(0.10)
    assert case["si"]["built_up_back_pressure_pa"] == pytest.approx(1e5)
    assert case["si"]["outlet_pressure_min_pa"] == pytest.approx(1e5 + P_ATM)
    assert case["display"]["overpressure"] == {"value": pytest.approx(10.0), "unit": "%"}
    assert case["display"]["header_limit"] == {"value": pytest.approx(-46.0), "unit": "degC"}
    result = api(Role.APPROVER, "POST", f"/api/v1/cases/{case['id']}/compute").get_json()
    relief = result["screening"]["answers"]["relief_valve"]
    assert relief["governing_model"] in ("PR", "SRK")
    assert result["screening"]["display"]["relief_t_downstream"]["value"] == pytest.approx(
        relief["t_downstream_k"] - 273.15)
    assert result["screening"]["answers"]["sweep"]["ranges"]["p_out_pa"][0] == pytest.approx(1e5 + P_ATM)
    _schema_validator(api, "Result").validate(result)


# -- OpenAPI -----------------------------------------------------------------------------------------------------------
def test_openapi_documents_the_screening(api, cold):
    doc = api(Role.CHECKER, "GET", "/api/v1/openapi.json").get_json()
    schemas = doc["components"]["schemas"]
    assert set(schemas["LetdownRequest"]["properties"]) == set(_LETDOWN_KEYS)
    assert set(schemas["CaseInput"]["properties"]) == set(caseinput.INPUT_FIELDS)
    assert set(schemas["CasePatch"]["properties"]) == set(caseinput.INPUT_FIELDS) | {"version"}
    for name in ("Screening", "Finding", "ScreenedCondition", "ColdLimits", "ScreeningAnswers"):
        assert name in schemas
    assert schemas["Result"]["properties"]["screening"]
    assert "fail" in schemas["Screening"]["properties"]["outcome"]["enum"]
    _schema_validator(api, "LetdownResponse").validate(cold)
    Draft202012Validator({**schemas["LetdownRequest"], "components": doc["components"]}).validate(
        {**COLD, "mass_flow": "12 kg/s", "water_saturated": True, "inhibitor": "MEG", "p_in_max": "110 bara"})


# -- the downstream material by its exemption curve (issue 17) ----------------------------------------------------
def test_letdown_material_by_curve_is_screened_at_the_outlet_pressure(api):
    from jtcheck.screening.mdmt import material_mdmt

    # no typed limit: the MDMT comes from curve B at 12.7 mm with the ratio 1 (no stress inputs)
    body = _ok(api, {**{k: v for k, v in COLD.items() if k != "limit"}, "curve": "B", "thickness": "12.7 mm",
                     "compare_models": False})
    limits = body["screening"]["limits"]
    assert limits["mdmt_k"] == pytest.approx(material_mdmt("B", 0.0127).mdmt_k)
    assert limits["mdmt_working"]["working"]["curve"] == "B"
    assert body["outcome"] in ("fail", "margin eroded", "pass")
    bad = _post(api, {**COLD, "curve": "B", "thickness": "12.7 furlongs"})
    assert bad.status_code == 422 and "thickness" in str(bad.get_json())
    bad = _post(api, {**COLD, "curve": "B", "thickness": "200 mm"})
    assert bad.status_code == 422 and "thickness" in str(bad.get_json())


def test_api_materials_carry_the_curve_data(api):
    created = api(Role.ADMIN, "POST", "/api/v1/materials", json={
        "name": "API curve steel", "exemption_curve": "C", "thickness_m": 0.02, "curve_code": "B31.3"})
    assert created.status_code == 201, created.get_json()
    m = created.get_json()
    assert m["exemption_curve"] == "C" and m["min_metal_temperature_k"] is None and "curve C" in m["limit_way"]
    assert api(Role.ENGINEER, "POST", "/api/v1/materials", json={"name": "x"}).status_code == 403
    bad = api(Role.ADMIN, "PATCH", f"/api/v1/materials/{m['id']}", json={"thickness_m": 0.5})
    assert bad.status_code == 422 and "thickness_m" in str(bad.get_json())
    listed = api(Role.CHECKER, "GET", "/api/v1/materials").get_json()["materials"]
    assert any(x["name"] == "API curve steel" and x["thickness_m"] == 0.02 for x in listed)
    table = api(Role.CHECKER, "GET", "/api/v1/materials/curves").get_json()
    assert table["caution"] == "verify against the code edition in force" and len(table["rows"]) > 200
