"""A two-phase inlet is a caution: the valve sees a two-phase feed, or the composition is suspect."""
from __future__ import annotations

from jtcheck import Fluid
from jtcheck.screening.cold_metal import ColdLimits
from jtcheck.screening.findings import Severity, Topic
from jtcheck.screening.screen import Condition, ScreeningOptions, screen_letdown

T0 = 273.15
RICH = {"methane": 0.70, "ethane": 0.10, "propane": 0.08, "n-butane": 0.05, "n-pentane": 0.04, "n-hexane": 0.03}
OPTIONS = ScreeningOptions(ColdLimits(user_limit_k=T0 - 46.0), compare_models=False, answers=False)


def _inlet_findings(composition):
    s = screen_letdown(Fluid(composition), [Condition("normal", 70e5, T0 + 30.0, 20e5)], OPTIONS)
    return [f for f in s.findings if f.message.startswith("The inlet is two-phase")]


def test_a_rich_gas_that_is_two_phase_at_the_inlet_gets_a_caution():
    found = _inlet_findings(RICH)
    assert len(found) == 1
    f = found[0]
    assert f.severity is Severity.CAUTION and f.topic is Topic.INLET_PHASE
    assert 0.0 < f.numbers["inlet_vapour_fraction"] < 1.0
    assert "two-phase feed" in f.message and "composition is suspect" in f.message


def test_a_gas_with_one_percent_water_is_told_its_water_is_free():
    found = _inlet_findings({"methane": 0.89, "ethane": 0.10, "water": 0.01})
    assert len(found) == 1 and "free water" in found[0].message


def test_a_dry_lean_gas_gets_no_inlet_finding():
    assert _inlet_findings({"methane": 0.9, "ethane": 0.1}) == []
