"""Dry ice (solid CO2) below the CO2 triple point: sublimation line, sublimation enthalpy, letdown outlet.

Check values and their sources:

* Normal sublimation temperature of CO2, 194.686 K at 101.325 kPa: Span and Wagner, J. Phys. Chem. Ref.
  Data 25 (1996) 1509 (194.7 K in the CRC Handbook of Chemistry and Physics; 194.67 K measured by
  Giauque and Egan, J. Chem. Phys. 5 (1937) 45).
* Triple point 216.592 K, 0.51795 MPa: Span and Wagner (1996), via jtcheck.letdown.throttle.
* Sublimation enthalpy 6030 cal/mol at 194.67 K: Giauque and Egan, J. Chem. Phys. 5 (1937) 45,
  doi:10.1063/1.1749929 (abstract); 6030 x 4.184 J/cal = 25 229.5 J/mol (the NIST Chemistry WebBook
  lists 25.2 kJ/mol near 195 K).
* Liquid and vapour enthalpies of pure CO2 for the solid-fraction cross-check: CoolProp HEOS::CO2
  (Span and Wagner 1996 EOS), vapour evaluated below the triple point with the gas phase imposed.
"""
from __future__ import annotations

import dataclasses
import functools
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from jtcheck.errors import InputError
from jtcheck.letdown.throttle import CO2_TRIPLE_P_PA, CO2_TRIPLE_T_K, letdown
from jtcheck.screening.co2_solids import (
    SUBLIMATION_T_MIN_K,
    SolidCO2Outlet,
    co2_solid_enthalpy_j_per_mol,
    co2_solid_outlet,
    co2_sublimation_pressure_pa,
    co2_sublimation_temperature_k,
    screen_co2_solids,
    sublimation_enthalpy_j_per_mol,
)
from jtcheck.thermo.fluid import Fluid

#: Span and Wagner (1996): normal sublimation temperature [K] at 101 325 Pa.
T_SUB_1ATM_K = 194.686
#: Giauque and Egan (1937): 6030 cal/mol at 194.67 K, thermochemical calorie 4.184 J.
DH_SUB_GIAUQUE_EGAN_J_PER_MOL = 6030.0 * 4.184

MIXTURE = {"carbon dioxide": 0.955, "nitrogen": 0.03, "methane": 0.015}


@functools.cache
def pure_co2(eos: str = "PR", volume_translation: bool = False) -> Fluid:
    return Fluid({"carbon dioxide": 1.0}, eos=eos, volume_translation=volume_translation)


@functools.cache
def mixture(volume_translation: bool = False) -> Fluid:
    return Fluid(MIXTURE, eos="PR", volume_translation=volume_translation)


def coolprop_solid_fraction(t_in_k: float, p_in_pa: float, t_out_k: float, p_out_pa: float) -> float:
    """Solid fraction of pure CO2 let down from (t_in, p_in) to solid + vapour at (t_out, p_out).

    Energy balance with CoolProp HEOS::CO2 for the inlet liquid and the outlet vapour (gas phase imposed:
    the EOS is metastable below the triple point) and the solid as vapour minus the Giauque and Egan
    (1937) sublimation enthalpy: s = (h_vap - h_in) / dh_sub.
    """
    cp = pytest.importorskip("CoolProp.CoolProp")
    state = cp.AbstractState("HEOS", "CO2")
    state.update(cp.PT_INPUTS, p_in_pa, t_in_k)
    assert state.phase() == cp.iphase_liquid
    h_in = state.hmolar()
    state.specify_phase(cp.iphase_gas)
    state.update(cp.PT_INPUTS, p_out_pa, t_out_k)
    return (state.hmolar() - h_in) / DH_SUB_GIAUQUE_EGAN_J_PER_MOL


# ---------------------------------------------------------------------------------------------
# sublimation line and sublimation enthalpy
# ---------------------------------------------------------------------------------------------

def test_normal_sublimation_temperature():
    # Span and Wagner (1996): 194.686 K at 101.325 kPa (CRC Handbook: 194.7 K)
    assert co2_sublimation_temperature_k(101325.0) == pytest.approx(T_SUB_1ATM_K, abs=0.05)
    assert co2_sublimation_pressure_pa(T_SUB_1ATM_K) == pytest.approx(101325.0, rel=2e-4)


def test_sublimation_line_ends_at_the_triple_point():
    # Span and Wagner (1996): eq. 3.12 is anchored at T_t = 216.592 K, p_t = 0.51795 MPa
    assert co2_sublimation_pressure_pa(CO2_TRIPLE_T_K) == pytest.approx(CO2_TRIPLE_P_PA, rel=1e-14)
    assert co2_sublimation_temperature_k(CO2_TRIPLE_P_PA) == pytest.approx(CO2_TRIPLE_T_K, abs=1e-9)


def test_sublimation_functions_vectorise_and_invert():
    t = np.linspace(SUBLIMATION_T_MIN_K, CO2_TRIPLE_T_K, 25).reshape(5, 5)
    p = co2_sublimation_pressure_pa(t)
    assert isinstance(p, np.ndarray) and p.shape == (5, 5)
    assert np.all(np.diff(p.ravel()) > 0.0)
    np.testing.assert_allclose(co2_sublimation_temperature_k(p), t, rtol=0, atol=1e-8)
    assert isinstance(co2_sublimation_pressure_pa(190.0), float)
    assert isinstance(co2_sublimation_temperature_k(1e5), float)


@pytest.mark.parametrize("t_k", [149.0, 216.7, math.nan])
def test_sublimation_pressure_rejects_temperatures_out_of_range(t_k):
    with pytest.raises(InputError) as err:
        co2_sublimation_pressure_pa(t_k)
    assert err.value.field == "t_k" and "216.592" in err.value.message


@pytest.mark.parametrize("p_pa", [5.2e5, 500.0, -1.0, math.inf])
def test_sublimation_temperature_rejects_pressures_off_the_line(p_pa):
    with pytest.raises(InputError) as err:
        co2_sublimation_temperature_k(p_pa)
    assert err.value.field == "p_pa" and "triple point" in err.value.message


def test_sublimation_enthalpy_at_the_normal_sublimation_point():
    # Giauque and Egan (1937): 6030 cal/mol = 25.23 kJ/mol at 194.67 K (NIST WebBook: 25.2 kJ/mol)
    dh = sublimation_enthalpy_j_per_mol(194.67)
    assert dh == pytest.approx(DH_SUB_GIAUQUE_EGAN_J_PER_MOL, rel=0.02)


def test_sublimation_enthalpy_is_clausius_clapeyron_with_the_eos_vapour_volume():
    # independent evaluation: numerical dp/dT of the public p_sub(T) and the vapour volume from Z
    from jtcheck.thermo.eos import R
    from jtcheck.thermo.models.cubic.properties import ln_phi

    t, dt = 180.0, 1e-3
    dpdt = (co2_sublimation_pressure_pa(t + dt) - co2_sublimation_pressure_pa(t - dt)) / (2 * dt)
    p = co2_sublimation_pressure_pa(t)
    fluid = pure_co2()
    _, z = ln_phi(fluid.mixture, t, p, [1.0], "vapour")
    v_solid = 0.0440098 / 1562.0
    expected = t * (float(z) * R * t / p - v_solid) * dpdt
    assert sublimation_enthalpy_j_per_mol(t) == pytest.approx(expected, rel=1e-7)
    arr = sublimation_enthalpy_j_per_mol(np.array([160.0, 180.0, 200.0]))
    assert arr.shape == (3,) and arr[1] == pytest.approx(expected, rel=1e-7)


def test_sublimation_enthalpy_needs_a_fluid_with_co2():
    with pytest.raises(InputError) as err:
        sublimation_enthalpy_j_per_mol(190.0, Fluid({"methane": 1.0}))
    assert err.value.field == "fluid_for_vapour_volume"


# ---------------------------------------------------------------------------------------------
# letdown outlet
# ---------------------------------------------------------------------------------------------

def test_liquid_co2_let_down_to_one_bar_forms_dry_ice():
    fluid = pure_co2()
    ld = letdown(fluid, 60e5, 290.0, 1e5)
    assert ld.converged and ld.inlet_phase == "liquid"
    r = screen_co2_solids(fluid, ld)
    assert isinstance(r, SolidCO2Outlet)
    assert r.converged and r.applies and r.forms_solid
    # Span and Wagner (1996): 194.686 K at 1 atm; at 1 bar the line gives 194.53 K
    assert r.t_out_k == pytest.approx(T_SUB_1ATM_K, abs=0.2)
    assert r.t_out_k == pytest.approx(co2_sublimation_temperature_k(1e5), abs=1e-9)
    assert r.t_eos_k == ld.t_out and r.t_eos_k < r.t_out_k - 5.0      # the fluid-only EOS is too cold
    assert 0.0 < r.solid_fraction < 1.0 and r.vapour_fraction == pytest.approx(1.0 - r.solid_fraction)
    assert "Span and Wagner" in r.method and "energy balance" in r.method
    # CoolProp HEOS::CO2 + Giauque and Egan (1937) dh_sub: s = 0.313; PR gives 0.297 here because its
    # liquid enthalpy 14 K below the critical temperature is about 370 J/mol off
    s_ref = coolprop_solid_fraction(290.0, 60e5, r.t_out_k, 1e5)
    assert r.solid_fraction == pytest.approx(s_ref, abs=0.02)


def test_colder_liquid_co2_at_one_atmosphere_matches_coolprop_closely():
    fluid = pure_co2()
    r = co2_solid_outlet(fluid, fluid.flash_pt(250.0, 60e5).h, 101325.0)
    assert r.converged and r.forms_solid
    assert r.t_out_k == pytest.approx(T_SUB_1ATM_K, abs=0.05)   # Span and Wagner (1996)
    # CoolProp HEOS::CO2 + Giauque and Egan (1937): s = 0.480
    assert r.solid_fraction == pytest.approx(coolprop_solid_fraction(250.0, 60e5, r.t_out_k, 101325.0), rel=0.01)


def test_warm_co2_gas_forms_no_solid():
    fluid = pure_co2()
    ld = letdown(fluid, 20e5, 300.0, 1e5)
    r = screen_co2_solids(fluid, ld)
    assert r.converged and r.applies and not r.forms_solid
    assert r.solid_fraction == 0.0 and r.t_out_k == pytest.approx(ld.t_out)
    assert r.t_out_k > r.t_frost_k


def test_mixture_deposits_solid_below_the_pure_co2_sublimation_temperature():
    fluid = mixture()
    ld = letdown(fluid, 60e5, 270.0, 1e5)
    assert ld.converged and ld.inlet_phase == "liquid"
    r = screen_co2_solids(fluid, ld)
    assert r.converged and r.applies and r.forms_solid
    t_pure = co2_sublimation_temperature_k(1e5)
    assert t_pure - 3.0 < r.t_out_k < t_pure          # CO2 partial pressure below 1 bar
    assert r.t_out_k < r.t_frost_k < t_pure
    assert 0.0 < r.solid_fraction < 0.955
    y = dict(zip(r.component_ids, r.vapour_composition, strict=True))
    assert y["nitrogen"] > 0.03 and y["carbon dioxide"] < 0.955
    assert sum(r.vapour_composition) == pytest.approx(1.0)
    # near-ideal vapour at 1 bar: the outlet is close to the sublimation temperature at the CO2 partial pressure
    assert r.t_out_k == pytest.approx(co2_sublimation_temperature_k(y["carbon dioxide"] * 1e5), abs=0.1)
    # mass balance of CO2: z = s + (1 - s) y
    assert r.solid_fraction + (1 - r.solid_fraction) * y["carbon dioxide"] == pytest.approx(0.955, abs=1e-12)
    # energy balance with an independent flash of the outlet vapour
    h_v = Fluid(dict(y), eos="PR").flash_pt(r.t_out_k, 1e5).h
    h_s = co2_solid_enthalpy_j_per_mol(fluid, r.t_out_k, 1e5)
    s = r.solid_fraction
    assert (1 - s) * h_v + s * h_s == pytest.approx(ld.h, abs=1e-3)


def test_volume_translation_is_applied_consistently():
    # the translation moves inlet and outlet enthalpies alike; the outlet barely changes
    plain = screen_co2_solids(mixture(), letdown(mixture(), 60e5, 270.0, 1e5))
    shifted = screen_co2_solids(mixture(True), letdown(mixture(True), 60e5, 270.0, 1e5))
    assert shifted.converged and shifted.forms_solid
    assert shifted.t_out_k == pytest.approx(plain.t_out_k, abs=0.01)
    assert shifted.solid_fraction == pytest.approx(plain.solid_fraction, abs=2e-3)
    pure = pure_co2(volume_translation=True)
    r = screen_co2_solids(pure, letdown(pure, 60e5, 250.0, 1e5))
    assert r.converged and r.t_out_k == pytest.approx(co2_sublimation_temperature_k(1e5), abs=1e-9)
    h_v = pure.flash_pt(r.t_out_k, 1e5).h
    assert (1 - r.solid_fraction) * h_v + r.solid_fraction * r.h_solid_j_per_mol == pytest.approx(r.h_in_j_per_mol,
                                                                                                  abs=1e-3)


def test_other_cubic_gives_a_similar_answer():
    srk = pure_co2("SRK")
    r = co2_solid_outlet(srk, srk.flash_pt(250.0, 60e5).h, 101325.0)
    assert r.converged and r.t_out_k == pytest.approx(T_SUB_1ATM_K, abs=0.05)
    assert sublimation_enthalpy_j_per_mol(194.67, srk) == pytest.approx(DH_SUB_GIAUQUE_EGAN_J_PER_MOL, rel=0.02)


def test_lean_co2_gas_is_screened_and_stays_clear(lean_gas):
    # 2 % CO2: frost point at 1 bar near 156 K (CO2 partial pressure 2 kPa); the outlet is far warmer
    ld = letdown(lean_gas, 100e5, 313.15, 1e5)
    r = screen_co2_solids(lean_gas, ld)
    assert r.converged and r.applies and not r.forms_solid
    assert SUBLIMATION_T_MIN_K < r.t_frost_k < 160.0 and r.t_out_k == pytest.approx(ld.t_out)


def test_trace_co2_has_no_frost_point_in_range():
    gas = Fluid({"methane": 0.999, "carbon dioxide": 0.001})
    r = screen_co2_solids(gas, letdown(gas, 100e5, 313.15, 1e5))
    assert r.converged and not r.applies and not r.forms_solid and math.isnan(r.t_frost_k)
    assert "below 150 K" in r.message


def test_no_co2_or_pressure_above_the_triple_point_does_not_apply():
    methane = Fluid({"methane": 1.0})
    ld = letdown(methane, 100e5, 300.0, 1e5)
    r = screen_co2_solids(methane, ld)
    assert r.converged and not r.applies and not r.forms_solid and r.t_out_k == pytest.approx(ld.t_out)
    fluid = pure_co2()
    ld = letdown(fluid, 60e5, 290.0, 6e5)
    r = screen_co2_solids(fluid, ld)
    assert r.converged and not r.applies and not r.forms_solid and "triple-point pressure" in r.message


def test_states_outside_the_model_are_reported_not_computed():
    fluid = pure_co2()
    # enthalpy below that of the solid: the whole stream would freeze
    r = co2_solid_outlet(fluid, -40000.0, 1e5)
    assert not r.converged and math.isnan(r.t_out_k) and "freeze" in r.message
    # outlet pressure below the sublimation pressure at 150 K with a cold feed
    r = co2_solid_outlet(fluid, fluid.flash_pt(290.0, 60e5).h, 500.0)
    assert not r.converged and math.isnan(r.t_out_k) and "150 K" in r.message
    # a liquid would coexist with solid and vapour (CO2 + propane): not modelled
    rich = Fluid({"carbon dioxide": 0.9, "propane": 0.1})
    r = screen_co2_solids(rich, letdown(rich, 60e5, 280.0, 1e5))
    assert not r.converged and math.isnan(r.t_out_k) and "vapour-liquid-solid" in r.message


def test_failed_letdown_is_passed_on():
    fluid = pure_co2()
    ld = dataclasses.replace(letdown(fluid, 60e5, 290.0, 1e5), h=math.nan, t_out=math.nan, converged=False,
                             message="inlet flash failed")
    r = screen_co2_solids(fluid, ld)
    assert not r.converged and "inlet flash failed" in r.message


def test_bad_inputs_name_the_field():
    fluid = pure_co2()
    with pytest.raises(InputError) as err:
        co2_solid_outlet(fluid, -11000.0, -1.0)
    assert err.value.field == "p_out" and "greater than 0" in err.value.message
    with pytest.raises(InputError) as err:
        co2_solid_outlet(fluid, math.nan, 1e5)
    assert err.value.field == "h_in"
    with pytest.raises(InputError) as err:
        co2_solid_outlet("CO2", -11000.0, 1e5)
    assert err.value.field == "fluid"
    with pytest.raises(InputError) as err:
        screen_co2_solids(fluid, letdown(fluid, [60e5, 50e5], 290.0, 1e5))
    assert err.value.field == "letdown_result"
    with pytest.raises(InputError) as err:
        screen_co2_solids(mixture(), letdown(fluid, 60e5, 290.0, 1e5))
    assert err.value.field == "letdown_result"


# ---------------------------------------------------------------------------------------------
# property: the energy balance closes
# ---------------------------------------------------------------------------------------------

@settings(max_examples=25, deadline=None)
@given(t_in=st.floats(min_value=220.0, max_value=290.0), p_out=st.floats(min_value=0.05e5, max_value=5.0e5))
def test_energy_balance_closes_for_liquid_co2(t_in, p_out):
    fluid = pure_co2()
    h_in = fluid.flash_pt(t_in, 60e5).h
    r = co2_solid_outlet(fluid, h_in, p_out)
    assert r.converged and r.forms_solid
    assert r.t_out_k == pytest.approx(co2_sublimation_temperature_k(p_out), abs=1e-9)
    s = r.solid_fraction
    assert 0.0 < s < 1.0
    h_v = fluid.flash_pt(r.t_out_k, p_out).h            # independent: the compiled flash of the vapour
    h_s = co2_solid_enthalpy_j_per_mol(fluid, r.t_out_k, p_out)
    assert (1 - s) * h_v + s * h_s == pytest.approx(h_in, abs=1e-3)


@settings(max_examples=10, deadline=None)
@given(t_in=st.floats(min_value=230.0, max_value=280.0))
def test_energy_balance_closes_for_the_liquid_mixture(t_in):
    fluid = mixture()
    h_in = fluid.flash_pt(t_in, 60e5).h
    r = co2_solid_outlet(fluid, h_in, 1e5)
    assert r.converged and r.forms_solid
    y = dict(zip(r.component_ids, r.vapour_composition, strict=True))
    h_v = Fluid(y, eos="PR").flash_pt(r.t_out_k, 1e5).h
    h_s = co2_solid_enthalpy_j_per_mol(fluid, r.t_out_k, 1e5)
    s = r.solid_fraction
    assert (1 - s) * h_v + s * h_s == pytest.approx(h_in, abs=1e-3)
