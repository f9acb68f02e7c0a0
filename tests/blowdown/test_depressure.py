"""Vessel depressurisation (equilibrium model): closed-form ideal-gas discharge, balances, wall limits, the
screening and its fail-closed rule, and bad input."""
from __future__ import annotations

import math

import numpy as np
import pytest

from jtcheck import Fluid, depressure
from jtcheck.blowdown import HeatInput, Orifice, Vessel, api521_target_pressure_pa
from jtcheck.blowdown.contents import Contents, StepFailedError
from jtcheck.errors import InputError
from jtcheck.screening.cold_metal import ColdLimits
from jtcheck.screening.findings import Outcome

R = 8.314462618
VESSEL = Vessel("vertical", 1.0, 2.0, 0.02)


@pytest.fixture(scope="module")
def argon_run():
    """Argon from 2 bar, 300 K through a 10 mm orifice (Cd 1) to 0.05 bar, adiabatic: an ideal monatomic gas to
    within 0.2 % at these pressures (second virial coefficient about -16 cm^3/mol at 300 K, from memory)."""
    fluid = Fluid({"argon": 1.0}, eos="PR")
    return depressure(fluid, p0_pa=2e5, t0_k=300.0, vessel=VESSEL, orifices=Orifice(0.01, 1.0, 5e3),
                      end_time_s=2000.0, end_pressure_pa=0.4e5, inside_heat_transfer="none", rtol=1e-6)


def test_choked_ideal_gas_discharge_matches_the_closed_form(argon_run):
    # closed form (any gas-dynamics text): choked flow m' = Cd A rho c Psi, Psi = (2/(k+1))^((k+1)/(2(k-1))), an
    # isentropic vessel gas gives P/P0 = (1 + (k-1)/2 t/tau)^(-2k/(k-1)), tau = V / (Cd A c0 Psi), and
    # T/T0 = (P/P0)^((k-1)/k); argon k = 5/3 (monatomic ideal gas)
    r = argon_run
    assert r.converged, r.message
    k = 5.0 / 3.0
    m = 0.039948
    c0 = math.sqrt(k * R * 300.0 / m)
    psi = (2.0 / (k + 1.0)) ** ((k + 1.0) / (2.0 * (k - 1.0)))
    tau = VESSEL.volume_m3 / (1.0 * 0.25 * math.pi * 0.01 ** 2 * c0 * psi)
    p_exact = 2e5 * (1.0 + 0.5 * (k - 1.0) * r.time / tau) ** (-2.0 * k / (k - 1.0))
    np.testing.assert_allclose(r.pressure, p_exact, rtol=5e-3)
    t_exact = 300.0 * (r.pressure / 2e5) ** ((k - 1.0) / k)
    np.testing.assert_allclose(r.t_fluid, t_exact, rtol=5e-3)
    assert r.pressure[-1] <= 0.4e5 * 1.0001 and r.stop_reason == "end pressure"


def test_adiabatic_inside_keeps_the_wall_at_its_initial_temperature(argon_run):
    # zero fluid-side heat transfer: a wall with no heat in or out stays where it started
    np.testing.assert_allclose(argon_run.t_wall_gas, 300.0, atol=1e-9)


def test_thin_wall_with_large_heat_transfer_follows_the_gas():
    fluid = Fluid({"nitrogen": 1.0}, eos="PR")
    vessel = Vessel("vertical", 1.0, 2.0, 0.001)
    r = depressure(fluid, p0_pa=50e5, t0_k=300.0, vessel=vessel, orifices=Orifice(0.02, 0.8, 1e5),
                   end_time_s=600.0, end_pressure_pa=5e5, inside_heat_transfer=1e5)
    assert r.converged, r.message
    # 1 mm of steel holds 3.7 kJ/(m^2 K); with 1e5 W/(m^2 K) it follows the gas, lagging by at most the gas's
    # change over one time step (held below 1 K)
    np.testing.assert_allclose(r.t_wall_gas, r.t_fluid, atol=1.0)
    assert r.t_fluid.min() < 260.0   # and the gas did cool: the check is not trivial


@pytest.fixture(scope="module")
def gas_run():
    fluid = Fluid({"methane": 0.90, "ethane": 0.05, "propane": 0.02, "nitrogen": 0.02, "CO2": 0.01}, eos="PR")
    return depressure(fluid, p0_pa=80e5, t0_k=300.0, vessel=Vessel("horizontal", 1.5, 5.0, 0.025),
                      orifices=Orifice(0.025, 0.85, 1.2e5), heat_input=HeatInput("ambient", 293.15),
                      end_time_s=900.0, target_pressure_pa=api521_target_pressure_pa(90e5),
                      cold_limits=ColdLimits(mdmt_k=244.15, margin_k=5.0))


def test_mass_and_energy_balances_close(gas_run):
    r = gas_run
    assert r.converged, r.message
    assert r.mass_closure < 1e-6
    assert r.energy_closure < 1e-6
    # independently of the integrator's own bookkeeping: the released mass by the trapezoid rule on the recorded
    # flow matches the inventory drop to the accuracy of the time steps
    released = np.trapezoid(r.mass_flow, r.time)
    assert released == pytest.approx(r.inventory[0] - r.inventory[-1], rel=2e-3)


def test_summary_extremes_and_target(gas_run):
    r = gas_run
    assert r.peak_mass_flow.value == pytest.approx(r.mass_flow.max())
    assert r.peak_mass_flow.time_s == 0.0
    i = int(np.argmin(r.t_wall_gas))
    assert r.min_wall_gas_t.value == r.t_wall_gas[i] and r.min_wall_gas_t.pressure_pa == r.pressure[i]
    # API 521 common basis: min(690 kPa g, 50 % of 90 bar g) + 1 atm
    assert r.target_pressure_pa == pytest.approx(690e3 + 101325.0)
    assert r.time_to_target_s is not None
    j = int(np.argmax(r.pressure <= r.target_pressure_pa))
    assert r.time[j - 1] <= r.time_to_target_s <= r.time[j]
    assert r.target_met == (r.time_to_target_s <= 900.0)
    # the valve outlet (letdown to the back pressure) is colder than the vessel at the same moment
    vessel_t = np.interp(r.valve_time, r.time, r.t_fluid)
    assert np.all(r.valve_outlet_t <= vessel_t + 1e-6)
    assert r.outcome in (Outcome.PASS, Outcome.MARGIN_ERODED, Outcome.FAIL)
    d = r.to_dict()
    assert len(d["time"]) == len(r.time) and d["outcome"] == r.outcome.value


def test_screening_uses_the_coldest_metal_and_outlet(gas_run):
    r = gas_run
    coldest = min(r.min_wall_gas_t.value, r.min_valve_outlet_t.value)
    assert r.outcome == (Outcome.FAIL if coldest < 244.15 else
                         Outcome.MARGIN_ERODED if coldest < 249.15 else Outcome.PASS)
    texts = " ".join(f.message for f in r.findings)
    assert "bara" in " ".join(f.condition for f in r.findings)   # the coincident pressure is named
    assert texts


def test_a_failed_step_stops_the_run_and_is_not_screened(monkeypatch):
    original = Contents.evaluate

    def failing(self, N, U, tw_gas, tw_liq):
        st = original(self, N, U, tw_gas, tw_liq)
        if st.p_pa < 30e5:
            raise StepFailedError("forced failure for the test")
        return st

    monkeypatch.setattr(Contents, "evaluate", failing)
    fluid = Fluid({"methane": 1.0}, eos="PR")
    r = depressure(fluid, p0_pa=50e5, t0_k=300.0, vessel=VESSEL, orifices=Orifice(0.02, 0.8, 1e5), end_time_s=600.0,
                   cold_limits=ColdLimits(mdmt_k=100.0))   # a limit every state would pass
    assert not r.converged
    assert r.outcome is Outcome.NOT_SCREENED
    assert "forced failure" in r.message and "Not screened" in r.message
    assert r.pressure[-1] >= 30e5


def test_two_phase_inventory_with_a_liquid_level():
    fluid = Fluid({"propane": 0.7, "n-butane": 0.3}, eos="PR")
    vessel = Vessel("horizontal", 1.2, 4.0, 0.015)
    with pytest.raises(InputError, match="liquid_level"):
        depressure(fluid, p0_pa=20e5, t0_k=300.0, vessel=vessel, orifices=Orifice(0.02, 0.8, 1.2e5),
                   liquid_level_m=0.5)   # 20 bar, 300 K is liquid: a level needs two phases
    r = depressure(fluid, p0_pa=7e5, t0_k=300.0, vessel=vessel, orifices=Orifice(0.02, 0.8, 1.2e5),
                   liquid_level_m=0.5, end_time_s=600.0, heat_input="ambient")
    assert r.converged, r.message
    assert np.all(np.isfinite(r.t_wall_liquid)) and np.all(r.liquid_level > 0.0)
    assert r.liquid_level[0] == pytest.approx(0.5, rel=1e-6)
    assert r.t_liquid[-1] < 290.0       # boiling off chills the liquid
    assert r.mass_closure < 1e-6 and r.energy_closure < 1e-6


@pytest.mark.parametrize("kwargs,field", [
    ({"orifices": Orifice(0.02, 0.8, 60e5)}, "back_pressure"),
    ({"model": "fast"}, "model"),
    ({"wall_nodes": 0}, "wall_nodes"),
    ({"end_pressure_pa": 0.5e5}, "end_pressure"),
    ({"heat_input": "sunshine"}, "heat_input"),
    ({"wall_material": "cheese"}, "wall_material"),
    ({"p0_pa": -1.0}, "p0"),
])
def test_bad_input_names_the_field(kwargs, field):
    fluid = Fluid({"methane": 1.0}, eos="PR")
    args = {"p0_pa": 50e5, "t0_k": 300.0, "vessel": VESSEL, "orifices": Orifice(0.02, 0.8, 1e5)}
    args.update(kwargs)
    with pytest.raises(InputError) as exc:
        depressure(fluid, **args)
    assert exc.value.field == field


def test_vessel_and_orifice_checks():
    with pytest.raises(InputError, match="orientation"):
        Vessel("diagonal", 1.0, 2.0, 0.01)
    with pytest.raises(InputError, match="wall_thickness"):
        Vessel("vertical", 1.0, 2.0, 0.6)
    with pytest.raises(InputError, match="discharge_coefficient"):
        Orifice(0.02, 1.5, 1e5)
    v = Vessel("horizontal", 2.0, 3.0, 0.02)
    # half full horizontal: half the shell and one end's area wetted (geometry)
    half = v.liquid_volume_m3(1.0)
    assert half == pytest.approx(0.5 * v.volume_m3)
    assert v.wetted_area_m2(half) == pytest.approx(math.pi * 1.0 * 3.0 + math.pi * 1.0 ** 2)
