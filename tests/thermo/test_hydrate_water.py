"""Water in hydrate screening: water vapour pressure, Bukacek's water content, UNIFAC water activity (issue 13)."""
from __future__ import annotations

import math

import pytest
from CoolProp.CoolProp import PropsSI
from thermo.unifac import UNIFAC

from jtcheck.errors import InputError
from jtcheck.thermo.hydrate import water_content as wc
from jtcheck.thermo.hydrate.inhibitors import MAX_MASS_PERCENT, mass_percent_for_activity, mole_fraction, water_activity

PSIA = 6894.757293168361


@pytest.mark.parametrize("t_k", [273.16, 280.0, 300.0, 350.0, 420.0])
def test_vapour_pressure_over_liquid_against_coolprop(t_k):
    # CoolProp's water (IAPWS-95), saturated liquid
    assert wc.water_vapour_pressure(t_k) == pytest.approx(PropsSI("P", "T", t_k, "Q", 0, "Water"), rel=2e-4)


@pytest.mark.parametrize(("t_k", "p_pa"), [(250.0, 76.0), (260.0, 195.8), (270.0, 470.1)])
def test_vapour_pressure_over_ice(t_k, p_pa):
    # sublimation pressure of ice: Wagner et al., J. Phys. Chem. Ref. Data 40 (2011) 043103, values of its table
    # as commonly quoted (76.0 Pa at 250 K, 195.8 Pa at 260 K, 470.1 Pa at 270 K; from memory)
    assert wc.water_vapour_pressure(t_k) == pytest.approx(p_pa, rel=3e-3)


def test_bukacek_against_the_water_content_chart():
    # about 60 lb/MMscf at 1000 psia and 100 degF (McKetta-Wehe chart, GPSA Engineering Data Book fig. 20-4;
    # read from memory, within about 5 %)
    w = wc.saturated_water_content(1000 * PSIA, (100 - 32) / 1.8 + 273.15) / wc.LB_PER_MMSCF_MG_PER_SM3
    assert w == pytest.approx(60.0, rel=0.05)


def test_dew_point_inverts_the_content():
    w = wc.saturated_water_content(50e5, 270.0)
    assert wc.water_dew_point(w, 50e5) == pytest.approx(270.0, abs=1e-6)


@pytest.mark.parametrize(("p", "t", "field"), [(0.01e6, 300.0, "p"), (100e6, 300.0, "p"), (5e6, 200.0, "t")])
def test_outside_bukacek_range_names_the_field(p, t, field):
    with pytest.raises(InputError) as err:
        wc.saturated_water_content(p, t)
    assert err.value.field == field


_GROUPS = {"methanol": {15: 1}, "ethanol": {1: 1, 2: 1, 14: 1}, "MEG": {2: 2, 14: 2}, "DEG": {2: 3, 25: 1, 14: 2},
           "TEG": {2: 4, 25: 2, 14: 2}}


@pytest.mark.parametrize("inhibitor", list(_GROUPS))
@pytest.mark.parametrize("w", [10.0, 25.0, 40.0])
@pytest.mark.parametrize("t_k", [255.0, 275.0, 295.0])
def test_water_activity_against_the_thermo_library(inhibitor, w, t_k):
    # original UNIFAC of the thermo library (0.6.1, version=0: Hansen et al. 1991 parameters), same groups
    x = mole_fraction(w, inhibitor)
    ref = UNIFAC.from_subgroups(T=t_k, xs=[1 - x, x], chemgroups=[{16: 1}, _GROUPS[inhibitor]], version=0)
    assert water_activity(w, inhibitor, t_k) == pytest.approx((1 - x) * ref.gammas()[0], rel=1e-9)


def test_mass_percent_for_activity_inverts_it():
    a = water_activity(23.0, "methanol", 270.0)
    assert mass_percent_for_activity(math.log(a), "methanol", 270.0) == pytest.approx(23.0, abs=1e-6)
    assert mass_percent_for_activity(0.0, "MEG", 270.0) == 0.0
    too_much = math.log(water_activity(MAX_MASS_PERCENT["MEG"], "MEG", 270.0)) - 0.01
    assert math.isnan(mass_percent_for_activity(too_much, "MEG", 270.0))


@pytest.mark.parametrize(("w", "inhibitor", "field"), [(70.0, "methanol", "inhibitor_mass_percent"),
                                                       (10.0, "glycerol", "inhibitor"), (10.0, "MEG", "t")])
def test_water_activity_input_errors(w, inhibitor, field):
    with pytest.raises(InputError) as err:
        water_activity(w, inhibitor, 100.0 if field == "t" else 270.0)
    assert err.value.field == field
