"""Joule-Thomson coefficient, isentropic exponent and speed of sound from the EOS derivatives."""
from __future__ import annotations

import math

import numpy as np
import pytest
from CoolProp.CoolProp import PropsSI

from jtcheck import Fluid
from jtcheck.thermo.eos import R
from jtcheck.thermo.properties import phase_state


@pytest.mark.parametrize("name", ["nitrogen", "methane", "carbon dioxide"])
def test_ideal_gas_limit_gives_cp_over_cv_and_the_ideal_speed_of_sound(name):
    """At 1 Pa the fluid is an ideal gas: k = cp/cv = cp/(cp - R), w = sqrt(k R T / M) (exact limits)."""
    f = Fluid({name: 1.0})
    st = phase_state(f.mixture, 300.0, 1.0, f.zs)
    k_ig = float(st.cp / (st.cp - R))
    assert float(st.isentropic_exponent) == pytest.approx(k_ig, rel=1e-6)
    assert float(st.speed_of_sound) == pytest.approx(math.sqrt(k_ig * R * 300.0 / f.molar_mass), rel=1e-6)
    assert abs(float(st.jt_coefficient)) > 0.0


@pytest.mark.parametrize("name, coolprop_name", [("nitrogen", "Nitrogen"), ("methane", "Methane")])
def test_speed_of_sound_near_coolprop_reference_eos(name, coolprop_name):
    """CoolProp 8.0.0 reference EOS (Span et al. 2000 for N2; Setzmann and Wagner 1991 for CH4) at
    300 K, 50 bar; the cubic's derivative properties are good to a few percent in a light gas."""
    f = Fluid({name: 1.0})
    ours = float(phase_state(f.mixture, 300.0, 50e5, f.zs).speed_of_sound)
    ref = PropsSI("A", "T", 300.0, "P", 50e5, coolprop_name)
    assert ours == pytest.approx(ref, rel=0.04)


def test_properties_broadcast_over_arrays():
    f = Fluid({"methane": 0.9, "ethane": 0.1})
    T = np.array([250.0, 300.0, 350.0])
    st = phase_state(f.mixture, T, 50e5, f.zs)
    assert st.jt_coefficient.shape == (3,)
    # the Joule-Thomson coefficient of a light gas falls as it warms (common practice; see
    # any JT table, e.g. the CoolProp reference EOS for methane)
    assert st.jt_coefficient[0] > st.jt_coefficient[1] > st.jt_coefficient[2] > 0.0


def test_volume_translation_changes_density_not_phase_split():
    f = Fluid({"propane": 1.0}, volume_translation=True)
    plain = phase_state(f.mixture, 250.0, 10e5, f.zs, "liquid")
    shifted = phase_state(f.mixture, 250.0, 10e5, f.zs, "liquid", volume_shift=True)
    # CoolProp 8.0.0 (Lemmon et al. 2009 propane EOS): saturated-liquid-like density at 250 K, 10 bar
    ref = PropsSI("D", "T", 250.0, "P", 10e5, "Propane")
    assert abs(float(shifted.density) - ref) < abs(float(plain.density) - ref)
