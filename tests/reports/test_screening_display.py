"""The screening display (jtcheck.reports.screening_display): one builder for the result page and the record.

The stored results below are written by hand in the shape jtcheck.records stores them (SI, invented numbers);
the pages and records built from really computed cases are checked in tests/web and tests/reports.
"""
from __future__ import annotations

import pytest

from jtcheck.records.models import CaseResult
from jtcheck.reports.screening_display import (
    LEGACY_NOTE,
    DisplayUnits,
    StoredResult,
    key_numbers,
    screening_display,
    sweep_chart_data,
)
from jtcheck.screening.findings import Outcome

T0 = 273.15
BAR = 1e5
P_ATM = 101325.0
LIMITS = {"mdmt_k": T0 - 29.0, "mdmt_source": "material: carbon steel", "user_limit_k": None, "margin_k": 5.0,
          "governing_k": T0 - 29.0, "target_k": T0 - 24.0, "basis": "MDMT (material: carbon steel)"}
CONDITIONS = [
    {"condition": "normal", "converged": True, "p_in": 72 * BAR + P_ATM, "t_in": T0 + 9.0, "p_out": 19 * BAR + P_ATM,
     "t_out": T0 - 25.0, "dt": -34.0, "t_screen_k": T0 - 26.0, "governing_model": "SRK",
     "t_out_by_model": {"PR": T0 - 25.0, "SRK": T0 - 26.0}, "phase": "vapour", "inlet_phase": "vapour",
     "vapor_fraction": 1.0, "inlet_vapor_fraction": 1.0},
    {"condition": "min inlet temperature", "converged": True, "p_in": 72 * BAR + P_ATM, "t_in": T0 + 2.0,
     "p_out": 19 * BAR + P_ATM, "t_out": T0 - 30.0, "dt": -32.0, "t_screen_k": T0 - 31.0, "governing_model": "SRK",
     "t_out_by_model": {"PR": T0 - 30.0, "SRK": T0 - 31.0}},
    {"condition": "max inlet pressure", "converged": False, "message": "PH flash did not converge", "t_out": None,
     "p_in": 85 * BAR + P_ATM, "t_in": T0 + 9.0, "p_out": 19 * BAR + P_ATM},
]
SCREENING = {
    "outcome": "fail", "outcome_sentence": "An outlet is colder than the cold limit.", "t_out_min_k": T0 - 31.0,
    "coldest_condition": "min inlet temperature", "models": ["PR", "SRK"], "limits": LIMITS,
    "findings": [{"severity": "information", "topic": "liquid", "message": "no liquid"},
                 {"severity": "hazard", "topic": "cold metal", "message": "too cold", "condition": "normal"}],
    "answers": {
        "preheat": {"target_k": T0 - 24.0, "all_converged": True,
                    "governing": {"condition": "min inlet temperature", "model": "SRK", "converged": True,
                                  "needed": True, "t_in_k": T0 + 2.0, "t_in_required_k": T0 + 9.5,
                                  "temperature_rise_k": 7.5, "duty_w": 123_400.0},
                    "cases": []},
        "outlet_pressure_limit": {"target_k": T0 - 24.0, "all_converged": True, "governing": None, "cases": [
            {"condition": "normal", "model": "PR", "converged": True, "inlet_too_cold": True},
            {"condition": "cold start", "model": "PR", "converged": True, "inlet_too_cold": True},
            {"condition": "normal", "model": "SRK", "converged": True, "inlet_too_cold": True}]},
    },
}
SHOWN = {"inlet_pressure": "psig", "outlet_pressure": "psia", "inlet_temperature": "degF"}


def stored(**changes) -> StoredResult:
    data = {"conditions": CONDITIONS, "screening": SCREENING, "outcome": "fail", "eos": "PR",
            "inputs": {"case_values": {"mdmt_k": T0 - 29.0, "margin_k": 5.0, "mdmt_source": "entered"}}}
    data.update(changes)
    return StoredResult.from_snapshot(data)


def test_the_page_and_the_record_build_the_same_display_from_the_same_stored_result():
    model = CaseResult(results=CONDITIONS, screening=SCREENING, outcome="fail", eos="PR", inputs={})
    units = DisplayUnits.entered(SHOWN, P_ATM)
    snapshot_result = {"conditions": CONDITIONS, "screening": SCREENING, "outcome": "fail", "eos": "PR", "inputs": {}}
    assert (screening_display(StoredResult.from_model(model), units)
            == screening_display(StoredResult.from_snapshot(snapshot_result), units))


def test_numbers_are_shown_in_the_units_the_case_was_entered_in():
    view = screening_display(stored(), DisplayUnits.entered(SHOWN, P_ATM))
    assert view.label == "FAIL" and view.slug == "fail" and not view.legacy
    assert view.t_out_min == {"value": pytest.approx(-31.0 * 1.8 + 32.0), "unit": "degF"}
    gov = view.preheat["governing"]
    assert gov["rise"] == {"value": pytest.approx(7.5 * 1.8), "unit": "degF"} and gov["duty_kw"] == pytest.approx(123.4)
    assert view.models == ("PR", "SRK") and view.coldest_condition == "min inlet temperature"


def test_findings_come_hazards_first():
    view = screening_display(stored(), DisplayUnits())
    assert [f["severity"] for f in view.findings] == ["hazard", "information"]


def test_a_condition_that_did_not_converge_is_not_screened_and_has_no_margin():
    c = screening_display(stored(), DisplayUnits()).conditions[2]
    assert not c.converged and c.band == Outcome.NOT_SCREENED.value and c.margin_to_cold_limit_k is None
    normal, cold = screening_display(stored(), DisplayUnits()).conditions[:2]
    assert normal.band == "margin eroded" and cold.band == "fail"
    assert normal.drop_k == pytest.approx(34.0) and normal.model_spread_k == pytest.approx(1.0)


def test_conditions_whose_inlet_is_too_cold_are_listed_once_each_in_order_of_their_names():
    ol = screening_display(stored(), DisplayUnits()).outlet_limit
    assert ol["inlet_too_cold_conditions"] == ["cold start", "normal"] and len(ol["inlet_too_cold"]) == 3


def test_a_result_stored_before_the_screening_is_not_screened_and_judged_by_the_same_limits_rule():
    old = [{k: v for k, v in c.items() if k not in ("t_screen_k", "governing_model", "t_out_by_model")}
           for c in CONDITIONS]
    view = screening_display(stored(conditions=old, screening=None, outcome=None), DisplayUnits())
    assert view.legacy and view.outcome == "not screened" and view.sentence == LEGACY_NOTE
    assert view.findings == () and view.preheat is None and view.models == ("PR",)
    assert view.limits.governing_k == pytest.approx(T0 - 29.0) and not view.limits.from_screening
    assert view.limits.basis == "MDMT (entered)"
    # the coldest converged condition, on the case model's outlet
    assert view.coldest_condition == "min inlet temperature"
    assert view.t_out_min == {"value": pytest.approx(-30.0), "unit": "degC"}


def test_an_outcome_the_stored_result_does_not_know_is_not_screened():
    assert screening_display(stored(outcome="splendid", screening={**SCREENING, "outcome": "splendid"}),
                             DisplayUnits()).outcome == "not screened"


def test_a_unit_this_version_does_not_know_shows_the_si_value_with_its_si_unit():
    units = DisplayUnits.entered({"inlet_temperature": "degZ", "inlet_pressure": "furlongs"}, P_ATM)
    assert units.T(250.0) == {"value": 250.0, "unit": "K"}
    assert units.P(2e5) == {"value": 2e5, "unit": "Pa"}
    assert units.DP(2e5, "cubits") == {"value": 2e5, "unit": "Pa"}


def test_pressure_differences_have_no_atmospheric_offset():
    units = DisplayUnits.entered({"built_up_back_pressure": "psig"}, P_ATM)
    assert units.DP(6894.757293168361) == {"value": pytest.approx(1.0), "unit": "psig"}


def test_key_numbers_are_those_the_display_shows():
    units = DisplayUnits.entered(SHOWN, P_ATM)
    view = screening_display(stored(), units)
    numbers = key_numbers(SCREENING, units)
    assert numbers["t_out_min"] == view.t_out_min
    assert numbers["preheat_t_in_required"] == view.preheat["governing"]["t_in_required"]
    assert numbers["outlet_pressure_limit"] == {"value": None, "unit": "psia"}
    assert numbers["sweep_worst"] is None and numbers["relief_t_downstream"]["value"] is None


def test_no_sweep_chart_without_a_sweep_table():
    assert sweep_chart_data(screening_display(stored(), DisplayUnits()), DisplayUnits()) is None


def test_one_spelling_of_the_temperature_units_and_differences_as_differences():
    """Issue 18: "°C" on one page and "degC" on the others; a difference in degF labelled as a difference."""
    from jtcheck.reports.batch_summary import _difference
    from jtcheck.reports.numbers import temperature_text

    assert temperature_text(250.0, "degC") == "-23.1 degC"
    assert temperature_text(250.0, "degF") == "-9.7 degF"
    assert _difference(5.0, "degF") == "+9.0 delta degF"
    assert _difference(5.0, "degC") == "+5.0 K"


def test_a_difference_in_degf_is_labelled_as_a_difference_on_pages_and_records():
    from jtcheck.reports.numbers import fmt_quantity, fmt_signed
    from jtcheck.reports.screening_display import DisplayUnits

    assert fmt_quantity({"value": 9.0, "unit": "degF"}, "difference") == "9.00 delta degF"
    assert fmt_signed({"value": -9.0, "unit": "degF"}) == "-9.00 delta degF"
    assert fmt_quantity({"value": 5.0, "unit": "K"}, "difference") == "5.00 K"
    assert DisplayUnits.entered({"inlet_temperature": "degF"}, None).difference_label == "delta degF"


def test_computed_pressures_get_four_significant_digits_and_inputs_six():
    """Issue 18: "39.8143 barg" for a computed outlet-pressure limit; an entered 1.01325 bar is shown as entered."""
    from jtcheck.reports.numbers import fmt_number

    assert fmt_number(39.8143, "computed") == "39.81"
    assert fmt_number(3981430.0, "computed") == "3981430"
    assert fmt_number(1.01325) == "1.01325"
