"""Screening inputs of a case: operating ranges, hydrate data and relief-valve data are checked and used."""
from __future__ import annotations

import pytest

from jtcheck.errors import InputError
from jtcheck.records import service
from jtcheck.records.models import Case

from .register_helpers import BAR, T0, count

P_ATM = 101325.0

RELIEF = {"kind": "relief_valve", "set_pressure_pa": 60 * BAR + P_ATM, "overpressure_fraction": 0.10,
          "superimposed_back_pressure_pa": 1 * BAR + P_ATM, "built_up_back_pressure_pa": 2 * BAR,
          "inlet_pressure_pa": 66 * BAR + P_ATM, "outlet_pressure_pa": 3 * BAR + P_ATM, "inlet_pressure_max_pa": None,
          "inlet_temperature_min_k": None}


@pytest.mark.parametrize("overrides, field", [
    ({"outlet_pressure_min_pa": 20 * BAR}, "outlet_pressure_min_pa"),          # above the outlet pressure
    ({"water_saturated": "yes"}, "water_saturated"),
    ({"hydrate_inhibitor": "glycerol"}, "hydrate_inhibitor"),   # issue 13 added ethanol, DEG and TEG
    ({"set_pressure_pa": 60 * BAR}, "set_pressure_pa"),                        # not a relief-valve case
    ({**RELIEF, "overpressure_fraction": None}, "overpressure_fraction"),
    ({**RELIEF, "overpressure_fraction": 1.5}, "overpressure_fraction"),
    ({**RELIEF, "built_up_back_pressure_pa": 70 * BAR}, "built_up_back_pressure_pa"),  # back >= relieving
    ({**RELIEF, "set_pressure_pa": 0.5 * BAR}, "set_pressure_pa"),             # below atmospheric
    ({"header_limit_k": 230.0}, "header_limit_k"),                             # relief data without a set pressure
])
def test_bad_screening_inputs_name_the_field_and_store_nothing(session, engineer, case_data, overrides, field):
    before = count(session, Case)
    with pytest.raises(InputError) as err:
        service.create_case(session, engineer, case_data(**overrides))
    assert err.value.field == field
    assert count(session, Case) == before


def test_screening_inputs_are_stored_and_used(session, engineer, case_data):
    case = service.create_case(session, engineer, case_data(outlet_pressure_min_pa=5 * BAR, water_saturated=True,
                                                            hydrate_inhibitor="MEG"))
    options = service.screening_options(case)
    assert options.ranges.p_out_pa == (5 * BAR, 10 * BAR)
    assert options.water_saturated is True and options.inhibitor == "MEG"
    result = service.compute_case(session, engineer, case.id)
    hydrates = [f for f in result.screening["findings"] if f["topic"] == "hydrates"]
    assert hydrates and hydrates[0]["numbers"]["inhibitor"] == "MEG"
    sweep = result.screening["answers"]["sweep"]
    assert sweep["ranges"]["p_out_pa"] == [5 * BAR, 10 * BAR]
    # the sweep reaches the lowest outlet pressure, colder than the corner conditions at 10 bar
    assert sweep["worst"]["p_out_pa"] == pytest.approx(5 * BAR)


def test_relief_valve_case_is_screened_against_the_header_limit(session, engineer, case_data):
    case = service.create_case(session, engineer, case_data(**RELIEF, header_limit_k=T0 + 10.0, mdmt_k=T0 - 100.0,
                                                            material_id=None))
    result = service.compute_case(session, engineer, case.id)
    relief = result.screening["answers"]["relief_valve"]
    assert relief["t_downstream_k"] < T0 + 10.0
    assert result.outcome == "fail"              # the header is colder than its limit
    assert any(f["topic"] == "relief valve" and f["severity"] == "hazard" for f in result.screening["findings"])
    model = relief["models"][relief["governing_model"]]
    assert model["p_relieving_pa"] == pytest.approx(66 * BAR + P_ATM)
    assert model["p_back_pa"] == pytest.approx(3 * BAR + P_ATM)
