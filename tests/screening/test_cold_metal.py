"""Cold-metal outcome: the bands, the governing limit and fail-closed behaviour (a specification)."""
from __future__ import annotations

import math

import pytest
from hypothesis import given
from hypothesis import strategies as st

from jtcheck.errors import InputError
from jtcheck.screening.cold_metal import ColdLimits, classify, screen_cold_metal
from jtcheck.screening.findings import Outcome, Severity, Topic

CS_MDMT_K = 273.15 - 29.0   # -29 degC, a typical carbon-steel exemption limit (common practice; verify per code)


def limits(**kw) -> ColdLimits:
    return ColdLimits(**{"mdmt_k": CS_MDMT_K, "margin_k": 5.0, **kw})


@pytest.mark.parametrize("t_out, expected", [
    (CS_MDMT_K + 10.0, Outcome.PASS),
    (CS_MDMT_K + 5.0, Outcome.PASS),            # exactly limit + margin: pass
    (CS_MDMT_K + 4.99, Outcome.MARGIN_ERODED),
    (CS_MDMT_K, Outcome.MARGIN_ERODED),          # exactly on the limit: not below it
    (CS_MDMT_K - 0.01, Outcome.FAIL),
    (CS_MDMT_K - 40.0, Outcome.FAIL),
])
def test_bands(t_out, expected):
    assert classify(t_out, limits()) is expected


def test_not_converged_is_never_pass():
    assert classify(CS_MDMT_K + 50.0, limits(), all_converged=False) is Outcome.NOT_SCREENED
    assert classify(None, limits()) is Outcome.NOT_SCREENED
    assert classify(math.nan, limits()) is Outcome.NOT_SCREENED


def test_no_limit_is_not_screened():
    assert classify(300.0, ColdLimits()) is Outcome.NOT_SCREENED


def test_warmer_of_mdmt_and_user_limit_governs():
    lim = ColdLimits(mdmt_k=CS_MDMT_K, user_limit_k=273.15, margin_k=0.0)
    assert lim.governing_k == 273.15
    assert "user" in lim.basis
    assert classify(270.0, lim) is Outcome.FAIL        # above the MDMT but below the user's limit
    lim2 = ColdLimits(mdmt_k=CS_MDMT_K, user_limit_k=200.0)
    assert lim2.governing_k == CS_MDMT_K
    assert "MDMT" in lim2.basis


def test_target_is_limit_plus_margin():
    assert limits().target_k == pytest.approx(CS_MDMT_K + 5.0)
    assert ColdLimits().target_k is None


@pytest.mark.parametrize("kw, field", [({"margin_k": -1.0}, "margin"), ({"margin_k": math.nan}, "margin"),
                                       ({"mdmt_k": -5.0}, "mdmt"), ({"user_limit_k": 5000.0}, "limit")])
def test_bad_limits_name_the_field(kw, field):
    with pytest.raises(InputError) as err:
        ColdLimits(**kw)
    assert err.value.field == field


def test_finding_names_the_coldest_condition_and_numbers():
    outcome, finding = screen_cold_metal([("normal", 260.0), ("min inlet temperature", 240.0)], limits())
    assert outcome is Outcome.FAIL
    assert finding.topic is Topic.COLD_METAL and finding.severity is Severity.HAZARD
    assert finding.condition == "min inlet temperature"
    assert finding.numbers["t_out_min_k"] == 240.0
    assert finding.numbers["margin_to_limit_k"] == pytest.approx(240.0 - CS_MDMT_K)
    assert "below the cold limit" in finding.message.lower()


def test_one_condition_not_converged_makes_the_case_not_screened():
    outcome, finding = screen_cold_metal([("normal", 300.0), ("max inlet pressure", None)], limits())
    assert outcome is Outcome.NOT_SCREENED
    assert "max inlet pressure" in finding.message


@given(st.floats(150.0, 400.0), st.floats(0.0, 20.0))
def test_outcome_is_monotonic_in_the_outlet_temperature(t, margin):
    """Colder never screens better (property)."""
    lim = ColdLimits(mdmt_k=CS_MDMT_K, margin_k=margin)
    assert classify(t - 1.0, lim).rank >= classify(t, lim).rank
