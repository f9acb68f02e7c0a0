"""The vessel depressuring kind: its inputs as text and objects, the API 521 common target, and the screening of
the paths at the coincident pressure (invented vessel and numbers; check values named beside them)."""
from __future__ import annotations

import numpy as np
import pytest

from jtcheck import depressuring_lists as lists
from jtcheck.cases import kind_of
from jtcheck.cases.depressuring import VESSEL_DEPRESSURING
from jtcheck.cases.depressuring.inputs import orifices_of, run_of, vessel_of
from jtcheck.errors import InputError
from jtcheck.screening.mdmt import MaterialColdSpec
from jtcheck.thermo.fluid import Fluid
from jtcheck.thermo.kernels.saturation import pure_saturation_T

BAR = 1e5
P_ATM = 101325.0
T0 = 273.15
GAS = Fluid({"methane": 0.85, "ethane": 0.07, "propane": 0.03, "n-butane": 0.01, "nitrogen": 0.02,
             "carbon dioxide": 0.02})


def values(**extra):
    out = {"inlet_pressure_pa": 70 * BAR + P_ATM, "inlet_temperature_k": T0 + 20.0,
           "outlet_pressure_pa": 2 * BAR + P_ATM, "mdmt_k": T0 - 29.0, "cold_limit_k": None, "margin_k": 5.0,
           "mdmt_source": "entered", "p_atm_pa": P_ATM,
           "vessel": {"orientation": "vertical", "inner_diameter_m": 1.2, "length_m": 3.0, "wall_thickness_m": 0.03},
           "orifices": [{"name": "BDV-1", "diameter_m": 0.03, "discharge_coefficient": 0.85}],
           "heat_input": None, "run": {"end_time_s": 600.0, "design_pressure_pa": 100 * BAR + P_ATM}}
    out.update(extra)
    return out


def test_the_kind_is_registered_for_its_device():
    assert kind_of("vessel_depressuring") is VESSEL_DEPRESSURING
    assert VESSEL_DEPRESSURING.parameters == ("vessel", "orifices", "heat_input", "run")


@pytest.mark.parametrize("design_barg, target_barg", [
    (100.0, 6.9),     # API 521 common basis: 690 kPa gauge governs above 13.8 barg design (6th ed., from memory)
    (10.0, 5.0),      # 50 % of the design gauge pressure governs below it
])
def test_the_api521_common_target_is_the_lower_of_690_kpa_gauge_and_half_the_design(design_barg, target_barg):
    v = values(run={"design_pressure_pa": design_barg * BAR + P_ATM})
    plan = run_of(v, orifices_of(v))
    assert plan.target_pressure_pa == pytest.approx(target_barg * BAR + P_ATM)
    assert plan.target_time_s == 900.0 and "verify against the edition in force" in plan.target_basis


def test_a_volume_gives_the_length_of_a_flat_ended_cylinder():
    vessel, _ = vessel_of(values(vessel={"orientation": "horizontal", "inner_diameter_m": 2.0, "volume_m3": 31.4159265,
                                         "wall_thickness_m": 0.02}))
    assert vessel.length_m == pytest.approx(10.0, rel=1e-8)     # V = pi/4 D^2 L


def test_the_form_texts_read_as_the_objects_and_back():
    v = lists.vessel("orientation=horizontal; diameter=2400 mm; length=8 m; wall=1.5 in; level=0.5 m")
    assert v == {"orientation": "horizontal", "inner_diameter_m": pytest.approx(2.4), "length_m": 8.0,
                 "wall_thickness_m": pytest.approx(0.0381), "liquid_level_m": 0.5}
    o = lists.orifices("BDV-1; 35 mm; 0.85; 2 barg\nRO-2; 1 in; 0.6", p_atm_pa=P_ATM)
    assert o[0] == {"name": "BDV-1", "diameter_m": pytest.approx(0.035), "discharge_coefficient": 0.85,
                    "back_pressure_pa": pytest.approx(2 * BAR + P_ATM)}
    assert "back_pressure_pa" not in o[1] and o[1]["diameter_m"] == pytest.approx(0.0254)
    assert lists.heat_input("fire; F=0.3; drainage=no") == {"kind": "fire", "environment_factor": 0.3,
                                                            "adequate_drainage": False}
    assert lists.run("end=20 min; design=100 barg", p_atm_pa=P_ATM) == {
        "end_time_s": 1200.0, "design_pressure_pa": pytest.approx(100 * BAR + P_ATM)}
    text = lists.text_of("orifices", o, "barg", "degC", P_ATM)
    assert lists.orifices(text, p_atm_pa=P_ATM)[0]["back_pressure_pa"] == pytest.approx(2 * BAR + P_ATM)
    assert lists.vessel(lists.text_of("vessel", v, "barg", "degC", P_ATM)) == pytest.approx(v)


@pytest.mark.parametrize("reader, text, field", [
    (lists.vessel, "diameter=2 furlongs", "vessel.inner_diameter_m"),
    (lists.vessel, "colour=red", "vessel"),
    (lists.orifices, "BDV-1; 35 mm", "orifices[0]"),
    (lists.orifices, "BDV-1; 35 mm; high", "orifices[0].discharge_coefficient"),
    (lists.run, "end=soon", "run.end_time_s"),
    (lists.heat_input, "fire; drainage=perhaps", "heat_input.adequate_drainage"),
])
def test_bad_texts_name_the_field(reader, text, field):
    with pytest.raises(InputError) as exc:
        reader(text)
    assert exc.value.field == field


def test_a_material_curve_allows_a_colder_metal_at_the_low_coincident_pressure():
    """The valve outlet is screened at the back pressure, where the stress ratio is low: its allowable temperature
    is colder than the curve's limit at the initial pressure (ASME VIII-1 UCS-66.1 reduction)."""
    spec = MaterialColdSpec(name="SA-516-70 (curve B)", curve="B", thickness_m=0.03, allowable_stress_pa=138e6,
                            outside_diameter_m=1.26)
    v = values(mdmt_k=None, mdmt_source="material: SA-516-70", material_spec=spec)
    screening = VESSEL_DEPRESSURING.compute(GAS, v)
    run = screening.answers["depressuring"]
    assert run["converged"]
    at_start = spec.limit_at(70 * BAR + P_ATM, P_ATM).limit_k
    valve = run["paths"]["valve_outlet"]
    assert valve["p_pa"] == pytest.approx(2 * BAR + P_ATM)
    assert valve["allowable_k"] < at_start
    wall = run["paths"]["wall_gas"]
    assert wall["allowable_k"] == pytest.approx(spec.limit_at(wall["p_pa"], P_ATM).limit_k)
    assert screening.outcome.value in ("pass", "margin eroded", "fail")


def test_without_any_limit_the_run_is_not_screened():
    screening = VESSEL_DEPRESSURING.compute(GAS, values(mdmt_k=None))
    assert screening.outcome.value == "not screened"
    assert screening.answers["depressuring"]["converged"]        # the run itself is fine: the limit is missing


def test_the_run_text_takes_the_model_and_back():
    r = lists.run("end=20 min; model=two-zone", p_atm_pa=P_ATM)
    assert r == {"end_time_s": 1200.0, "model": "two-zone"}
    assert lists.run(lists.text_of("run", r, "barg", "degC", P_ATM), p_atm_pa=P_ATM) == r


def test_an_unknown_model_names_the_run_field():
    v = values(run={"end_time_s": 600.0, "model": "three-zone"})
    with pytest.raises(InputError) as exc:
        run_of(v, orifices_of(v))
    assert exc.value.field == "run.model" and "two-zone" in exc.value.message


def test_a_two_zone_case_runs_the_two_zone_model_and_says_so():
    # a propane drum with liquid (invented numbers): the stored run names the two-zone method and its pool is colder
    # than or as cold as the gas at the end (a boiling pool; the gas is warmed by its wall)
    propane = Fluid({"propane": 1.0})
    sat = 9.0 * BAR
    t_sat = float(pure_saturation_T(propane.mixture.kernel_params, sat, np.ones(1), 0))
    v = values(inlet_pressure_pa=sat, inlet_temperature_k=t_sat, outlet_pressure_pa=1.5 * BAR,
               vessel={"orientation": "horizontal", "inner_diameter_m": 1.2, "length_m": 3.0,
                       "wall_thickness_m": 0.015, "liquid_level_m": 0.5},
               run={"end_time_s": 300.0, "model": "two-zone"})
    assert run_of(v, orifices_of(v)).model == "two-zone"
    screening = VESSEL_DEPRESSURING.compute(propane, v)
    run = screening.answers["depressuring"]
    assert run["converged"], run.get("message")
    assert run["method"].startswith("two-zone")
    assert run["run"]["model"] == "two-zone"
