"""Methanol lost to the gas and to a hydrocarbon liquid (jtcheck.thermo.hydrate.losses).

The vapour pressure is checked against CoolProp 8.0.0 (methanol of de Reuck and Craven 1993); the activity
coefficients against the thermo library 0.6.1 (tests/thermo/test_hydrate_inhibitors.py); the rest are the
relations of the gamma-phi equilibrium itself.  No published methanol-in-gas distribution data were at hand
this session (see the issue-13 report).
"""
from __future__ import annotations

import math

import pytest
from CoolProp.CoolProp import PropsSI

from jtcheck import Fluid
from jtcheck.thermo.hydrate import inhibitors as inh
from jtcheck.thermo.hydrate.losses import inhibitor_losses, methanol_vapour_pressure

LEAN = {"methane": 0.9, "ethane": 0.05, "propane": 0.03, "n-butane": 0.02}
RICH = {"methane": 0.7, "propane": 0.1, "n-hexane": 0.1, "n-heptane": 0.1}


@pytest.mark.parametrize(("t_k", "rel"), [(233.15, 0.045), (253.15, 0.02), (273.15, 0.007), (293.15, 0.003),
                                          (313.15, 0.003)])
def test_methanol_vapour_pressure_against_coolprop(t_k, rel):
    assert methanol_vapour_pressure(t_k) == pytest.approx(PropsSI("P", "T", t_k, "Q", 0, "Methanol"), rel=rel)


def test_gas_loss_is_the_gamma_phi_equilibrium_at_low_pressure():
    # at 2 bar the gas is nearly ideal: y P = x gamma P_sat within the small fugacity and Poynting corrections
    loss = inhibitor_losses(Fluid({"methane": 1.0}), 2e5, 278.15, 20.0, "methanol")
    x = inh.mole_fraction(20.0, "methanol")
    ideal = x * math.exp(inh.ln_gamma_inhibitor(20.0, "methanol", 278.15)) * methanol_vapour_pressure(278.15) / 2e5
    # (the fugacity coefficient of methanol in methane at 2 bar is about 0.96, the Poynting factor 1.003)
    assert loss.computed and loss.gas_mol_per_mol == pytest.approx(ideal, rel=0.06) and loss.gas_mol_per_mol > ideal
    assert loss.liquid_kg_per_kg == 0.0 and loss.gas_mass_fraction == pytest.approx(1.0)


def test_gas_loss_rises_with_the_dose_and_the_temperature():
    gas = Fluid(LEAN)
    low = inhibitor_losses(gas, 50e5, 270.0, 10.0, "methanol").gas_kg_per_kg
    high = inhibitor_losses(gas, 50e5, 270.0, 30.0, "methanol").gas_kg_per_kg
    warm = inhibitor_losses(gas, 50e5, 285.0, 10.0, "methanol").gas_kg_per_kg
    assert 0.0 < low < high and warm > low


def test_a_hydrocarbon_liquid_takes_methanol_too():
    loss = inhibitor_losses(Fluid(RICH), 50e5, 270.0, 25.0, "methanol")
    assert loss.computed and 0.0 < loss.liquid_mass_fraction < 1.0 and loss.liquid_kg_per_kg > 0.0
    # mass balance of the two parts per kg of feed
    assert loss.kg_per_kg_feed == pytest.approx(loss.gas_mass_fraction * loss.gas_kg_per_kg
                                                + loss.liquid_mass_fraction * loss.liquid_kg_per_kg)


@pytest.mark.parametrize(("args", "words"), [
    ((50e5, 220.0, 20.0, "methanol"), "outside"),
    ((400e5, 270.0, 20.0, "methanol"), "above"),
    ((50e5, 270.0, 20.0, "MEG"), "not included"),
])
def test_outside_the_range_no_loss_is_given(args, words):
    loss = inhibitor_losses(Fluid(LEAN), *args)
    assert not loss.computed and math.isnan(loss.kg_per_kg_feed) and words in loss.note
