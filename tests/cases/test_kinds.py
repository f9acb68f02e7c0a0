"""The case-kind seam: every device has a kind, fields check their values, kinds compute through one path."""
from __future__ import annotations

import math

import pytest

from jtcheck.cases import KINDS, all_fields, kind_named, kind_of, kinds_with
from jtcheck.cases.fields import COMMON_FIELDS, MARGIN, check_number
from jtcheck.cases.letdown import LETDOWN, check_letdown
from jtcheck.cases.relief import RELIEF_VALVE
from jtcheck.errors import InputError
from jtcheck.records.models import CaseKind as Device
from jtcheck.screening.cold_metal import ColdLimits
from jtcheck.screening.screen import Condition, OperatingRanges, ScreeningOptions, screen_letdown
from jtcheck.thermo.fluid import Fluid

BAR = 1e5
P_ATM = 101325.0
LEAN = Fluid("methane=0.9,ethane=0.1")


def values(**extra):
    """A complete letdown in SI (invented numbers)."""
    out = {"inlet_pressure_pa": 70 * BAR, "inlet_temperature_k": 290.0, "outlet_pressure_pa": 20 * BAR,
           "inlet_temperature_min_k": None, "inlet_pressure_max_pa": None, "outlet_pressure_min_pa": None,
           "mass_flow_kg_per_s": None, "mdmt_k": 244.15, "cold_limit_k": None, "margin_k": 5.0,
           "mdmt_source": "entered", "p_atm_pa": P_ATM, "water_saturated": False, "hydrate_inhibitor": "methanol",
           "set_pressure_pa": None, "overpressure_fraction": None, "superimposed_back_pressure_pa": None,
           "built_up_back_pressure_pa": None, "header_limit_k": None}
    out.update(extra)
    return out


def test_every_device_of_the_register_has_exactly_one_kind():
    for device in Device:
        assert kind_of(device).name in KINDS
    assert kind_of("relief_valve") is RELIEF_VALVE
    assert kind_of(Device.CHOKE) is LETDOWN


def test_an_unknown_device_or_kind_is_an_input_error_listing_the_allowed():
    with pytest.raises(InputError, match="allowed: .*control_valve"):
        kind_of("steam_trap")
    with pytest.raises(InputError, match="allowed: letdown, relief_valve"):
        kind_named("steam trap")


def test_all_fields_lists_each_field_once_in_check_order():
    keys = [f.key for f in all_fields()]
    assert len(keys) == len(set(keys))
    assert keys[:3] == ["inlet_pressure_pa", "inlet_temperature_k", "outlet_pressure_pa"]
    assert {f.key for f in COMMON_FIELDS} <= set(keys)
    assert keys.index("margin_k") < keys.index("set_pressure_pa")
    assert [k.name for k in kinds_with("set_pressure_pa")] == ["relief_valve"]
    assert [k.name for k in kinds_with("inlet_pressure_pa")] == ["letdown", "relief_valve", "vessel_depressuring"]


@pytest.mark.parametrize(("value", "match"), [
    (None, "margin is required"), ("5", "must be a number"), (math.nan, "finite"), (-1.0, "out of range"),
    (True, "must be a number")])
def test_a_field_names_itself_and_the_allowed_range(value, match):
    with pytest.raises(InputError, match=match) as err:
        MARGIN.check(value)
    assert err.value.field == "margin_k"


def test_a_pressure_out_of_range_says_absolute():
    with pytest.raises(InputError, match=r"allowed: 0 < value <= 1e\+09 Pa \(absolute\)"):
        check_number("p", 0.0, "pressure", "Pa", (0.0, 1e9, False), True)


def test_letdown_relations_are_checked_with_the_field_named():
    with pytest.raises(InputError) as err:
        check_letdown(values(outlet_pressure_pa=80 * BAR))
    assert err.value.field == "outlet_pressure_pa"
    with pytest.raises(InputError) as err:
        check_letdown(values(inlet_temperature_min_k=300.0))
    assert err.value.field == "inlet_temperature_min_k"
    with pytest.raises(InputError) as err:
        check_letdown(values(hydrate_inhibitor="glycerol"))
    assert err.value.field == "hydrate_inhibitor"


def test_relief_data_are_all_or_nothing():
    with pytest.raises(InputError) as err:
        RELIEF_VALVE.check(values(header_limit_k=230.0))
    assert err.value.field == "header_limit_k"
    with pytest.raises(InputError) as err:
        RELIEF_VALVE.check(values(set_pressure_pa=60 * BAR))
    assert err.value.field == "overpressure_fraction"


def test_the_letdown_kind_computes_what_the_screening_computes_directly():
    """The kind is a seam, not a second calculation: same conditions, same options, same screening."""
    v = values(inlet_temperature_min_k=280.0)
    by_kind = LETDOWN.compute(LEAN, v)
    direct = screen_letdown(LEAN, [Condition("normal", 70 * BAR, 290.0, 20 * BAR),
                                   Condition("min inlet temperature", 70 * BAR, 280.0, 20 * BAR),
                                   Condition("start-up into depressured outlet", 70 * BAR, 290.0, P_ATM),
                                   Condition("start-up into depressured outlet (min inlet temperature)",
                                             70 * BAR, 280.0, P_ATM)],
                            ScreeningOptions(ColdLimits(mdmt_k=244.15, margin_k=5.0, mdmt_source="entered"),
                                             ranges=OperatingRanges((70 * BAR, 70 * BAR), (280.0, 290.0),
                                                                    (20 * BAR, 20 * BAR))))
    kind_dict = by_kind.to_dict()
    generated = kind_dict["answers"].pop("generated_cases")
    assert kind_dict == direct.to_dict()
    assert [g["status"] for g in generated if g["case"] == "start_up"] == ["computed", "computed"]
    assert LETDOWN.summary(by_kind)["t_out_min_k"] == direct.t_out_min_k
    assert LETDOWN.summary(by_kind)["coldest_condition"] == ("start-up into depressured outlet "
                                                              "(min inlet temperature)")


def test_the_relief_kind_adds_the_relieving_case_only_with_a_set_pressure():
    plain = RELIEF_VALVE.compute(LEAN, values())
    assert "relief_valve" not in plain.answers
    relief = RELIEF_VALVE.compute(LEAN, values(set_pressure_pa=60 * BAR + P_ATM, overpressure_fraction=0.10,
                                               outlet_pressure_pa=2 * BAR))
    rv = relief.answers["relief_valve"]
    p_relieving = 60 * BAR + P_ATM + 0.10 * 60 * BAR    # set + overpressure (fraction of set gauge) + atmospheric
    for per_model in rv["models"].values():
        assert math.isclose(per_model["p_relieving_pa"], p_relieving, rel_tol=1e-12)
