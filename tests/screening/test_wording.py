"""What users read: the model-spread finding names the screened outlet when dry ice forms, a solid that can form
at the outlet is a caution, and no module names reach the method line."""
from __future__ import annotations

from jtcheck import Fluid
from jtcheck.cases.letdown import LETDOWN
from jtcheck.screening.cold_metal import ColdLimits
from jtcheck.screening.findings import Severity, Topic
from jtcheck.screening.screen import Condition, ScreeningOptions, screen_letdown, validity_severity

T0 = 273.15


def test_the_model_spread_finding_quotes_the_dry_ice_outlet_that_is_screened():
    fluid = Fluid({"carbon dioxide": 0.955, "nitrogen": 0.03, "methane": 0.015}, eos="PR")
    s = screen_letdown(fluid, [Condition("normal", 111e5, T0 + 10.0, 1.2e5)],
                       ScreeningOptions(ColdLimits(user_limit_k=T0 - 46.0)))
    spread = next(f for f in s.findings if f.topic is Topic.MODEL_SPREAD)
    assert s.conditions[0].solids is not None
    assert f"screened outlet is {s.t_out_min_k - T0:.1f} degC, on the CO2 sublimation line" in spread.text
    assert "screened on the colder" not in spread.text


def test_a_component_that_can_freeze_at_the_outlet_is_a_caution_not_information():
    assert validity_severity("outlet 200.00 K is below the triple point of carbon dioxide (216.59 K): it can "
                             "freeze; the EOS has no solid phase") is Severity.CAUTION
    assert validity_severity("hydrogen present: a cubic EOS with the classic alpha function is poor for quantum "
                             "gases; treat with caution") is Severity.CAUTION
    assert validity_severity("outlet 150.0 K is below the range of the ideal-gas heat-capacity data of ethane "
                             "(200 K): extrapolated") is Severity.INFORMATION


def test_the_method_line_names_methods_not_modules():
    assert "jtcheck." not in LETDOWN.method
