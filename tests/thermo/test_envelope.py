"""Saturation points and the phase envelope (jtcheck.thermo.envelope).

Three kinds of check: invariants every envelope point must satisfy (equal fugacities, the feed just
stable on the outside and unstable on the inside, a flash on either side agreeing), a limit the
model reproduces by construction (a nearly pure fluid's critical point is the component's Tc, Pc),
and an independent implementation of the same equation of state (thermo 0.6.1).
"""
from __future__ import annotations

import math

import numpy as np
import pytest
from conftest import LEAN_GAS, RICH_GAS
from hypothesis import given, settings
from hypothesis import strategies as st

from jtcheck import Fluid
from jtcheck.errors import InputError
from jtcheck.thermo.envelope import (
    bubble_point_p,
    bubble_point_t,
    dew_point_p,
    dew_point_t,
    phase_envelope,
)
from jtcheck.thermo.flash import flash_pt
from jtcheck.thermo.models.cubic.properties import ln_phi
from jtcheck.thermo.stability import stability_test

GASES = {"lean gas": LEAN_GAS, "rich gas": RICH_GAS}


@pytest.fixture(scope="module", params=list(GASES))
def gas_envelope(request):
    fluid = Fluid(GASES[request.param], eos="PR", kij=0)
    return fluid, phase_envelope(fluid.mixture, fluid.zs)


@pytest.fixture(scope="module")
def lean():
    fluid = Fluid(LEAN_GAS, eos="PR", kij=0)
    return fluid, phase_envelope(fluid.mixture, fluid.zs)


def _low_dew_points(env):
    """Indices of dew points below the cricondentherm pressure (where dT/dP > 0 on the dew line)."""
    return [i for i in range(len(env)) if env.branch[i] == "dew" and env.p_pa[i] < env.cricondentherm[1]]


def _low_bubble_points(env):
    """Indices of bubble points below half the critical pressure."""
    return [i for i in range(len(env)) if env.branch[i] == "bubble" and env.p_pa[i] < 0.5 * env.critical[1]]


# ---------------------------------------------------------------------------------------------
# the envelope
# ---------------------------------------------------------------------------------------------

def test_envelope_closes_through_the_critical_point(gas_envelope):
    _, env = gas_envelope
    assert env.converged, env.message
    assert env.branch[0] == "dew" and env.branch[-1] == "bubble"
    assert env.p_pa[0] == pytest.approx(1e5) and env.p_pa[-1] == pytest.approx(1e5)
    assert env.critical is not None
    # one switch from dew to bubble, at the critical point
    switches = np.flatnonzero(env.branch[1:] != env.branch[:-1])
    assert switches.size == 1
    assert "Heidemann and Khalil" in env.critical_method


def test_every_point_has_equal_fugacities(gas_envelope):
    fluid, env = gas_envelope
    mix, z = fluid.mixture, fluid.zs
    for T, P, K, y in zip(env.t_k, env.p_pa, env.k_values, env.incipient, strict=True):
        lnphi_y, _ = ln_phi(mix, T, P, y, "gibbs")
        lnphi_z, _ = ln_phi(mix, T, P, z, "gibbs")
        assert np.max(np.abs(np.log(K) + lnphi_y - lnphi_z)) < 1e-8
        assert float(z @ K) == pytest.approx(1.0, abs=1e-8)
        np.testing.assert_allclose(y, z * K, atol=1e-9)


def test_cricondentherm_and_cricondenbar_bound_the_envelope(gas_envelope):
    _, env = gas_envelope
    t_ct, _ = env.cricondentherm
    _, p_cb = env.cricondenbar
    assert np.all(t_ct >= env.t_k[env.branch == "dew"])
    assert np.all(t_ct >= env.t_k)
    assert np.all(p_cb >= env.p_pa)
    assert env.critical[0] <= t_ct and env.critical[1] <= p_cb


def test_cricondentherm_is_the_highest_dew_temperature(gas_envelope):
    # refined by interpolation: within 0.01 K of the maximum of dew_point_t over pressure
    fluid, env = gas_envelope
    t_ct, p_ct = env.cricondentherm
    for f in (0.97, 1.0, 1.03):
        dp = dew_point_t(fluid.mixture, fluid.zs, p_ct * f, t_guess_k=t_ct)
        assert dp.converged, dp.message
        assert dp.t_k <= t_ct + 1e-3
    assert dew_point_t(fluid.mixture, fluid.zs, p_ct, t_guess_k=t_ct).t_k == pytest.approx(t_ct, abs=0.01)


def test_flash_above_cricondentherm_is_single_phase(gas_envelope):
    fluid, env = gas_envelope
    t_ct, p_ct = env.cricondentherm
    res = flash_pt(fluid.mixture, t_ct + 1.0, p_ct, fluid.zs)
    assert res.converged and res.phase == "vapour"


def test_flash_just_inside_the_dew_line_is_two_phase_mostly_vapour(gas_envelope):
    fluid, env = gas_envelope
    for i in _low_dew_points(env)[::4]:
        res = flash_pt(fluid.mixture, env.t_k[i] - 1.0, env.p_pa[i], fluid.zs)
        assert res.converged and res.phase == "two-phase", (env.t_k[i], env.p_pa[i])
        assert 0.97 < res.beta < 1.0


def test_flash_just_inside_the_bubble_line_is_two_phase_mostly_liquid(gas_envelope):
    fluid, env = gas_envelope
    for i in _low_bubble_points(env)[::4]:
        res = flash_pt(fluid.mixture, env.t_k[i] + 1.0, env.p_pa[i], fluid.zs)
        assert res.converged and res.phase == "two-phase"
        assert 0.0 < res.beta < 0.2


def test_saturation_functions_agree_with_the_envelope(gas_envelope):
    fluid, env = gas_envelope
    mix, z = fluid.mixture, fluid.zs
    for i in _low_dew_points(env)[1::3]:
        dp = dew_point_t(mix, z, env.p_pa[i])
        assert dp.converged and dp.kind == "dew", dp.message
        assert dp.t_k == pytest.approx(env.t_k[i], abs=0.05)
        dpp = dew_point_p(mix, z, env.t_k[i])
        assert dpp.converged, dpp.message
        assert dpp.p_pa == pytest.approx(env.p_pa[i], rel=1e-5)
    for i in _low_bubble_points(env)[::3]:
        bp = bubble_point_t(mix, z, env.p_pa[i])
        assert bp.converged and bp.kind == "bubble", bp.message
        assert bp.t_k == pytest.approx(env.t_k[i], abs=0.05)
        bpp = bubble_point_p(mix, z, env.t_k[i])
        assert bpp.converged, bpp.message
        assert bpp.p_pa == pytest.approx(env.p_pa[i], rel=1e-5)


# ---------------------------------------------------------------------------------------------
# limits and an independent implementation
# ---------------------------------------------------------------------------------------------

def test_nearly_pure_methane_critical_point_is_methanes():
    # A cubic EOS reproduces a pure component's Tc and Pc by construction (a and b are fitted to
    # them), so the critical point of 99.9 % methane must lie next to methane's data-file values.
    fluid = Fluid({"methane": 0.999, "ethane": 0.001}, eos="PR", kij=0)
    env = phase_envelope(fluid.mixture, fluid.zs)
    assert env.converged, env.message
    i = fluid.ids.index("methane")
    tc, pc = fluid.mixture.tcs[i], fluid.mixture.pcs[i]
    assert env.critical[0] == pytest.approx(tc, abs=1.0)
    assert env.critical[1] == pytest.approx(pc, abs=1e5)


def _thermo_flasher(mix):
    """thermo's FlashVL with PRMIX and our mixture's own Tc, Pc, omega and kij = 0."""
    from thermo import (
        PRMIX,
        CEOSGas,
        CEOSLiquid,
        ChemicalConstantsPackage,
        FlashVL,
        HeatCapacityGas,
        PropertyCorrelationsPackage,
    )

    n = mix.n
    # a constant ideal-gas heat capacity: the dew point does not depend on it
    hcs = [HeatCapacityGas(poly_fit=(50.0, 1000.0, [0.0] * 8 + [29.0])) for _ in range(n)]
    consts = ChemicalConstantsPackage(Tcs=mix.tcs.tolist(), Pcs=mix.pcs.tolist(), omegas=mix.omegas.tolist(),
                                      MWs=(mix.mws * 1000.0).tolist())
    props = PropertyCorrelationsPackage(constants=consts, HeatCapacityGases=hcs, skip_missing=True)
    kw = dict(Tcs=mix.tcs.tolist(), Pcs=mix.pcs.tolist(), omegas=mix.omegas.tolist(),
              kijs=[[0.0] * n for _ in range(n)])
    return FlashVL(consts, props, liquid=CEOSLiquid(PRMIX, kw, HeatCapacityGases=hcs),
                   gas=CEOSGas(PRMIX, kw, HeatCapacityGases=hcs))


@pytest.mark.parametrize("p_pa", [5e5, 20e5, 50e5])
def test_binary_dew_point_matches_thermo_0_6_1(p_pa):
    # thermo 0.6.1 (Caleb Bell), FlashVL with PRMIX: a separate code for the same equations
    fluid = Fluid({"methane": 0.9, "n-butane": 0.1}, eos="PR", kij=0)
    ref = _thermo_flasher(fluid.mixture).flash(P=p_pa, VF=1, zs=fluid.zs.tolist())
    ours = dew_point_t(fluid.mixture, fluid.zs, p_pa)
    assert ours.converged, ours.message
    assert ours.t_k == pytest.approx(ref.T, abs=0.05)


# ---------------------------------------------------------------------------------------------
# failures are reported, never returned as numbers
# ---------------------------------------------------------------------------------------------

def test_no_dew_point_above_the_cricondenbar(lean):
    fluid, env = lean
    res = dew_point_t(fluid.mixture, fluid.zs, env.cricondenbar[1] * 1.2)
    assert not res.converged
    assert "no dew point at this pressure" in res.message
    assert math.isnan(res.t_k)


def test_no_dew_point_above_the_cricondentherm(lean):
    fluid, env = lean
    res = dew_point_p(fluid.mixture, fluid.zs, env.cricondentherm[0] + 2.0)
    assert not res.converged
    assert "no dew point at this temperature" in res.message
    assert math.isnan(res.p_pa)


def test_no_bubble_point_above_the_critical_temperature(lean):
    # between Tc and the cricondentherm both saturation pressures are dew points
    fluid, env = lean
    res = bubble_point_p(fluid.mixture, fluid.zs, env.critical[0] + 5.0)
    assert not res.converged
    assert "no bubble point" in res.message


def test_envelope_that_does_not_close_is_reported():
    # methane with a little water: the water dew line climbs past 1000 bar (a cubic with kij = 0)
    fluid = Fluid({"methane": 0.99, "water": 0.01}, eos="PR", kij=0)
    env = phase_envelope(fluid.mixture, fluid.zs)
    assert not env.converged
    assert "does not close" in env.message


def test_envelope_out_of_points_is_reported(lean):
    fluid, _ = lean
    env = phase_envelope(fluid.mixture, fluid.zs, max_points=10)
    assert not env.converged and len(env) == 10
    assert "10 points" in env.message


def test_envelope_starting_above_the_cricondenbar_is_reported(lean):
    fluid, env = lean
    res = phase_envelope(fluid.mixture, fluid.zs, p_start_pa=env.cricondenbar[1] * 1.2)
    assert not res.converged and len(res) == 0
    assert "no dew point at this pressure" in res.message


def test_bad_input_names_the_field(lean):
    fluid, _ = lean
    with pytest.raises(InputError, match="z"):
        dew_point_t(fluid.mixture, fluid.zs[:-1], 10e5)
    with pytest.raises(InputError, match="p_pa"):
        dew_point_t(fluid.mixture, fluid.zs, -1.0)
    with pytest.raises(InputError, match="t_k"):
        bubble_point_p(fluid.mixture, fluid.zs, float("nan"))


def test_single_component_is_refused_with_the_reason():
    methane = Fluid({"methane": 1.0}, eos="PR", kij=0)
    with pytest.raises(InputError, match="at least two components"):
        phase_envelope(methane.mixture, methane.zs)


# ---------------------------------------------------------------------------------------------
# property: a dew point is the edge of the two-phase region
# ---------------------------------------------------------------------------------------------

@settings(max_examples=15, deadline=None)
@given(frac=st.floats(min_value=0.0, max_value=1.0))
def test_dew_point_is_the_edge_of_the_two_phase_region(lean, frac):
    fluid, env = lean
    p = math.exp(math.log(1e5) + frac * (math.log(0.9 * env.cricondentherm[1]) - math.log(1e5)))
    dp = dew_point_t(fluid.mixture, fluid.zs, p)
    assert dp.converged, dp.message
    assert stability_test(fluid.mixture, dp.t_k + 0.2, p, fluid.zs).stable
    assert not stability_test(fluid.mixture, dp.t_k - 0.2, p, fluid.zs).stable
