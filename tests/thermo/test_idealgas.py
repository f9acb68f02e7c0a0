"""Specification of the ideal-gas heat capacity, enthalpy and entropy (Aly-Lee form)."""
from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.integrate import quad, quad_vec

from jtcheck.errors import InputError
from jtcheck.thermo.components import all_components, find_component
from jtcheck.thermo.idealgas import (
    T_REF,
    IdealGasCoefficients,
    cp_ig,
    h_ig,
    ideal_gas_coefficients,
    s_ig,
)

R = 8.314462618
COMPONENTS = all_components()
COEFFS = ideal_gas_coefficients(COMPONENTS)
ABCDE = (COEFFS.A, COEFFS.B, COEFFS.C, COEFFS.D, COEFFS.E)


def _coeffs(*names: str) -> IdealGasCoefficients:
    return ideal_gas_coefficients(find_component(n) for n in names)


# --- reference values --------------------------------------------------------------------------------

# Ideal-gas isobaric heat capacity [J/(mol K)] of the reference EOS in CoolProp 8.0.0
# (AbstractState("HEOS", fluid).cp0molar()); recomputed live by the slow test below.
COOLPROP_8_CP0 = {
    ("Methane", "methane"): [(100.0, 33.275929), (200.0, 33.513042), (298.15, 35.708473), (450.0, 43.505211),
                             (600.0, 52.491923)],
    ("CarbonDioxide", "carbon dioxide"): [(220.0, 33.345973), (298.15, 37.140798), (500.0, 44.632127),
                                          (800.0, 51.440049), (1000.0, 54.312633)],
    ("Nitrogen", "nitrogen"): [(70.0, 29.10276), (150.0, 29.105478), (298.15, 29.125268), (600.0, 30.109102),
                               (1000.0, 32.699959)],
    ("Water", "water"): [(280.0, 33.514329), (373.15, 34.045193), (600.0, 36.324887), (1000.0, 41.267298)],
}


@pytest.mark.parametrize(("fluid", "name"), list(COOLPROP_8_CP0), ids=lambda v: str(v))
def test_cp_matches_coolprop_8_ideal_gas_part_within_0_3_percent(fluid, name):
    coeffs = _coeffs(name)
    for T, cp0 in COOLPROP_8_CP0[(fluid, name)]:
        assert coeffs.cp(T)[0] == pytest.approx(cp0, rel=3e-3), f"T = {T} K"


@pytest.mark.slow
def test_tabulated_coolprop_values_are_what_coolprop_8_computes():
    CP = pytest.importorskip("CoolProp.CoolProp")
    if CP.get_global_param_string("version") != "8.0.0":
        pytest.skip("reference values were taken with CoolProp 8.0.0")
    for (fluid, _), values in COOLPROP_8_CP0.items():
        state = CP.AbstractState("HEOS", fluid)
        for T, cp0 in values:
            state.update(CP.DmolarT_INPUTS, 1e-8, T)
            assert state.cp0molar() == pytest.approx(cp0, rel=1e-6)


@pytest.mark.parametrize(
    ("name", "cp_298"),
    [  # Poling, Prausnitz and O'Connell (2001), The Properties of Gases and Liquids, 5th ed., App. A,
       # ideal-gas Cp at 298.15 K [J/(mol K)], as tabulated in chemicals 1.5.2 (PolingDatabank.tsv).
       # A different data source from the fitted one: the two agree to about 0.4 % (propane).
        ("methane", 35.69), ("ethane", 52.47), ("propane", 73.60), ("carbon dioxide", 37.13),
        ("nitrogen", 29.12), ("water", 33.58),
    ],
)
def test_cp_at_298_k_matches_poling_appendix_a(name, cp_298):
    assert _coeffs(name).cp(298.15)[0] == pytest.approx(cp_298, rel=5e-3)


def test_monatomic_gas_has_cp_of_five_halves_r():
    coeffs = _coeffs("argon", "helium", "neon")
    for T in (20.0, 300.0, 1500.0):
        assert coeffs.cp(T) == pytest.approx(2.5 * R, rel=1e-9)
        assert coeffs.h(T) == pytest.approx(2.5 * R * (T - T_REF), rel=1e-9, abs=1e-9)
        assert coeffs.s(T) == pytest.approx(2.5 * R * math.log(T / T_REF), rel=1e-9, abs=1e-12)


# --- closed forms against numerical integration ------------------------------------------------------

@pytest.mark.parametrize("T", [60.0, 150.0, 250.0, 400.0, 700.0, 1000.0, 1500.0])
def test_enthalpy_equals_integral_of_cp(T):
    expected, _ = quad_vec(COEFFS.cp, T_REF, T, epsabs=0.0, epsrel=1e-13, norm="max")
    assert COEFFS.h(T) == pytest.approx(expected, rel=1e-9)


@pytest.mark.parametrize("T", [60.0, 150.0, 250.0, 400.0, 700.0, 1000.0, 1500.0])
def test_entropy_equals_integral_of_cp_over_t(T):
    expected, _ = quad_vec(lambda t: COEFFS.cp(t) / t, T_REF, T, epsabs=0.0, epsrel=1e-13, norm="max")
    assert COEFFS.s(T) == pytest.approx(expected, rel=1e-9)


@pytest.mark.parametrize("name", ["methane", "water", "hydrogen", "n-dodecane"])
def test_closed_forms_equal_scalar_quadrature_per_component(name):
    coeffs = _coeffs(name)
    for T in (90.0, 500.0):
        h, _ = quad(lambda t: coeffs.cp(t)[0], T_REF, T, epsabs=0.0, epsrel=1e-12)
        s, _ = quad(lambda t: coeffs.cp(t)[0] / t, T_REF, T, epsabs=0.0, epsrel=1e-12)
        assert coeffs.h(T)[0] == pytest.approx(h, rel=1e-9)
        assert coeffs.s(T)[0] == pytest.approx(s, rel=1e-9)


def test_enthalpy_and_entropy_vanish_at_the_reference_temperature():
    assert np.all(np.abs(COEFFS.h(T_REF)) < 1e-9)
    assert np.all(np.abs(COEFFS.s(T_REF)) < 1e-12)


@settings(max_examples=50, deadline=None)
@given(t1=st.floats(20.0, 3000.0), t2=st.floats(20.0, 3000.0))
def test_enthalpy_and_entropy_increase_with_temperature(t1, t2):
    lo, hi = min(t1, t2), max(t1, t2)
    assert np.all(COEFFS.h(hi) >= COEFFS.h(lo))
    assert np.all(COEFFS.s(hi) >= COEFFS.s(lo))


def test_derivative_of_enthalpy_is_cp():
    T, dT = 321.0, 1e-3
    dh = (COEFFS.h(T + dT) - COEFFS.h(T - dT)) / (2 * dT)
    assert dh == pytest.approx(COEFFS.cp(T), rel=1e-7)


# --- shapes, equivalence, robustness -----------------------------------------------------------------

def test_plain_functions_equal_the_coefficient_methods():
    for T in (120.0, 298.15, 873.0):
        assert np.array_equal(cp_ig(T, *ABCDE), COEFFS.cp(T))
        assert h_ig(T, *ABCDE) == pytest.approx(COEFFS.h(T), rel=1e-12, abs=1e-9)
        assert s_ig(T, *ABCDE) == pytest.approx(COEFFS.s(T), rel=1e-12, abs=1e-12)


def test_array_temperature_gives_one_row_per_temperature():
    T = np.array([150.0, 300.0, 600.0, 900.0])
    n = len(COMPONENTS)
    for func in (COEFFS.cp, COEFFS.h, COEFFS.s):
        out = func(T)
        assert out.shape == (4, n)
        for k, t in enumerate(T):
            assert out[k] == pytest.approx(func(float(t)), rel=1e-12, abs=1e-12)
    assert cp_ig(T, *ABCDE).shape == (4, n)
    assert h_ig(T, *ABCDE).shape == (4, n)
    assert s_ig(T, *ABCDE).shape == (4, n)


def test_scalar_temperature_gives_one_value_per_component():
    assert COEFFS.cp(300.0).shape == (len(COMPONENTS),)
    assert COEFFS.h(np.float64(300.0)).shape == (len(COMPONENTS),)
    assert COEFFS.s(np.array(300.0)).shape == (len(COMPONENTS),)


@pytest.mark.parametrize("T", [0.5, 5.0, 1e4])
def test_extreme_temperatures_do_not_overflow(T):
    # pytest turns numpy overflow warnings into errors
    for func in (COEFFS.cp, COEFFS.h, COEFFS.s):
        assert np.all(np.isfinite(func(T)))


def test_large_reduced_temperature_arguments_are_safe():
    A, B, C, D, E = (np.array([v]) for v in (30.0, 50.0, 3000.0, 20.0, 3000.0))
    T = 50.0  # C/T = E/T = 60
    assert np.isfinite(cp_ig(T, A, B, C, D, E)).all()
    assert h_ig(T, A, B, C, D, E)[0] == pytest.approx(
        quad(lambda t: cp_ig(t, A, B, C, D, E)[0], T_REF, T, epsrel=1e-12)[0], rel=1e-9)
    assert s_ig(T, A, B, C, D, E)[0] == pytest.approx(
        quad(lambda t: cp_ig(t, A, B, C, D, E)[0] / t, T_REF, T, epsrel=1e-12)[0], rel=1e-9)


@pytest.mark.parametrize("bad", [0.0, -10.0, float("nan"), float("inf"), np.array([300.0, -1.0]), np.ones((2, 2))])
def test_non_positive_or_non_finite_temperature_is_refused(bad):
    with pytest.raises(InputError) as info:
        COEFFS.h(bad)
    assert info.value.field == "T"


def test_coefficient_arrays_are_read_only_and_in_component_order():
    coeffs = _coeffs("methane", "water")
    assert coeffs.ids == ("methane", "water")
    assert coeffs.A[1] == find_component("water").cp_a
    with pytest.raises(ValueError):
        coeffs.A[0] = 1.0


def test_no_components_is_refused():
    with pytest.raises(InputError):
        ideal_gas_coefficients([])
