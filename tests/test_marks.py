"""The one formatter of quantities (issue 18 item 5): sentences of the engineering layer mark their quantities
(jtcheck.marks) and every edge shows them in the units the user typed, with the precision the input justifies,
temperature differences as differences.

Check values are unit conversions by definition (1 psi = 6894.757293168 Pa, 1 bar = 1e5 Pa, T[degF] = T[K] * 1.8 -
459.67, a kelvin of difference = 1.8 delta degF; NIST SP 811, 2008 edition, Appendix B).
"""
from __future__ import annotations

import pytest

from jtcheck import marks
from jtcheck.errors import InputError
from jtcheck.units import TextUnits, format_pressure, format_temperature, parse_pressure, parse_temperature

PSI_PA = 6894.757293168   # NIST SP 811 (2008), B.8


@pytest.mark.parametrize("value, digits, text", [
    (1.01325, 4, "1.013"), (1.01325, 6, "1.01325"), (20000.0, 4, "20000"), (73.01325, 4, "73.01"),
    (0.0, 4, "0"), (-1.01325, 6, "-1.01325"), (244.14999999999998 - 273.15, 6, "-29"), (39.8143, 4, "39.81"),
])
def test_significant_digits_without_exponent_or_noise(value, digits, text):
    assert marks.significant(value, digits) == text


def test_a_marked_pressure_reads_in_the_unit_the_user_typed():
    words = TextUnits.typed({"p_in": "1000 psig", "p_out": "1200 psig", "t_in": "40degF"})
    p_out = parse_pressure("1200 psig", "p_out").pa
    assert p_out == pytest.approx(1200 * PSI_PA + 101325.0)
    assert words.text(f"outlet {marks.P(p_out, 'outlet_pressure', 6)}") == "outlet 1200 psig"
    # a temperature of the degF case in degF, a difference as a difference (1.8 delta degF per K)
    assert words.text(marks.T(parse_temperature("40 degF", "t_in"), "inlet_temperature", 6)) == "40 degF"
    assert words.text(marks.DT(2.0, 2)) == "3.60 delta degF"


def test_a_degc_case_reads_differences_in_kelvin_and_pressures_per_field():
    words = TextUnits.typed({"p_in": "72 barg", "t_in": "9 degC", "p_out": "1.9 MPa"})
    assert words.text(marks.T(244.15)) == "-29.0 degC"
    assert words.text(marks.DT(6.87, 2)) == "6.87 K"
    assert words.text(marks.P(73.01325e5, "inlet_pressure")) == "72 barg"
    assert words.text(marks.P(20e5, "outlet_pressure")) == "2 MPa"
    assert words.text(marks.DP(3e5, "built_up_back_pressure")) == "0.3 MPa"   # a difference: no gauge offset


def test_typed_temperature_words_are_one_spelling():
    for typed in ("40degC", "40 C", "40°C"):
        assert TextUnits.typed({"t_in": typed}).temperature == "degC"


def test_without_units_the_default_words_are_degc_bar_abs_and_kelvin():
    text = f"{marks.T(273.15)} at {marks.P(1e5)}, {marks.DT(1.5)}"
    assert marks.plain(text) == "0.0 degC at 1 bar abs, 1.5 K"
    err = InputError("p_out", f"outlet pressure {marks.P(12e6, 'outlet_pressure', 6)} is too high")
    assert str(err) == "p_out: outlet pressure 120 bar abs is too high"
    assert TextUnits.typed({"p_out": "120 bara"}).error(err) == "p_out: outlet pressure 120 bara is too high"


def test_walk_renders_every_string_of_a_stored_result_and_leaves_numbers():
    words = TextUnits.typed({"t_in": "50 degF"})
    stored = {"findings": [{"message": f"outlet {marks.T(255.3722222222222)}", "numbers": {"t_k": 255.37}}]}
    out = words.walk(stored)
    assert out["findings"][0]["message"] == "outlet 0.0 degF"
    assert out["findings"][0]["numbers"]["t_k"] == 255.37


def test_pressures_and_temperatures_format_to_four_significant_digits():
    assert format_pressure(39.8143e5 + 101325.0, "barg") == "39.81 barg"
    assert format_pressure(2e9, "bara") == "20000 bara"
    assert format_temperature(244.15, "degC", 2) == "-29.00 degC"
