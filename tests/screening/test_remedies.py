"""The answers cover every hazard that fails: the preheat for the cold limit, the preheat for hydrates, and a
plain sentence naming what they cover and what they do not.

Invariant checks (no outside value): a letdown from the required inlet temperature ends at the target.
"""
from __future__ import annotations

import pytest

from jtcheck import Fluid, letdown
from jtcheck.screening.cold_metal import ColdLimits
from jtcheck.screening.findings import Severity, Topic
from jtcheck.screening.screen import Condition, ScreeningOptions, screen_letdown

GAS = {"methane": 0.9, "ethane": 0.1}
T0 = 273.15


@pytest.fixture(scope="module")
def wet_fail():
    """Water-saturated lean gas let down 100 -> 10 bara from 10 degC: colder than -29 degC and in the hydrate
    region (both hazards)."""
    fluid = Fluid(GAS, eos="PR")
    options = ScreeningOptions(ColdLimits(user_limit_k=T0 - 29.0, margin_k=5.0), compare_models=False,
                               water_saturated=True)
    return fluid, screen_letdown(fluid, [Condition("normal", 100e5, T0 + 10.0, 10e5)], options)


def test_a_hydrate_hazard_gets_its_own_preheat(wet_fail):
    fluid, s = wet_fail
    assert any(f.topic is Topic.HYDRATES and f.severity is Severity.HAZARD for f in s.findings)
    hyd = s.answers["hydrate_preheat"]
    assert hyd["hazard"] == "hydrates" and hyd["all_converged"]
    gov = hyd["governing"]
    assert gov["needed"] and gov["t_in_required_k"] > s.answers["preheat"]["governing"]["t_in_required_k"]
    # the target is the hydrate temperature plus the hydrate margin, and the required inlet reaches it
    finding = next(f for f in s.findings if f.topic is Topic.HYDRATES)
    assert hyd["target_k"] == pytest.approx(finding.numbers["t_hydrate_k"] + finding.numbers["hydrate_margin_k"])
    out = letdown(fluid, p_in=100e5, t_in=gov["t_in_required_k"], p_out=10e5)
    assert out.t_out == pytest.approx(hyd["target_k"], abs=0.05)


def test_the_answers_say_which_hazards_they_cover(wet_fail):
    _, s = wet_fail
    text = s.answers["remedies_cover"]
    assert "cold metal" in text and "hydrates" in text
    assert "do not cover" not in text


def test_answers_name_a_hazard_they_do_not_cover():
    """Dry ice at a CO2 vent: the preheat keeps the metal above its limit; CO2 solids are named as not covered."""
    fluid = Fluid({"carbon dioxide": 0.955, "nitrogen": 0.03, "methane": 0.015}, eos="PR")
    options = ScreeningOptions(ColdLimits(user_limit_k=T0 - 46.0, margin_k=5.0), compare_models=False)
    s = screen_letdown(fluid, [Condition("normal", 111e5, T0 + 10.0, 1.2e5)], options)
    hazards = {f.topic for f in s.findings if f.severity is Severity.HAZARD}
    if Topic.CO2_SOLIDS not in hazards:
        pytest.fail(f"expected a CO2 solids hazard, got {hazards}")
    assert "do not cover CO2 solids" in s.answers["remedies_cover"]
