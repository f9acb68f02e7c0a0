"""The generic cubic: closed forms, derivatives, and the compiled kernels against the numpy reference.

Constants below are model inputs for self-consistency checks (not check values): methane, ethane,
nitrogen critical data as tabulated by Poling, Prausnitz and O'Connell, The Properties of Gases and
Liquids, 5th ed. (2001), App. A.
"""
from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from jtcheck.thermo.eos import EOS, R, cubic_models
from jtcheck.thermo.models.cubic import kernels as _kernels
from jtcheck.thermo.models.cubic.mixture import make_mixture
from jtcheck.thermo.models.cubic.properties import (
    cubic_roots,
    fugacity_derivatives,
    ln_phi,
    phase_identification_parameter,
    phase_properties,
)

TCS = [190.56, 305.32, 126.20]
PCS = [45.99e5, 48.72e5, 33.98e5]
OMEGAS = [0.011, 0.099, 0.037]
MWS = [0.01604, 0.03007, 0.02801]
# Aly-Lee coefficients (J/mol/K, K): model inputs only
CP = ([33.3, 40.3, 29.1], [79.9, 134.2, 8.5], [2087.0, 1655.5, 1681.0], [41.6, 73.2, 0.03], [992.0, 752.9, 530.0])
KIJ = np.array([[0.0, 0.003, 0.03], [0.003, 0.0, 0.05], [0.03, 0.05, 0.0]])


def mixture(eos=EOS.PR, kij=KIJ):
    return make_mixture(eos, ("methane", "ethane", "nitrogen"), TCS, PCS, OMEGAS, MWS, kij, [0.0] * 3, CP)


def test_van_der_waals_residual_enthalpy_has_the_closed_form():
    """For van der Waals (d1 = d2 = 0, a independent of T) H_R = R T (Z - 1) - a / v."""
    mix = make_mixture(EOS.VDW, ("methane",), [190.56], [45.99e5], [0.011], [0.016], [[0.0]], [0.0],
                       ([33.3], [79.9], [2087.0], [41.6], [992.0]))
    T, P = 250.0, 50e5
    pp = phase_properties(mix, T, P, [1.0])
    a = 27.0 / 64.0 * (R * 190.56) ** 2 / 45.99e5
    assert pp.h_res == pytest.approx(R * T * (pp.Z - 1.0) - a / pp.v, rel=1e-12)
    # and S_R = R ln(Z - B) (the attraction term does not depend on T)
    b = (R * 190.56) / (8.0 * 45.99e5)
    assert pp.s_res == pytest.approx(R * math.log(pp.Z - b * P / (R * T)), rel=1e-12)


def test_cubic_roots_satisfy_the_equation_of_state():
    mix = mixture()
    T, P = 200.0, 30e5
    z = np.array([0.9, 0.07, 0.03])
    for phase in ("liquid", "vapour"):
        pp = phase_properties(mix, T, P, z, phase)
        v = pp.v
        from jtcheck.thermo.models.cubic.properties import attraction

        att = attraction(mix, T, z)
        p_eos = R * T / (v - att.b) - att.a / ((v + mix.d1 * att.b) * (v + mix.d2 * att.b))
        assert p_eos == pytest.approx(P, rel=1e-10)


@pytest.mark.parametrize("A, B", [(0.05, 0.004), (0.2, 0.02), (0.5, 0.05), (2.0, 0.2), (0.01, 0.001)])
@pytest.mark.parametrize("eos", cubic_models())
def test_cubic_roots_agree_with_numpy_roots(A, B, eos):
    d1, d2 = eos.constants.d1, eos.constants.d2
    u, w = d1 + d2, d1 * d2
    coeffs = [1.0, (u - 1) * B - 1, A + w * B * B - u * B - u * B * B, -(A * B + w * B * B + w * B ** 3)]
    r = np.roots(coeffs)
    real = np.sort(r[(np.abs(r.imag) < 1e-9) & (r.real > B)].real)
    lo, hi = cubic_roots(np.array([A]), np.array([B]), d1, d2)
    k_lo, k_hi = _kernels.cubic_roots(A, B, d1, d2)
    assert hi[0] == pytest.approx(real[-1], rel=1e-9) and k_hi == pytest.approx(real[-1], rel=1e-9)
    assert lo[0] == pytest.approx(real[0], rel=1e-9) and k_lo == pytest.approx(real[0], rel=1e-9)


@pytest.mark.parametrize("eos", cubic_models())
def test_kernel_ln_phi_matches_numpy_reference(eos):
    mix = mixture(eos)
    z = np.array([0.8, 0.15, 0.05])
    for T, P in [(150.0, 20e5), (250.0, 80e5), (400.0, 5e5)]:
        ref, Zr = ln_phi(mix, T, P, z)
        out = np.empty(3)
        Zk = _kernels.ln_phi(mix.kernel_params, T, P, z, 0, out)
        assert Zk == pytest.approx(float(Zr), rel=1e-12)
        np.testing.assert_allclose(out, ref, rtol=1e-11, atol=1e-12)
        props_k = _kernels.props(mix.kernel_params, T, P, z, 0)
        pp = phase_properties(mix, T, P, z)
        assert props_k[2] == pytest.approx(float(pp.h), rel=1e-10, abs=1e-8)
        assert props_k[3] == pytest.approx(float(pp.s), rel=1e-10, abs=1e-10)
        assert props_k[4] == pytest.approx(float(pp.cp), rel=1e-10)


@pytest.mark.parametrize("eos", [EOS.PR, EOS.SRK, EOS.RK])
def test_fugacity_derivatives_match_finite_differences(eos):
    mix = mixture(eos)
    z = np.array([0.7, 0.2, 0.1])
    T, P = 220.0, 40e5
    fd = fugacity_derivatives(mix, T, P, z)

    def lnphi_n(n):
        return ln_phi(mix, T, P, n / n.sum())[0]

    eps = 1e-6
    for j in range(3):
        dn = np.zeros(3)
        dn[j] = eps
        num = (lnphi_n(z + dn) - lnphi_n(z - dn)) / (2 * eps)
        np.testing.assert_allclose(fd.dn[:, j], num, rtol=1e-5, atol=1e-8)
    num_T = (ln_phi(mix, T + 1e-3, P, z)[0] - ln_phi(mix, T - 1e-3, P, z)[0]) / 2e-3
    np.testing.assert_allclose(fd.dT, num_T, rtol=1e-6, atol=1e-10)
    num_P = (ln_phi(mix, T, P + 10.0, z)[0] - ln_phi(mix, T, P - 10.0, z)[0]) / 20.0
    np.testing.assert_allclose(fd.dP, num_P, rtol=1e-6, atol=1e-14)


def test_residual_enthalpy_is_consistent_with_fugacity_temperature_derivative():
    """sum x_i d ln phi_i / dT = -H_R / (R T^2) (Gibbs-Helmholtz)."""
    mix = mixture()
    z = np.array([0.6, 0.3, 0.1])
    T, P = 260.0, 60e5
    fd = fugacity_derivatives(mix, T, P, z)
    h_res = float(phase_properties(mix, T, P, z).h_res)
    assert float(z @ fd.dT) == pytest.approx(-h_res / (R * T * T), rel=1e-10)


def test_heat_capacity_is_the_temperature_derivative_of_enthalpy():
    mix = mixture()
    z = np.array([0.85, 0.1, 0.05])
    T, P = 280.0, 70e5
    num = (phase_properties(mix, T + 1e-3, P, z).h - phase_properties(mix, T - 1e-3, P, z).h) / 2e-3
    assert float(phase_properties(mix, T, P, z).cp) == pytest.approx(float(num), rel=1e-7)
    num_s = (phase_properties(mix, T + 1e-3, P, z).s - phase_properties(mix, T - 1e-3, P, z).s) / 2e-3
    assert float(phase_properties(mix, T, P, z).cp / T) == pytest.approx(float(num_s), rel=1e-7)


def test_phase_identification_parameter_sides():
    """PIP > 1 for a compressed liquid, < 1 for a gas (Venkatarathnam and Oellrich 2011)."""
    mix = mixture()
    z = np.array([0.0, 1.0, 0.0]) * 0.999 + 0.0005
    assert phase_identification_parameter(mix, 200.0, 50e5, z) > 1.0
    assert phase_identification_parameter(mix, 400.0, 1e5, z) < 1.0


@settings(max_examples=60, deadline=None)
@given(T=st.floats(120.0, 600.0), P=st.floats(1e4, 3e7), x1=st.floats(0.01, 0.98))
def test_gibbs_duhem_holds_for_fugacity_derivatives(T, P, x1):
    """sum_i x_i d ln phi_i / d n_j = 0 (Gibbs-Duhem) at any state."""
    mix = mixture()
    z = np.array([x1, (1 - x1) * 0.7, (1 - x1) * 0.3])
    fd = fugacity_derivatives(mix, T, P, z)
    np.testing.assert_allclose(z @ fd.dn, 0.0, atol=1e-9 * max(1.0, np.abs(fd.dn).max()))
