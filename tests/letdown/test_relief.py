"""Relief-valve cold screening: relieving pressure, isentropic nozzle flow, outlet temperature.

Sources beside the values:

* ideal-gas critical flow: P*/P0 = (2/(k+1))^(k/(k-1)) and T*/T0 = 2/(k+1) (API Standard 520 Part I,
  10th ed. 2020, critical-flow gas equations; any gas-dynamics text, e.g. Shapiro, *The Dynamics and
  Thermodynamics of Compressible Fluid Flow*, 1953, ch. 4): 0.5283 and 0.8333 for k = 1.4;
* choked single-phase flow reaches the speed of sound at the throat (same texts);
* real-gas isentrope of methane from CoolProp's reference equation of state (Setzmann and Wagner
  1991), evaluated by the same G maximisation in this file (measured with CoolProp 8.0.0);
* relieving pressure = set + overpressure (fraction of the set gauge pressure) + atmospheric: common
  practice from ASME BPVC Section VIII and API 520 Part I; 95 barg + 10 % = 104.5 barg is arithmetic.
"""
from __future__ import annotations

import json
import math

import numpy as np
import pytest
from conftest import LEAN_GAS
from scipy.optimize import minimize_scalar

from jtcheck import Fluid, letdown
from jtcheck.errors import InputError
from jtcheck.letdown.relief import (
    NozzleFlow,
    ReliefValveResult,
    back_pressure_pa,
    downstream_of_relief,
    nozzle_flow,
    relief_valve_case,
    relieving_pressure_pa,
)
from jtcheck.thermo.flash import FlashResult

P_ATM = 101325.0
BAR = 1e5


def ideal_ratio(k: float) -> float:
    """Ideal-gas critical pressure ratio (2/(k+1))^(k/(k-1))."""
    return (2.0 / (k + 1.0)) ** (k / (k - 1.0))


@pytest.fixture(scope="module")
def nitrogen():
    return Fluid({"nitrogen": 1.0}, eos="PR")


@pytest.fixture(scope="module")
def methane():
    return Fluid({"methane": 1.0}, eos="PR")


# -- pressures ---------------------------------------------------------------------------------

def test_ideal_formula_gives_the_textbook_numbers_for_k_1_4():
    assert ideal_ratio(1.4) == pytest.approx(0.5283, abs=1e-4)   # textbook 0.528
    assert 2.0 / (1.4 + 1.0) == pytest.approx(0.8333, abs=1e-4)  # textbook 0.833


def test_relieving_pressure_95_barg_plus_10_percent_is_104_5_barg():
    p1 = relieving_pressure_pa(95 * BAR + P_ATM, 0.10)
    assert (p1 - P_ATM) / BAR == pytest.approx(104.5, rel=1e-12)


@pytest.mark.parametrize("fraction, expected_barg", [(0.0, 95.0), (0.16, 110.2), (0.21, 114.95)])
def test_relieving_pressure_other_overpressures(fraction, expected_barg):
    assert (relieving_pressure_pa(95 * BAR + P_ATM, fraction) - P_ATM) / BAR == pytest.approx(expected_barg)


def test_relieving_pressure_uses_the_given_atmosphere():
    # a site at altitude: 10 barg set on an 85 kPa atmosphere -> 11 barg relieving
    p1 = relieving_pressure_pa(10 * BAR + 85e3, 0.10, p_atm_pa=85e3)
    assert p1 == pytest.approx(11 * BAR + 85e3)


def test_back_pressure_is_superimposed_plus_built_up():
    assert back_pressure_pa(2 * BAR, 0.5 * BAR) == pytest.approx(2.5 * BAR)
    assert back_pressure_pa(P_ATM, 0.0) == P_ATM


# -- nozzle: near-ideal gas --------------------------------------------------------------------

@pytest.mark.parametrize("p0", [2 * BAR, 5 * BAR])
def test_critical_pressure_ratio_of_nitrogen_matches_the_ideal_gas_formula(nitrogen, p0):
    r = nozzle_flow(nitrogen, p0, 300.0, 0.2 * p0)
    assert r.converged and r.choked
    assert r.isentropic_exponent == pytest.approx(1.40, abs=0.01)
    assert r.critical_pressure_ratio == pytest.approx(ideal_ratio(r.isentropic_exponent), rel=5e-3)
    assert r.critical_pressure_ratio == pytest.approx(0.528, rel=5e-3)
    assert r.ideal_critical_pressure_ratio == pytest.approx(ideal_ratio(r.isentropic_exponent), rel=1e-12)
    assert r.p_throat_pa == r.p_critical_pa == pytest.approx(r.critical_pressure_ratio * p0)


@pytest.mark.parametrize("p0", [2 * BAR, 5 * BAR])
def test_throat_temperature_of_nitrogen_matches_2_over_k_plus_1(nitrogen, p0):
    r = nozzle_flow(nitrogen, p0, 300.0, 0.2 * p0)
    k = r.isentropic_exponent
    assert r.t_throat_k / 300.0 == pytest.approx(2.0 / (k + 1.0), rel=5e-3)
    assert r.t_throat_k == pytest.approx(300.0 * 0.8333, rel=5e-3)
    assert r.ideal_critical_temperature_ratio == pytest.approx(2.0 / (k + 1.0))
    assert r.critical_temperature_ratio == pytest.approx(r.t_throat_k / 300.0)


@pytest.mark.parametrize("composition, p0", [({"nitrogen": 1.0}, 5 * BAR), ({"methane": 1.0}, 100 * BAR),
                                             (LEAN_GAS, 100 * BAR)])
def test_choked_single_phase_throat_is_at_the_speed_of_sound(composition, p0):
    r = nozzle_flow(Fluid(composition, kij=0), p0, 300.0, 1 * BAR)
    assert r.converged and r.choked and r.throat_phase in ("vapour", "supercritical")
    assert r.velocity_m_per_s == pytest.approx(r.throat_speed_of_sound_m_per_s, rel=1e-4)


def test_volume_translated_fluid_is_consistent_at_the_throat():
    # with the Peneloux shift on enthalpy and volume alike, dh = v dP still holds on the isentrope,
    # so choked flow must still reach the (translated) speed of sound
    gas = Fluid({"methane": 1.0}, volume_translation=True)
    r = nozzle_flow(gas, 100 * BAR, 300.0, 1 * BAR)
    assert r.converged and r.choked
    assert r.velocity_m_per_s == pytest.approx(r.throat_speed_of_sound_m_per_s, rel=1e-4)


def test_mass_flux_is_density_times_velocity(nitrogen):
    r = nozzle_flow(nitrogen, 5 * BAR, 300.0, 1 * BAR)
    assert r.mass_flux_kg_per_m2_s == pytest.approx(r.throat_density_kg_per_m3 * r.velocity_m_per_s)
    # kinetic energy = enthalpy drop on a mass basis
    throat = nitrogen.flash_pt(r.t_throat_k, r.p_throat_pa)
    dh = (r.stagnation_h_j_per_mol - throat.h) / r.molar_mass_kg_per_mol
    assert 0.5 * r.velocity_m_per_s ** 2 == pytest.approx(dh, rel=1e-6)


# -- nozzle: dense gas against CoolProp ----------------------------------------------------------

def coolprop_critical_ratio(fluid_name: str, p0: float, t0: float) -> tuple[float, float, str]:
    """(P*/P0, T* [K], CoolProp version) by the same G = rho sqrt(2 (h0 - h)) maximisation on CoolProp's EOS."""
    coolprop = pytest.importorskip("CoolProp")
    PropsSI = pytest.importorskip("CoolProp.CoolProp").PropsSI

    s0 = PropsSI("Smass", "P", p0, "T", t0, fluid_name)
    h0 = PropsSI("Hmass", "P", p0, "T", t0, fluid_name)

    def flux(p: float) -> float:
        h = PropsSI("Hmass", "P", p, "Smass", s0, fluid_name)
        rho = PropsSI("Dmass", "P", p, "Smass", s0, fluid_name)
        return rho * math.sqrt(2.0 * max(h0 - h, 0.0))

    ps = np.linspace(p0, 0.1 * p0, 41)[1:]
    i = int(np.argmax([flux(p) for p in ps]))
    hi = p0 if i == 0 else ps[i - 1]
    opt = minimize_scalar(lambda p: -flux(p), bounds=(ps[i + 1], hi), method="bounded",
                          options={"xatol": 1e-7 * p0})
    t_star = PropsSI("T", "P", opt.x, "Smass", s0, fluid_name)
    return opt.x / p0, t_star, coolprop.__version__


def test_dense_methane_critical_ratio_agrees_with_coolprop(methane):
    # measured with CoolProp 8.0.0: P*/P0 = 0.5328, T* = 254.2 K; PR here: 0.5309, 253.9 K
    ratio_cp, t_star_cp, version = coolprop_critical_ratio("Methane", 100 * BAR, 300.0)
    r = nozzle_flow(methane, 100 * BAR, 300.0, 1 * BAR)
    assert r.converged and r.choked
    assert r.critical_pressure_ratio == pytest.approx(ratio_cp, rel=0.02), f"CoolProp {version}"
    assert r.t_throat_k == pytest.approx(t_star_cp, abs=3.0), f"CoolProp {version}"
    # the real-gas ratio differs from the ideal formula here by more than in the dilute case
    assert abs(r.critical_pressure_ratio - r.ideal_critical_pressure_ratio) > 0.01


# -- not choked, two-phase, liquid ---------------------------------------------------------------

def test_not_choked_when_the_back_pressure_is_high(methane):
    p0 = 100 * BAR
    r = nozzle_flow(methane, p0, 300.0, 0.9 * p0)
    assert r.converged and not r.choked
    assert r.p_throat_pa == 0.9 * p0
    assert r.p_critical_pa < r.p_throat_pa
    choked = nozzle_flow(methane, p0, 300.0, 0.2 * p0)
    assert r.mass_flux_kg_per_m2_s < choked.mass_flux_kg_per_m2_s
    assert r.velocity_m_per_s < r.throat_speed_of_sound_m_per_s
    assert r.t_throat_k > choked.t_throat_k
    assert "not choked" in r.message


def test_back_pressure_just_below_critical_is_choked(nitrogen):
    ref = nozzle_flow(nitrogen, 5 * BAR, 300.0, 1 * BAR)
    r = nozzle_flow(nitrogen, 5 * BAR, 300.0, ref.p_critical_pa * 0.999)
    assert r.choked and r.p_throat_pa == pytest.approx(ref.p_critical_pa, rel=1e-4)
    r = nozzle_flow(nitrogen, 5 * BAR, 300.0, ref.p_critical_pa * 1.01)
    assert not r.choked and r.mass_flux_kg_per_m2_s == pytest.approx(ref.mass_flux_kg_per_m2_s, rel=1e-3)


def test_two_phase_stagnation_uses_homogeneous_density_and_no_ideal_ratio(rich_gas):
    r = nozzle_flow(rich_gas, 105 * BAR, 300.0, 3 * BAR)
    assert r.converged and r.choked
    assert r.stagnation_phase == "two-phase" and r.throat_phase == "two-phase"
    assert 0.0 < r.throat_vapor_fraction < 1.0
    assert math.isnan(r.isentropic_exponent) and math.isnan(r.ideal_critical_pressure_ratio)
    assert math.isnan(r.throat_speed_of_sound_m_per_s)
    assert any("two-phase" in w for w in r.warnings)
    # homogeneous density between the phase densities, from the phases' molar volumes
    throat = rich_gas.flash_ps(r.p_throat_pa, r.stagnation_s_j_per_mol_k, r.t_throat_k)
    from jtcheck.thermo.properties import phase_state

    liq = phase_state(rich_gas.mixture, throat.T, throat.P, throat.x, "liquid")
    vap = phase_state(rich_gas.mixture, throat.T, throat.P, throat.y, "vapour")
    v = (throat.beta * (throat.y @ rich_gas.mixture.mws) / vap.density
         + (1 - throat.beta) * (throat.x @ rich_gas.mixture.mws) / liq.density)
    assert r.throat_density_kg_per_m3 == pytest.approx(rich_gas.molar_mass / v, rel=1e-9)
    assert vap.density < r.throat_density_kg_per_m3 < liq.density
    d = r.to_dict()
    assert d["isentropic_exponent"] is None and d["ideal_critical_pressure_ratio"] is None


def test_subcooled_liquid_chokes_near_its_saturation_pressure():
    # HEM: a subcooled liquid's flux rises until it starts to flash (API 520 Part I, Annex C behaviour)
    propane = Fluid({"propane": 1.0})
    r = nozzle_flow(propane, 20 * BAR, 300.0, 1 * BAR)
    assert r.converged and r.choked and r.stagnation_phase == "liquid"
    assert math.isnan(r.ideal_critical_pressure_ratio)
    psat_ish = propane.flash_ps(r.p_critical_pa * 0.98, r.stagnation_s_j_per_mol_k, 300.0)
    assert psat_ish.phase == "two-phase"   # just below the critical pressure the flow flashes


def test_highly_subcooled_liquid_extends_the_scan_below_0_1_p0():
    # propane at 100 bar, 230 K: saturation near 1 bar, so G rises until about 0.01 p0
    propane = Fluid({"propane": 1.0})
    r = nozzle_flow(propane, 100 * BAR, 230.0, 0.5 * BAR)
    assert r.converged and r.choked and r.critical_pressure_ratio < 0.01
    assert propane.flash_ps(r.p_critical_pa * 0.98, r.stagnation_s_j_per_mol_k, r.t_throat_k).phase == "two-phase"
    high = nozzle_flow(propane, 100 * BAR, 230.0, 2 * BAR)
    assert high.converged and not high.choked and high.p_throat_pa == 2 * BAR
    assert math.isnan(high.p_critical_pa) and high.to_dict()["p_critical_pa"] is None
    assert any("not determined" in w for w in high.warnings)


def test_cold_throat_below_a_triple_point_warns():
    # CO2 triple point 216.592 K (Span and Wagner 1996); 5 bar, 240 K expands to about 205 K at the throat
    co2 = Fluid({"carbon dioxide": 1.0})
    r = nozzle_flow(co2, 5 * BAR, 240.0, 1 * BAR)
    assert r.converged and r.t_throat_k < 216.592
    assert any("triple point" in w for w in r.warnings)
    warm = nozzle_flow(co2, 10 * BAR, 250.0, 1 * BAR)
    assert warm.t_throat_k > 216.592 and not any("triple point" in w for w in warm.warnings)


# -- the whole case ------------------------------------------------------------------------------

def test_downstream_is_the_isenthalpic_letdown_from_the_relieving_state(lean_gas):
    case = relief_valve_case(lean_gas, 95 * BAR + P_ATM, 0.10, 300.0, 2 * BAR, 1 * BAR)
    assert isinstance(case, ReliefValveResult) and isinstance(case.nozzle, NozzleFlow)
    assert case.converged
    assert case.p_relieving_pa == pytest.approx(104.5 * BAR + P_ATM)
    assert case.p_back_pa == pytest.approx(3 * BAR)
    ref = letdown(lean_gas, case.p_relieving_pa, 300.0, case.p_back_pa)
    assert case.t_downstream_k == pytest.approx(ref.t_out, abs=1e-9)
    assert case.downstream.h == pytest.approx(case.nozzle.stagnation_h_j_per_mol, abs=1e-9)
    assert downstream_of_relief(lean_gas, case.p_relieving_pa, 300.0, case.p_back_pa).t_out == \
        pytest.approx(ref.t_out, abs=1e-9)
    assert case.t_downstream_k < 300.0
    assert case.outlet_limit_k is None and case.below_outlet_limit is None and math.isnan(case.outlet_margin_k)


def test_limit_margins_have_the_right_sign(lean_gas):
    base = relief_valve_case(lean_gas, 95 * BAR + P_ATM, 0.10, 300.0, 2 * BAR, 1 * BAR)
    t = base.t_downstream_k
    case = relief_valve_case(lean_gas, 95 * BAR + P_ATM, 0.10, 300.0, 2 * BAR, 1 * BAR,
                             outlet_limit_k=t + 5.0, header_limit_k=t - 5.0)
    assert case.outlet_margin_k == pytest.approx(-5.0) and case.below_outlet_limit is True
    assert case.header_margin_k == pytest.approx(5.0) and case.below_header_limit is False
    assert "outlet piping" in case.message and "flare header" not in case.message


def test_case_to_dict_is_plain_json(rich_gas):
    case = relief_valve_case(rich_gas, 95 * BAR + P_ATM, 0.10, 300.0, 2 * BAR, 1 * BAR, header_limit_k=227.0)
    d = case.to_dict()
    text = json.dumps(d, allow_nan=False)
    assert json.loads(text)["nozzle"]["choked"] is True
    assert d["outlet_limit_k"] is None and d["outlet_margin_k"] is None and d["below_outlet_limit"] is None
    assert d["downstream"]["t_out"] == pytest.approx(case.t_downstream_k)
    assert isinstance(d["warnings"], list)


# -- failures are reported, never a plausible number ---------------------------------------------

def test_failed_isentrope_flash_gives_not_converged_and_no_numbers(monkeypatch):
    gas = Fluid({"nitrogen": 1.0})

    def broken_ps(p_pa, s, t_guess_k=None):
        z = gas.zs
        return FlashResult(T=math.nan, P=p_pa, beta=math.nan, phase="unknown", z=z, x=z, y=z, h=math.nan,
                           s=math.nan, converged=False, message="forced failure")

    monkeypatch.setattr(gas, "flash_ps", broken_ps)
    r = nozzle_flow(gas, 5 * BAR, 300.0, 1 * BAR)
    assert not r.converged and "forced failure" in r.message and r.choked is None
    assert math.isnan(r.mass_flux_kg_per_m2_s) and math.isnan(r.t_throat_k) and math.isnan(r.p_critical_pa)
    assert r.to_dict()["t_throat_k"] is None
    case = relief_valve_case(gas, 5 * BAR + P_ATM, 0.1, 300.0, P_ATM, 0.0, outlet_limit_k=200.0)
    assert not case.converged and case.downstream.converged and "nozzle" in case.message
    assert math.isnan(case.t_throat_k)


# -- input errors ------------------------------------------------------------------------------

@pytest.mark.parametrize("kwargs, field", [
    (dict(overpressure_fraction=-0.1), "overpressure_fraction"),
    (dict(overpressure_fraction=1.5), "overpressure_fraction"),
    (dict(overpressure_fraction=float("nan")), "overpressure_fraction"),
    (dict(set_pressure_pa=0.5 * P_ATM), "set_pressure_pa"),
    (dict(p_atm_pa=1e3), "p_atm_pa"),
    (dict(superimposed_back_pressure_pa=200 * BAR), "superimposed_back_pressure_pa"),
    (dict(superimposed_back_pressure_pa=-1.0), "superimposed_back_pressure_pa"),
    (dict(built_up_back_pressure_pa=150 * BAR), "built_up_back_pressure_pa"),
    (dict(built_up_back_pressure_pa=-1.0), "built_up_back_pressure_pa"),
    (dict(t_relieving_k=-5.0), "t_relieving_k"),
    (dict(outlet_limit_k=float("nan")), "outlet_limit_k"),
    (dict(header_limit_k=0.0), "header_limit_k"),
])
def test_bad_case_input_names_the_field(lean_gas, kwargs, field):
    args = dict(set_pressure_pa=95 * BAR + P_ATM, overpressure_fraction=0.10, t_relieving_k=300.0,
                superimposed_back_pressure_pa=2 * BAR, built_up_back_pressure_pa=1 * BAR)
    args.update(kwargs)
    with pytest.raises(InputError) as exc:
        relief_valve_case(lean_gas, **args)
    assert exc.value.field == field


def test_bad_nozzle_and_downstream_input_names_the_field(lean_gas):
    with pytest.raises(InputError) as exc:
        nozzle_flow(lean_gas, 10 * BAR, 300.0, 11 * BAR)
    assert exc.value.field == "p_back_pa"
    with pytest.raises(InputError) as exc:
        nozzle_flow(lean_gas, 10 * BAR, 300.0, 10 * BAR)
    assert exc.value.field == "p_back_pa"
    with pytest.raises(InputError) as exc:
        nozzle_flow(lean_gas, -1.0, 300.0, 1 * BAR)
    assert exc.value.field == "p0_pa"
    with pytest.raises(InputError) as exc:
        nozzle_flow(lean_gas, 10 * BAR, 3000.0, 1 * BAR)
    assert exc.value.field == "t0_k"
    with pytest.raises(InputError) as exc:
        nozzle_flow({"methane": 1.0}, 10 * BAR, 300.0, 1 * BAR)
    assert exc.value.field == "fluid"
    with pytest.raises(InputError) as exc:
        downstream_of_relief(lean_gas, 10 * BAR, 300.0, 12 * BAR)
    assert exc.value.field == "p_back_pa"
    with pytest.raises(InputError) as exc:
        back_pressure_pa(P_ATM, -1.0)
    assert exc.value.field == "built_up_pa"
