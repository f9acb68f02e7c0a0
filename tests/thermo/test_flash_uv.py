"""UV and TV flashes (closed volume): against CoolProp's Peng-Robinson backend for pure fluids, and
thermodynamically consistent with the PT flash (u = h - P v at the answer) for mixtures."""
from __future__ import annotations

import CoolProp
import CoolProp.CoolProp
import numpy as np
import pytest

from jtcheck.thermo.fluid import Fluid
from jtcheck.thermo.properties import phase_state

GAS6 = {"methane": 0.85, "ethane": 0.07, "propane": 0.04, "n-butane": 0.02, "nitrogen": 0.01, "CO2": 0.01}


def _uv_of_pt(fluid: Fluid, t: float, p: float):
    """(u [J/mol], v [m^3/mol], PT flash) of the equilibrium state at T, P."""
    r = fluid.flash_pt(t, p)
    mw = fluid.mixture.mws
    if r.phase == "two-phase":
        liq = phase_state(fluid.mixture, t, p, r.x, "liquid")
        vap = phase_state(fluid.mixture, t, p, r.y, "vapour")
        v = r.beta * float(r.y @ mw) / float(vap.density) + (1 - r.beta) * float(r.x @ mw) / float(liq.density)
    else:
        v = fluid.molar_mass / float(phase_state(fluid.mixture, t, p, fluid.zs, "gibbs").density)
    return r.h - p * v, v, r


def _coolprop_offset(state, fluid: Fluid) -> float:
    """u_ours - u_CoolProp at a dilute gas state (400 K, 1 kPa): the reference states differ."""
    state.update(CoolProp.CoolProp.PT_INPUTS, 1e3, 400.0)
    u, _v, _r = _uv_of_pt(fluid, 400.0, 1e3)
    return u - state.umolar()


@pytest.mark.parametrize("cp_name,ours", [("Propane", "propane"), ("CO2", "CO2"), ("Nitrogen", "nitrogen")])
@pytest.mark.parametrize("quality", [0.1, 0.5, 0.9])
@pytest.mark.parametrize("t_over_tc", [0.7, 0.85])
def test_pure_two_phase_uv_matches_coolprop_pr(cp_name, ours, quality, t_over_tc):
    # reference: CoolProp (version in CoolProp.__version__) Peng-Robinson backend, same Tc, Pc, omega;
    # the ideal-gas heat capacities differ (CoolProp's vs Aly-Lee), worth about 0.1 K here
    cp = CoolProp.CoolProp.AbstractState("PR", cp_name)
    fluid = Fluid({ours: 1.0}, eos="PR")
    off = _coolprop_offset(cp, fluid)
    t = t_over_tc * cp.T_critical()
    cp.update(CoolProp.CoolProp.QT_INPUTS, quality, t)
    p_ref, u_ref, v_ref = cp.p(), cp.umolar() + off, 1.0 / cp.rhomolar()
    res = fluid.flash_uv(u_ref, v_ref, t + 15.0, 1.5 * p_ref)
    assert res.converged, res.message
    assert res.phase == "two-phase"
    assert res.T == pytest.approx(t, abs=0.15), CoolProp.__version__
    assert res.P == pytest.approx(p_ref, rel=3e-3)
    assert res.beta == pytest.approx(quality, abs=2e-3)


@pytest.mark.parametrize("cp_name,ours,t,p", [("Propane", "propane", 280.0, 5e5), ("Propane", "propane", 300.0, 50e5),
                                              ("Nitrogen", "nitrogen", 300.0, 200e5), ("CO2", "CO2", 320.0, 100e5)])
def test_pure_single_phase_tv_matches_coolprop_pr(cp_name, ours, t, p):
    # reference: CoolProp Peng-Robinson backend; the pressure at given T and v depends on the EOS alone
    cp = CoolProp.CoolProp.AbstractState("PR", cp_name)
    liquid = t < cp.T_critical() and p > 1e6
    cp.specify_phase(CoolProp.CoolProp.iphase_liquid if liquid else CoolProp.CoolProp.iphase_gas)
    cp.update(CoolProp.CoolProp.PT_INPUTS, p, t)
    fluid = Fluid({ours: 1.0}, eos="PR")
    res = fluid.flash_tv(t, 1.0 / cp.rhomolar(), 0.5 * p)
    assert res.converged, res.message
    assert res.P == pytest.approx(p, rel=2e-4)


@pytest.mark.parametrize("t,p", [(300.0, 100e5), (220.0, 30e5), (250.0, 60e5), (400.0, 5e5)])
def test_uv_round_trip_of_pt_flash_mixture(t, p):
    # invariant: the UV flash of (u, v) taken from a PT flash returns that T and P (u = h - P v)
    fluid = Fluid(GAS6, eos="PR")
    u, v, ref = _uv_of_pt(fluid, t, p)
    res = fluid.flash_uv(u, v, t + 25.0, 0.6 * p)
    assert res.converged, res.message
    assert res.phase == ref.phase
    assert res.T == pytest.approx(t, abs=1e-7)
    assert res.P == pytest.approx(p, rel=1e-8)
    assert res.beta == pytest.approx(ref.beta, abs=1e-8)
    # consistency at the answer: the PT flash there has the target u and v
    u2, v2, _ = _uv_of_pt(fluid, res.T, res.P)
    assert u2 == pytest.approx(u, abs=1e-6 * 8.314 * t)
    assert v2 == pytest.approx(v, rel=1e-9)


def test_uv_two_phase_heavy_mixture_and_tv():
    fluid = Fluid({"methane": 0.5, "n-pentane": 0.5}, eos="SRK")
    u, v, ref = _uv_of_pt(fluid, 330.0, 20e5)
    assert ref.phase == "two-phase"
    res = fluid.flash_uv(u, v, 300.0, 40e5)
    assert res.converged and res.phase == "two-phase"
    assert res.T == pytest.approx(330.0, abs=1e-7)
    np.testing.assert_allclose(res.x, ref.x, atol=1e-9)
    tv = fluid.flash_tv(330.0, v, 5e5)
    assert tv.converged and tv.P == pytest.approx(20e5, rel=1e-8)


def test_uv_with_volume_translation_keeps_u():
    # u = h - P v is unchanged by the Peneloux shift (h and P v shift by the same -P c)
    plain = Fluid(GAS6, eos="PR")
    shifted = Fluid(GAS6, eos="PR", volume_translation=True)
    u, v, _ = _uv_of_pt(plain, 260.0, 80e5)
    res = shifted.flash_uv(u, v - shifted.volume_shift(), 280.0, 50e5)
    assert res.converged
    assert res.T == pytest.approx(260.0, abs=1e-7) and res.P == pytest.approx(80e5, rel=1e-8)


def test_uv_bad_input_is_not_converged():
    fluid = Fluid(GAS6, eos="PR")
    res = fluid.flash_uv(float("nan"), 1e-3)
    assert not res.converged and res.phase == "unknown"
    res = fluid.flash_uv(0.0, -1e-3)
    assert not res.converged
