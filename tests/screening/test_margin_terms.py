"""Issue 12 item 5: the required margin with its terms.

Total margin = entered margin (or the site's default) + the model spread |PR - SRK| at the condition that
governs; the outcome bands and the answers use the total.  Hydrates: an outlet is outside the hydrate region
only at or above T_hydrate + the method's uncertainty (Katz chart via the Motiee fit, checked deviation 3.1 K
rounded up to 3.5 K, tests/screening/test_hydrates.py) + the margin.  Invariants, not reference values; the
5 K margin and -29 degC carbon-steel limit are common practice.
"""
from __future__ import annotations

import pytest

from jtcheck import letdown
from jtcheck.marks import plain
from jtcheck.screening.cold_metal import ColdLimits, classify
from jtcheck.screening.findings import Outcome, Severity, Topic
from jtcheck.screening.hydrates import METHOD_UNCERTAINTY_K
from jtcheck.screening.screen import Condition, ScreeningOptions, hydrate_outside, screen_letdown
from jtcheck.thermo.hydrate import CHECKED_DEVIATION_K

T0 = 273.15
BAR = 1e5
COND = Condition("normal", 50 * BAR, T0 + 10, 10 * BAR)


def _by_model(lean_gas):
    return letdown(lean_gas, COND.p_in_pa, COND.t_in_k, COND.p_out_pa).t_out, \
        letdown(lean_gas.with_eos("SRK"), COND.p_in_pa, COND.t_in_k, COND.p_out_pa).t_out


def test_total_margin_is_entered_plus_model_spread_at_the_governing_condition(lean_gas):
    pr, srk = _by_model(lean_gas)
    s = screen_letdown(lean_gas, [COND], ScreeningOptions(ColdLimits(user_limit_k=T0 - 29.0, margin_k=5.0)))
    lim = s.limits
    assert lim.margin_k == 5.0                                   # the entered margin stays as entered
    assert lim.model_spread_k == pytest.approx(abs(pr - srk), abs=1e-9) and lim.model_spread_k > 0.5
    assert lim.total_margin_k == pytest.approx(5.0 + abs(pr - srk), abs=1e-9)
    assert lim.target_k == pytest.approx(T0 - 29.0 + lim.total_margin_k)
    terms = lim.margin_terms
    assert [t["term"] for t in terms] == ["entered margin", "model spread (PR vs SRK at normal)"]
    assert sum(t["k"] for t in terms) == pytest.approx(lim.total_margin_k)
    stored = s.to_dict()["limits"]
    assert stored["total_margin_k"] == pytest.approx(lim.total_margin_k) and len(stored["margin_terms"]) == 2
    cold = next(f for f in s.findings if f.topic is Topic.COLD_METAL)
    assert cold.numbers["total_margin_k"] == pytest.approx(lim.total_margin_k)
    assert "model spread (PR vs SRK at normal)" in cold.basis


def test_outlet_between_limit_plus_entered_and_limit_plus_total_is_margin_eroded(lean_gas):
    """It was pass with the entered margin alone."""
    pr, srk = _by_model(lean_gas)
    coldest, spread = min(pr, srk), abs(pr - srk)
    limit = coldest - 5.0 - spread / 2          # coldest - limit = 5 K + half the spread
    entered_only = ColdLimits(user_limit_k=limit, margin_k=5.0)
    assert classify(coldest, entered_only) is Outcome.PASS     # the old rule
    s = screen_letdown(lean_gas, [COND], ScreeningOptions(entered_only))
    assert s.outcome is Outcome.MARGIN_ERODED
    assert s.answers["preheat"]["target_k"] == pytest.approx(limit + 5.0 + spread)
    cold = next(f for f in s.findings if f.topic is Topic.COLD_METAL)
    assert cold.severity is Severity.CAUTION and "entered margin 5.00 K + model spread" in cold.text


def test_single_model_screening_adds_no_spread_term(lean_gas):
    pr, _ = _by_model(lean_gas)
    limit = pr - 5.0 - 0.5
    s = screen_letdown(lean_gas, [COND], ScreeningOptions(ColdLimits(user_limit_k=limit, margin_k=5.0),
                                                         compare_models=False))
    assert s.models == ("PR",)
    assert s.limits.model_spread_k == 0.0 and s.limits.total_margin_k == 5.0
    assert [t["term"] for t in s.limits.margin_terms] == ["entered margin"]
    assert s.outcome is Outcome.PASS


def test_the_relief_bands_use_the_same_total():
    from jtcheck.screening.relief_screen import band
    lim = ColdLimits(user_limit_k=T0 - 46.0, margin_k=5.0, model_spread_k=2.0, spread_condition="normal")
    t = T0 - 46.0 + 6.0                       # inside limit + 7 K, outside limit + 5 K
    assert band(t, lim.governing_k, lim.total_margin_k) is Outcome.MARGIN_ERODED
    assert band(t, lim.governing_k, lim.margin_k) is Outcome.PASS


def test_hydrate_outside_only_beyond_the_method_uncertainty_plus_margin():
    # issue 13: the method is van der Waals-Platteeuw, whose largest checked deviation is 2 K (was 3.5 K for Katz)
    assert METHOD_UNCERTAINTY_K == CHECKED_DEVIATION_K == 2.0
    th = T0 + 12.0
    msg, sev = hydrate_outside(th + 1.5, th, 0.0, True, "")
    msg = plain(msg)      # its quantities in the default units      # warmer, but inside the 2 K uncertainty
    assert sev is Severity.CAUTION and msg.startswith("Inside the hydrate margin")
    assert "hydrate method uncertainty 2.00 K + entered margin 0.00 K" in msg
    msg, sev = hydrate_outside(th + 2.0 + 5.0 - 0.1, th, 5.0, True, "")
    msg = plain(msg)
    assert sev is Severity.CAUTION and "7.00 K margin" in msg
    msg, sev = hydrate_outside(th + 2.0 + 5.0, th, 5.0, True, "")
    assert sev is Severity.INFORMATION and msg.startswith("Outside the hydrate region")


def test_the_hydrate_finding_carries_its_terms(lean_gas):
    # issue 13: free water is needed at the outlet (saturated at the inlet, Bukacek): a letdown that cools it
    s = screen_letdown(lean_gas, [Condition("normal", 100 * BAR, T0 + 20, 50 * BAR)],
                       ScreeningOptions(ColdLimits(user_limit_k=T0 - 29.0, margin_k=5.0), water_saturated=True))
    hyd = next(f for f in s.findings if f.topic is Topic.HYDRATES)
    assert hyd.numbers["hydrate_margin_k"] == pytest.approx(2.0 + 5.0)
    assert [t["term"] for t in hyd.numbers["hydrate_margin_terms"]] == ["hydrate method uncertainty",
                                                                        "entered margin"]
