"""Unit parsing at the edge (jtcheck.units)."""
import re

import pytest

from jtcheck.errors import InputError
from jtcheck.units import (
    P_ATM_DEFAULT_PA,
    parse_pressure,
    parse_temperature,
    parse_temperature_difference,
    pressure_from_pa,
    temperature_from_k,
)


@pytest.mark.parametrize("text, pa", [
    ("100 bara", 100e5), ("100 bar", 100e5), ("1 MPa", 1e6), ("250 kPa", 2.5e5),
    ("14.6959 psia", 101325.0),   # 1 atm = 14.6959 psi (definition of the psi and the atmosphere)
    ("1 atm", 101325.0),
])
def test_absolute_pressures_convert_to_pascal(text, pa):
    assert parse_pressure(text, "p_in").pa == pytest.approx(pa, rel=1e-5)


def test_gauge_pressure_adds_the_stated_atmosphere():
    p = parse_pressure("10 barg", "p_out")
    assert p.gauge and p.pa == pytest.approx(10e5 + P_ATM_DEFAULT_PA)
    p2 = parse_pressure("10 barg", "p_out", p_atm_pa=0.95e5)
    assert p2.pa == pytest.approx(10.95e5)
    assert parse_pressure("0 psig", "p").pa == pytest.approx(P_ATM_DEFAULT_PA)


@pytest.mark.parametrize("text, k", [("40 degC", 313.15), ("-40 degF", 233.15), ("300 K", 300.0),
                                     ("32 degF", 273.15), ("491.67 degR", 273.15)])
def test_temperatures_convert_to_kelvin(text, k):
    assert parse_temperature(text, "t_in") == pytest.approx(k, abs=1e-9)


def test_temperature_difference_is_not_offset():
    assert parse_temperature_difference("9 degF", "margin") == pytest.approx(5.0)
    assert parse_temperature_difference("5 K", "margin") == pytest.approx(5.0)


@pytest.mark.parametrize("text, field, fragment", [
    ("100", "p_in", "no unit"), ("abc bara", "p_in", "not a number"), ("100 furlongs", "p_in", "unknown pressure unit"),
    ("-2 bara", "p_out", "above 0 bara"), ("-300 degC", "t_in", "absolute zero"), ("20 parsec", "t_in", "unknown"),
])
def test_bad_quantities_name_the_field(text, field, fragment):
    parse = parse_temperature if field == "t_in" else parse_pressure
    with pytest.raises(InputError) as exc:
        parse(text, field)
    assert exc.value.field == field
    assert fragment in str(exc.value)


def test_round_trip_display_units():
    assert pressure_from_pa(11.01325e5, "barg") == pytest.approx(10.0)
    assert temperature_from_k(273.15, "degC") == pytest.approx(0.0, abs=1e-12)


# -- shown in the user's units (issue 18) -------------------------------------------------------------------
@pytest.mark.parametrize("text", ["40degC", "40 degC", "40C", "40 C", "40°C", "40 °C"])
def test_a_temperature_typed_any_way_is_shown_in_its_unit(text):
    from jtcheck.units import temperature_unit_of

    assert temperature_unit_of(text) == "degC"


def test_differences_are_labelled_as_differences():
    from jtcheck.units import difference_label

    assert difference_label("degC") == "K" and difference_label("K") == "K"
    assert difference_label("degF") == "delta degF" and difference_label("degR") == "delta degR"


def test_round_significant_removes_float_noise():
    from jtcheck.units import round_significant

    assert -29.0 + 273.15 != 244.15                       # the noise itself
    assert repr(round_significant(-29.0 + 273.15)) == "244.15"
    assert round_significant(1.01325, 6) == 1.01325


def test_cli_reports_in_the_unit_typed_and_errors_in_bar(tmp_path):
    from click.testing import CliRunner

    from jtcheck.cli import main

    res = CliRunner().invoke(main, ["letdown", "--fluid", "methane=0.9,ethane=0.1", "--p-in", "100 bara",
                                    "--t-in", "40°C", "--p-out", "10 bara", "--single-model"])
    assert re.search(r"temperature +40.00 degC +-?\d+\.\d\d degC", res.output), res.output
    assert "313.15 K" not in res.output
    res = CliRunner().invoke(main, ["letdown", "--fluid", "methane=0.9,ethane=0.1", "--p-in", "100 bara",
                                    "--t-in", "40 degF", "--p-out", "10 bara", "--single-model"])
    assert "delta degF" in res.output
    bad = CliRunner().invoke(main, ["letdown", "--fluid", "methane=1", "--p-in", "100 bara", "--t-in", "40 degC",
                                    "--p-out", "120 bara"])
    assert "outlet pressure 120 bara is above the inlet pressure 100 bara" in bad.output
    assert "e+07" not in bad.output
