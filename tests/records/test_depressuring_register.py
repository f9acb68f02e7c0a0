"""A vessel depressuring case in the register: created, checked (errors name the field), computed and screened
along its pressure-temperature paths, with the run's key numbers stored (invented vessel and numbers)."""
from __future__ import annotations

import pytest

from jtcheck.errors import InputError
from jtcheck.records import service

from .register_helpers import BAR, T0, unique

P_ATM = 101325.0
VESSEL = {"orientation": "vertical", "inner_diameter_m": 1.2, "length_m": 3.0, "wall_thickness_m": 0.02}
ORIFICES = [{"name": "BDV-1", "diameter_m": 0.03, "discharge_coefficient": 0.85}]


@pytest.fixture
def depressuring_data(world):
    def make(**overrides):
        data = {"unit_id": world.unit_id, "tag": unique("BDV"), "service": "test blowdown",
                "kind": "vessel_depressuring", "fluid_id": world.fluid_id,
                "inlet_pressure_pa": 70 * BAR + P_ATM, "inlet_temperature_k": T0 + 20.0,
                "outlet_pressure_pa": 2 * BAR + P_ATM, "material_id": world.material_id, "margin_k": 5.0,
                "vessel": VESSEL, "orifices": ORIFICES, "heat_input": {"kind": "none"},
                "run": {"end_time_s": 600.0, "design_pressure_pa": 100 * BAR + P_ATM}}
        data.update(overrides)
        return data

    return make


def test_a_depressuring_case_is_stored_computed_and_screened(session, engineer, depressuring_data):
    case = service.create_case(session, engineer, depressuring_data())
    assert case.kind.value == "vessel_depressuring"
    assert case.parameters["vessel"] == VESSEL and case.parameters["orifices"] == ORIFICES
    result = service.compute_case(session, engineer, case.id)
    run = result.screening["answers"]["depressuring"]
    assert run["converged"] and result.converged
    # the API 521 common basis: min(690 kPa g, 50 % of 100 bar g) above atmospheric, in 15 min
    assert run["run"]["target_pressure_pa"] == pytest.approx(6.9 * BAR + P_ATM)
    assert run["run"]["target_time_s"] == 900.0
    assert run["time_to_target_s"] is not None and run["target_met"] is True
    series = run["series"]
    assert series["pressure_pa"][0] == pytest.approx(70 * BAR + P_ATM, rel=1e-9)
    assert series["pressure_pa"][-1] < series["pressure_pa"][0]
    assert min(series["t_fluid_k"]) < T0 + 20.0            # the gas left inside cools as it expands
    # the stored coldest temperature is the coldest screened metal or outlet; the outcome follows the paths
    paths = run["paths"]
    assert set(paths) >= {"wall_gas", "valve_outlet"}
    coldest = min(p["t_k"] for p in paths.values())
    assert result.t_out_min_k == pytest.approx(min(run["min_wall_gas_t"]["value"], run["min_valve_outlet_t"]["value"]))
    assert coldest >= result.t_out_min_k - 1e-9
    outcomes = {p["outcome"] for p in paths.values()}
    worst = max(outcomes, key=lambda o: ["pass", "margin eroded", "fail", "not screened"].index(o))
    assert result.outcome == worst
    topics = [f["topic"] for f in result.screening["findings"]]
    assert "depressuring target" in topics and "cold metal" in topics
    assert result.results[0]["condition"] == "depressuring run"


def test_the_valve_outlet_is_screened_at_the_back_pressure(session, engineer, depressuring_data):
    case = service.create_case(session, engineer, depressuring_data())
    run = service.compute_case(session, engineer, case.id).screening["answers"]["depressuring"]
    assert run["paths"]["valve_outlet"]["p_pa"] == pytest.approx(2 * BAR + P_ATM)
    # the wall's worst point is at the vessel pressure of that moment, below the initial pressure
    assert run["paths"]["wall_gas"]["p_pa"] <= 70 * BAR + P_ATM


@pytest.mark.parametrize("overrides, field", [
    ({"vessel": None}, "vessel"),
    ({"vessel": {**VESSEL, "orientation": "sideways"}}, "vessel.orientation"),
    ({"vessel": {**VESSEL, "inner_diameter_m": -1.0}}, "vessel.inner_diameter_m"),
    ({"vessel": {**VESSEL, "volume_m3": 3.0}}, "vessel.length_m"),              # length and volume both
    ({"vessel": {**VESSEL, "wall_thickness_m": 0.7}}, "vessel.wall_thickness_m"),
    ({"vessel": {**VESSEL, "wall_material": "unobtainium"}}, "vessel.wall_material"),
    ({"vessel": {**VESSEL, "colour": "red"}}, "vessel.colour"),
    ({"orifices": None}, "orifices"),
    ({"orifices": [{**ORIFICES[0], "diameter_m": 0.0}]}, "orifices[0].diameter_m"),
    ({"orifices": [{**ORIFICES[0], "discharge_coefficient": 1.5}]}, "orifices[0].discharge_coefficient"),
    ({"orifices": [{**ORIFICES[0], "back_pressure_pa": 80 * BAR}]}, "orifices[0].back_pressure_pa"),
    ({"heat_input": {"kind": "sunshine"}}, "heat_input.kind"),
    ({"run": {"end_time_s": -5.0}}, "run.end_time_s"),
    ({"run": {"target_pressure_pa": 1.5 * BAR}}, "run.target_pressure_pa"),   # not above the back pressure
    ({"run": {"target_time_s": 600.0}}, "run.target_time_s"),                  # a time without a target
    ({"outlet_pressure_pa": 70 * BAR + P_ATM}, "outlet_pressure_pa"),          # back pressure = initial
    ({"mass_flow_kg_per_s": 3.0}, "mass_flow_kg_per_s"),                        # a letdown's input
    ({"header_sections": "tailpipe; 2 barg"}, "header_sections"),             # a relief valve's input
])
def test_bad_depressuring_inputs_name_the_field(session, engineer, depressuring_data, overrides, field):
    with pytest.raises(InputError) as exc:
        service.create_case(session, engineer, depressuring_data(**overrides))
    assert exc.value.field == field, exc.value


def test_a_run_that_does_not_converge_is_not_screened(session, engineer, depressuring_data, monkeypatch):
    """Fail closed: a step that fails stops the run; the outcome is "not screened", never "pass"."""
    from jtcheck.blowdown import contents

    calls = {"n": 0}
    real = contents.Contents.evaluate_y

    def failing(self, *args, **kwargs):
        calls["n"] += 1
        if calls["n"] > 40:
            raise contents.StepFailedError("test: the UV flash does not converge")
        return real(self, *args, **kwargs)

    monkeypatch.setattr(contents.Contents, "evaluate_y", failing)
    case = service.create_case(session, engineer, depressuring_data())
    result = service.compute_case(session, engineer, case.id)
    assert result.outcome == "not screened"
    assert not result.converged
    assert result.screening["answers"]["depressuring"]["converged"] is False
    assert any(f["topic"] == "convergence" for f in result.screening["findings"])


def test_a_run_past_its_time_budget_is_not_screened(session, engineer, depressuring_data, monkeypatch):
    """Fail closed: a register case computes inside the web request; past its computing-time budget the run stops
    and the case is "not screened" with the reason, never a partial curve that passes."""
    import jtcheck.cases.depressuring as kind

    monkeypatch.setattr(kind, "REGISTER_BUDGET_S", 1e-9)
    case = service.create_case(session, engineer, depressuring_data())
    result = service.compute_case(session, engineer, case.id)
    assert result.outcome == "not screened"
    assert not result.converged
    run = result.screening["answers"]["depressuring"]
    assert run["converged"] is False
    assert "time budget" in run["message"]
