"""screen_letdown: the case-level screening that the register, the API and the CLI share."""
from __future__ import annotations

import math

import pytest

from jtcheck import Fluid, letdown
from jtcheck.errors import InputError
from jtcheck.screening import screen as screen_module
from jtcheck.screening.cold_metal import ColdLimits
from jtcheck.screening.findings import Outcome, Severity, Topic
from jtcheck.screening.screen import Condition, OperatingRanges, ScreeningOptions, screen_letdown

BAR = 1e5
T0 = 273.15
CS = ColdLimits(mdmt_k=T0 - 29.0, margin_k=5.0, mdmt_source="entered")   # -29 degC: typical CS (common practice)


def topics(s):
    return {f.topic for f in s.findings}


def test_both_models_are_computed_and_the_colder_governs(lean_gas):
    s = screen_letdown(lean_gas, [Condition("normal", 100 * BAR, T0 + 10, 10 * BAR)], ScreeningOptions(CS))
    assert s.models == ("PR", "SRK")
    cs = s.conditions[0]
    t_pr, t_srk = cs.results["PR"].t_out, cs.results["SRK"].t_out
    assert cs.t_screen_k == min(t_pr, t_srk)
    assert cs.governing_model == ("PR" if t_pr <= t_srk else "SRK")
    spread = next(f for f in s.findings if f.topic is Topic.MODEL_SPREAD)
    assert spread.numbers["spread_k"] == pytest.approx(abs(t_pr - t_srk))


def test_single_model_when_asked(lean_gas):
    s = screen_letdown(lean_gas, [Condition("normal", 100 * BAR, T0 + 10, 10 * BAR)],
                       ScreeningOptions(CS, compare_models=False))
    assert s.models == ("PR",) and Topic.MODEL_SPREAD not in topics(s)


def test_cold_letdown_fails_with_icing_and_answers_that_work(lean_gas):
    s = screen_letdown(lean_gas, [Condition("normal", 100 * BAR, T0 + 10, 10 * BAR)],
                       ScreeningOptions(CS, mass_flow_kg_per_s=5.0))
    assert s.outcome is Outcome.FAIL
    assert s.findings[0].severity is Severity.HAZARD      # hazards first
    assert {Topic.COLD_METAL, Topic.ICING} <= topics(s)
    gov = s.answers["preheat"]["governing"]
    assert gov["needed"] and gov["duty_w"] > 0
    # heating to the reported temperature lands the governing model's outlet on the limit + margin (0.05 K)
    fluid = lean_gas if gov["model"] == "PR" else lean_gas.with_eos("SRK")
    again = letdown(fluid, gov["p_in_pa"], gov["t_in_required_k"], gov["p_out_pa"])
    # the target is limit + the total margin (entered + model spread), not CS.target_k (entered only)
    assert s.limits.target_k == pytest.approx(CS.target_k + s.limits.model_spread_k)
    assert again.t_out == pytest.approx(s.limits.target_k, abs=0.05)
    # and every model at every condition is then at or above the target
    for case in s.answers["preheat"]["cases"]:
        f = lean_gas if case["model"] == "PR" else lean_gas.with_eos("SRK")
        assert letdown(f, case["p_in_pa"], gov["t_in_required_k"], case["p_out_pa"]).t_out >= s.limits.target_k - 0.05
    lim = s.answers["outlet_pressure_limit"]["governing"]
    f = lean_gas if lim["model"] == "PR" else lean_gas.with_eos("SRK")
    assert letdown(f, 100 * BAR, T0 + 10, lim["p_out_min_pa"]).t_out == pytest.approx(s.limits.target_k, abs=0.05)


def test_warm_letdown_passes_without_answers(lean_gas):
    s = screen_letdown(lean_gas, [Condition("normal", 20 * BAR, T0 + 40, 15 * BAR)], ScreeningOptions(CS))
    assert s.outcome is Outcome.PASS
    assert s.answers == {}


def test_margin_eroded_between_limit_and_limit_plus_margin(lean_gas):
    r = letdown(lean_gas, 50 * BAR, T0 + 10, 10 * BAR)
    srk = letdown(lean_gas.with_eos("SRK"), 50 * BAR, T0 + 10, 10 * BAR)
    coldest = min(r.t_out, srk.t_out)
    lim = ColdLimits(user_limit_k=coldest - 2.0, margin_k=5.0)
    s = screen_letdown(lean_gas, [Condition("normal", 50 * BAR, T0 + 10, 10 * BAR)], ScreeningOptions(lim))
    assert s.outcome is Outcome.MARGIN_ERODED
    assert "preheat" in s.answers


def test_a_condition_that_does_not_converge_is_never_pass(lean_gas, monkeypatch):
    real = screen_module.letdown

    def flaky(fluid, p_in, t_in, p_out):
        r = real(fluid, p_in, t_in, p_out)
        if fluid.eos.value == "SRK":
            from dataclasses import replace
            return replace(r, converged=False, t_out=math.nan, message="outlet flash failed: test")
        return r

    monkeypatch.setattr(screen_module, "letdown", flaky)
    s = screen_letdown(lean_gas, [Condition("normal", 20 * BAR, T0 + 40, 15 * BAR)], ScreeningOptions(CS))
    assert s.outcome is Outcome.NOT_SCREENED
    assert any(f.topic is Topic.CONVERGENCE and f.severity is Severity.HAZARD for f in s.findings)


def test_no_limit_is_not_screened_but_findings_still_come(lean_gas):
    s = screen_letdown(lean_gas, [Condition("normal", 100 * BAR, T0 + 10, 10 * BAR)], ScreeningOptions(ColdLimits()))
    assert s.outcome is Outcome.NOT_SCREENED
    assert Topic.ICING in topics(s)


def test_rich_gas_reports_liquid_dropout_with_the_outlet_dew_point(rich_gas):
    s = screen_letdown(rich_gas, [Condition("normal", 100 * BAR, T0 + 30, 20 * BAR)], ScreeningOptions(CS))
    f = next(f for f in s.findings if f.topic is Topic.LIQUID_DROPOUT)
    assert 0 < f.numbers["outlet_liquid_fraction"] < 1
    dew = f.numbers["outlet_dew_point_k"]
    assert dew is not None and dew > s.conditions[0].results["PR"].t_out   # two-phase: below its dew point


def test_co2_from_liquid_at_60_bar_to_1_bar_forms_dry_ice():
    """Span and Wagner (1996): sublimation at 1 bar is 194.5 K; the fluid-only EOS answer is about 10 K colder."""
    co2 = Fluid({"carbon dioxide": 1.0})
    s = screen_letdown(co2, [Condition("normal", 60 * BAR, 290.0, 1 * BAR)], ScreeningOptions(CS))
    f = next(f for f in s.findings if f.topic is Topic.CO2_SOLIDS)
    assert f.severity is Severity.HAZARD
    assert 0 < f.numbers["solid_fraction"] < 1
    assert s.t_out_min_k == pytest.approx(194.53, abs=0.1)
    assert f.numbers["t_eos_k"] < s.t_out_min_k - 5.0
    assert s.outcome is Outcome.FAIL


def test_inverse_joule_thomson_is_reported_not_hidden():
    """Nitrogen at 300 K above its inversion pressure warms on throttling (PR: inversion near 440 bar)."""
    n2 = Fluid({"nitrogen": 1.0})
    s = screen_letdown(n2, [Condition("normal", 800 * BAR, 300.0, 500 * BAR)], ScreeningOptions(CS))
    f = next(f for f in s.findings if f.topic is Topic.INVERSE_JT)
    assert f.severity is Severity.INFORMATION and f.numbers["dt_k"] > 0
    assert s.outcome is Outcome.PASS


def test_sweep_condition_joins_and_governs(lean_gas):
    ranges = OperatingRanges((70 * BAR, 90 * BAR), (T0 + 5, T0 + 15), (10 * BAR, 20 * BAR))
    s = screen_letdown(lean_gas, [Condition("normal", 70 * BAR, T0 + 15, 20 * BAR)],
                       ScreeningOptions(CS, ranges=ranges))
    names = [c.condition.name for c in s.conditions]
    assert names[-1] == screen_module.SWEEP_CONDITION
    assert s.coldest_condition == screen_module.SWEEP_CONDITION
    worst = s.answers["sweep"]["worst"]
    assert worst["p_in_pa"] == pytest.approx(90 * BAR) and worst["p_out_pa"] == pytest.approx(10 * BAR)


def test_hydrates_when_declared_water_saturated(lean_gas):
    s = screen_letdown(lean_gas, [Condition("normal", 100 * BAR, T0 + 10, 40 * BAR)],
                       ScreeningOptions(CS, water_saturated=True))
    f = next(f for f in s.findings if f.topic is Topic.HYDRATES)
    assert f.severity is Severity.HAZARD and f.numbers["subcooling_k"] > 0
    # about 39 K of depression would be needed: beyond 50 mass% methanol no dose is given (fail closed; issue 13)
    assert math.isnan(f.numbers["inhibitor_weight_percent"]) and "No methanol dose is given" in f.message
    mild = screen_letdown(lean_gas, [Condition("normal", 100 * BAR, T0 + 20, 80 * BAR)],
                          ScreeningOptions(CS, water_saturated=True))
    f = next(f for f in mild.findings if f.topic is Topic.HYDRATES)
    assert f.severity is Severity.HAZARD and 0 < f.numbers["inhibitor_weight_percent"] < 50
    dry = screen_letdown(lean_gas, [Condition("normal", 100 * BAR, T0 + 10, 40 * BAR)], ScreeningOptions(CS))
    f = next(f for f in dry.findings if f.topic is Topic.HYDRATES)
    assert f.severity is Severity.INFORMATION and "no water" in f.message


def test_joule_thomson_rule_of_thumb_loosely(lean_gas):
    """About 7 degF per 100 psi, i.e. about 0.5 K per bar, for lean natural gas (common practice): loose check."""
    s = screen_letdown(lean_gas, [Condition("normal", 70 * BAR, T0 + 10, 20 * BAR)], ScreeningOptions(CS))
    per_bar = (T0 + 10 - s.conditions[0].results["PR"].t_out) / 50.0
    assert 0.3 < per_bar < 0.8


def test_inputs_are_checked(lean_gas):
    with pytest.raises(InputError) as err:
        screen_letdown(lean_gas, [], ScreeningOptions(CS))
    assert err.value.field == "conditions"
    with pytest.raises(InputError) as err:
        screen_letdown("methane", [Condition("normal", 10 * BAR, 300, 1 * BAR)], ScreeningOptions(CS))
    assert err.value.field == "fluid"


def test_to_dict_is_plain_json(lean_gas):
    import json

    s = screen_letdown(lean_gas, [Condition("normal", 100 * BAR, T0 + 10, 10 * BAR)], ScreeningOptions(CS))
    d = json.loads(json.dumps(s.to_dict(), allow_nan=False))
    assert d["outcome"] == "fail" and d["findings"][0]["topic"] == "cold metal"
