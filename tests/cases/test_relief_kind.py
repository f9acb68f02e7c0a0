"""The relief-valve kind: its remedies, its minimum relieving temperature, header sections and other sources, and
the checks that name the entry at fault (invented numbers)."""
from __future__ import annotations

import pytest

from jtcheck.cases.relief import RELIEF_VALVE
from jtcheck.errors import InputError
from jtcheck.thermo.fluid import Fluid

BAR = 1e5
P_ATM = 101325.0
T0 = 273.15
GAS = Fluid({"methane": 0.9, "ethane": 0.1})


def values(**extra):
    """A relief valve in SI: set 60 barg, 10 %, back pressure 1 barg + 2 bar (invented)."""
    out = {"inlet_pressure_pa": 66 * BAR + P_ATM, "inlet_temperature_k": T0 + 30.0,
           "outlet_pressure_pa": 3 * BAR + P_ATM,
           "inlet_temperature_min_k": None, "inlet_pressure_max_pa": None, "outlet_pressure_min_pa": None,
           "mass_flow_kg_per_s": None, "mdmt_k": T0 - 29.0, "cold_limit_k": None, "margin_k": 5.0,
           "mdmt_source": "entered", "p_atm_pa": P_ATM, "water_saturated": False, "hydrate_inhibitor": "methanol",
           "set_pressure_pa": 60 * BAR + P_ATM, "overpressure_fraction": 0.10,
           "superimposed_back_pressure_pa": 1 * BAR + P_ATM, "built_up_back_pressure_pa": 2 * BAR,
           "header_limit_k": T0 - 46.0, "relieving_temperature_min_k": None}
    out.update(extra)
    return out


SECTIONS = [{"name": "tailpipe", "p_pa": 3 * BAR + P_ATM, "limit_k": None, "material": "LTCS"},
            {"name": "main header", "p_pa": 1 * BAR + P_ATM, "limit_k": T0 - 46.0},
            {"name": "knock-out drum", "p_pa": 0.2 * BAR + P_ATM, "limit_k": T0 - 46.0}]


def test_a_relief_valve_is_offered_relief_remedies_and_its_relieving_data():
    v = values(inlet_temperature_min_k=T0 + 5.0, mass_flow_kg_per_s=12.0, header_sections=SECTIONS,
               other_sources=[{"name": "PSV-2", "fluid": GAS, "mass_flow_kg_per_s": 3.0, "p_pa": 20 * BAR,
                               "t_k": T0 + 20.0}])
    RELIEF_VALVE.check(v)
    opts = RELIEF_VALVE.options(v)
    assert opts.remedies == "relief"
    rel = opts.relief
    assert rel.t_relieving_min_k == T0 + 5.0                  # defaults to the minimum credible inlet temperature
    assert rel.mass_flow_kg_per_s == 12.0
    assert [s.name for s in rel.header_sections] == ["tailpipe", "main header", "knock-out drum"]
    assert rel.header_sections[0].material == "LTCS" and rel.other_sources[0].name == "PSV-2"
    assert RELIEF_VALVE.options(values(relieving_temperature_min_k=T0 + 10.0,
                                       inlet_temperature_min_k=T0)).relief.t_relieving_min_k == T0 + 10.0


@pytest.mark.parametrize("extra, field", [
    ({"relieving_temperature_min_k": T0 + 40.0}, "relieving_temperature_min_k"),           # above the normal
    ({"header_sections": [*SECTIONS[:2], {**SECTIONS[2], "p_pa": 2 * BAR + P_ATM}]},
     "header_sections[2].p_pa"),                                                            # rises in flow order
    ({"header_sections": [{**SECTIONS[0], "p_pa": 0.0}]}, "header_sections[0].p_pa"),        # not above 0
    ({"header_sections": [{**SECTIONS[0], "p_pa": 70 * BAR}]}, "header_sections[0].p_pa"),  # above relieving
    ({"header_sections": [{**SECTIONS[0], "limit_k": 1200.0}]}, "header_sections[0].limit_k"),
    ({"header_sections": [{**SECTIONS[0], "name": ""}]}, "header_sections[0].name"),
    ({"header_sections": [SECTIONS[0], SECTIONS[0]]}, "header_sections[1].name"),
    ({"header_sections": [{**SECTIONS[0], "diameter": 0.3}]}, "header_sections[0].diameter"),
    ({"other_sources": [{"name": "PSV-2", "fluid": "gas", "mass_flow_kg_per_s": 1.0, "p_pa": 20 * BAR,
                         "t_k": 300.0}]}, "other_sources[0].fluid"),
    ({"other_sources": [{"name": "PSV-2", "fluid": GAS, "mass_flow_kg_per_s": 0.0, "p_pa": 20 * BAR,
                         "t_k": 300.0}]}, "other_sources[0].mass_flow_kg_per_s"),
    ({"other_sources": [{"name": "PSV-2", "fluid": GAS, "mass_flow_kg_per_s": 1.0, "p_pa": 2 * BAR,
                         "t_k": 300.0}]}, "other_sources[0].p_pa"),                           # below the back pressure
])
def test_relief_entries_are_checked_and_the_error_names_the_entry(extra, field):
    with pytest.raises(InputError) as err:
        RELIEF_VALVE.check(values(**extra))
    assert err.value.field == field
    assert "allowed" in err.value.message or "must" in err.value.message or "twice" in err.value.message
