"""Properties every flash result must have, whatever the inputs: Hypothesis draws random letdowns of
the lean and the rich gas of conftest.py (PR, kij = 0) and checks the identities of equilibrium.

- Energy balance of a throttle: the isenthalpic outlet has the inlet enthalpy.
- Mass balance: z = beta y + (1 - beta) x, and x, y sum to one.
- Phase equilibrium: equal fugacities, ln(x_i phi_i^L) = ln(y_i phi_i^V).
- Stability (Michelsen, Fluid Phase Equilib. 9 (1982) 1-19): a single phase reported by a flash has no
  negative tangent-plane distance; a feed the flash splits tests unstable.
- Second law: the isentropic outlet conserves entropy and is never warmer than the isenthalpic one
  for the same letdown (the work extracted leaves the fluid with less enthalpy, and at fixed pressure
  T rises with h).
- The batch path solves the same equations as the scalar path.

Tolerances are those of the solvers (PH: 1e-9 relative in h; PS: 1e-12 relative in s; phase split:
1e-10 in the ln K equations) with a margin; measured worst over 3000 random letdowns: 1e-9 in h,
1e-12 in s, 1e-10 in ln f, 1e-10 in vapour fraction.
"""
from __future__ import annotations

import functools

import numpy as np
import pytest
from conftest import LEAN_GAS, RICH_GAS
from hypothesis import HealthCheck, assume, example, given, settings
from hypothesis import strategies as st

from jtcheck import Fluid, letdown
from jtcheck.letdown.throttle import BATCH_ENVELOPE_MIN
from jtcheck.thermo.eos import R
from jtcheck.thermo.models.cubic.properties import ln_phi
from jtcheck.thermo.stability import stability_test

BAR = 1e5
COMPOSITIONS = {"lean": LEAN_GAS, "rich": RICH_GAS}


@functools.cache
def gas(name: str) -> Fluid:
    return Fluid(COMPOSITIONS[name], eos="PR", kij=0)


# Random letdowns: p_in 20-150 bar, t_in 250-350 K, p_out 2-95 % of p_in.
fluid_names = st.sampled_from(sorted(COMPOSITIONS))
p_ins = st.floats(20 * BAR, 150 * BAR)
t_ins = st.floats(250.0, 350.0)
ratios = st.floats(0.02, 0.95)

SETTINGS = settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.filter_too_much])

# Known two-phase and single-phase outlets, always tried.
TWO_PHASE_RICH = example("rich", 100 * BAR, 300.0, 0.3)
TWO_PHASE_LEAN = example("lean", 120 * BAR, 255.0, 40 / 120)
VAPOUR_LEAN = example("lean", 100 * BAR, 313.15, 0.1)


def scale_h(h_in: float, t_in: float) -> float:
    """Enthalpy scale for relative comparisons [J/mol]: |h| may pass through zero (ideal gas, 298.15 K)."""
    return max(abs(h_in), R * t_in)


def assert_converged(res) -> None:
    """Every flash in these properties must converge (a failure would screen as "not screened")."""
    assert res.converged, f"flash failed: {res.message} at {res.T} K, {res.P} Pa"


def outlet(name: str, p_in: float, t_in: float, ratio: float):
    """(fluid, inlet PT flash, outlet PH flash, p_out) of one letdown."""
    fluid = gas(name)
    p_out = p_in * ratio
    inlet = fluid.flash_pt(t_in, p_in)
    assert_converged(inlet)
    out = fluid.flash_ph(p_out, inlet.h, t_in)
    assert_converged(out)
    return fluid, inlet, out, p_out


# ---------------------------------------------------------------------------------------------
# energy balance
# ---------------------------------------------------------------------------------------------

@SETTINGS
@given(fluid_names, p_ins, t_ins, ratios)
@TWO_PHASE_RICH
@TWO_PHASE_LEAN
@VAPOUR_LEAN
def test_isenthalpic_outlet_has_the_inlet_enthalpy(name, p_in, t_in, ratio):
    fluid, inlet, out, p_out = outlet(name, p_in, t_in, ratio)
    r = letdown(fluid, p_in=p_in, t_in=t_in, p_out=p_out)
    assert r.converged, r.message  # the same PH flash as ``out``, which converged
    assert r.t_out == out.T
    assert abs(out.h - inlet.h) / scale_h(inlet.h, t_in) < 1e-8
    if not out.two_phase:
        h_out = fluid.flash_pt(r.t_out, p_out).h
        assert abs(h_out - inlet.h) / scale_h(inlet.h, t_in) < 1e-8


@SETTINGS
@given(fluid_names, p_ins, t_ins, ratios)
@TWO_PHASE_RICH
@TWO_PHASE_LEAN
@VAPOUR_LEAN
def test_pt_flash_at_the_isenthalpic_outlet_reproduces_it(name, p_in, t_in, ratio):
    fluid, inlet, out, p_out = outlet(name, p_in, t_in, ratio)
    pt = fluid.flash_pt(out.T, p_out)
    assert_converged(pt)
    assert pt.phase == out.phase
    assert abs(pt.beta - out.beta) < 1e-6
    assert abs(pt.h - inlet.h) / scale_h(inlet.h, t_in) < 1e-8


# ---------------------------------------------------------------------------------------------
# mass balance and phase equilibrium at two-phase results
# ---------------------------------------------------------------------------------------------

def two_phase_results(name, p_in, t_in, ratio):
    """The two-phase flash results of one letdown: the PH outlet and the PT flash at its (T, P)."""
    fluid, _, out, p_out = outlet(name, p_in, t_in, ratio)
    assume(out.two_phase)
    pt = fluid.flash_pt(out.T, p_out)
    assert_converged(pt)
    return fluid, [out, pt]


@SETTINGS
@given(fluid_names, p_ins, t_ins, ratios)
@TWO_PHASE_RICH
@TWO_PHASE_LEAN
def test_two_phase_result_satisfies_the_mass_balance(name, p_in, t_in, ratio):
    _, results = two_phase_results(name, p_in, t_in, ratio)
    for res in results:
        assert 0.0 < res.beta < 1.0
        np.testing.assert_allclose(res.beta * res.y + (1.0 - res.beta) * res.x, res.z, rtol=0, atol=1e-10)
        assert abs(res.x.sum() - 1.0) < 1e-10
        assert abs(res.y.sum() - 1.0) < 1e-10


@SETTINGS
@given(fluid_names, p_ins, t_ins, ratios)
@TWO_PHASE_RICH
@TWO_PHASE_LEAN
def test_two_phase_result_has_equal_fugacities_in_both_phases(name, p_in, t_in, ratio):
    fluid, results = two_phase_results(name, p_in, t_in, ratio)
    for res in results:
        lnphi_l, _ = ln_phi(fluid.mixture, res.T, res.P, res.x)
        lnphi_v, _ = ln_phi(fluid.mixture, res.T, res.P, res.y)
        np.testing.assert_allclose(np.log(res.x) + lnphi_l, np.log(res.y) + lnphi_v, rtol=0, atol=1e-8)


# ---------------------------------------------------------------------------------------------
# stability
# ---------------------------------------------------------------------------------------------

@SETTINGS
@given(fluid_names, p_ins, t_ins, ratios)
@VAPOUR_LEAN
def test_single_phase_result_has_no_negative_tangent_plane_distance(name, p_in, t_in, ratio):
    fluid, inlet, out, _ = outlet(name, p_in, t_in, ratio)
    singles = [res for res in (inlet, out) if not res.two_phase]
    assume(singles)
    for res in singles:
        assert stability_test(fluid.mixture, res.T, res.P, res.z).tpd_min >= -1e-8


@SETTINGS
@given(fluid_names, p_ins, t_ins, ratios)
@TWO_PHASE_RICH
@TWO_PHASE_LEAN
def test_feed_of_a_two_phase_result_tests_unstable(name, p_in, t_in, ratio):
    fluid, results = two_phase_results(name, p_in, t_in, ratio)
    for res in results:
        assert not stability_test(fluid.mixture, res.T, res.P, res.z).stable


# ---------------------------------------------------------------------------------------------
# entropy
# ---------------------------------------------------------------------------------------------

@SETTINGS
@given(fluid_names, p_ins, t_ins, ratios)
@TWO_PHASE_RICH
@VAPOUR_LEAN
def test_isentropic_outlet_has_the_inlet_entropy(name, p_in, t_in, ratio):
    fluid = gas(name)
    p_out = p_in * ratio
    inlet = fluid.flash_pt(t_in, p_in)
    assert_converged(inlet)
    out = fluid.flash_ps(p_out, inlet.s, t_in)
    assert_converged(out)
    # s is zero for the ideal gas at 298.15 K and 1 atm, so compare on the scale of R where |s| is small
    assert abs(out.s - inlet.s) / max(abs(inlet.s), R) < 1e-8


@SETTINGS
@given(fluid_names, p_ins, t_ins, ratios)
@TWO_PHASE_RICH
@TWO_PHASE_LEAN
@VAPOUR_LEAN
def test_isentropic_outlet_is_never_warmer_than_the_isenthalpic_outlet(name, p_in, t_in, ratio):
    fluid, inlet, out_h, p_out = outlet(name, p_in, t_in, ratio)
    out_s = fluid.flash_ps(p_out, inlet.s, t_in)
    assert_converged(out_s)
    assert out_s.T <= out_h.T + 1e-6


# ---------------------------------------------------------------------------------------------
# batch and scalar paths
# ---------------------------------------------------------------------------------------------

def test_batch_letdown_equals_scalar_letdown_case_by_case():
    """200 random letdowns per gas, seeded; the batch is large enough (BATCH_ENVELOPE_MIN) for the batch
    path to take its phase-envelope shortcut, which must not change any answer."""
    n = 200
    assert n >= BATCH_ENVELOPE_MIN
    rng = np.random.default_rng(20240601)
    for name in sorted(COMPOSITIONS):
        fluid = gas(name)
        p_in = rng.uniform(20 * BAR, 150 * BAR, n)
        t_in = rng.uniform(250.0, 350.0, n)
        p_out = p_in * rng.uniform(0.02, 0.95, n)
        batch = letdown(fluid, p_in=p_in, t_in=t_in, p_out=p_out)
        scalar = [letdown(fluid, p_in=float(a), t_in=float(b), p_out=float(c))
                  for a, b, c in zip(p_in, t_in, p_out, strict=True)]
        assert batch.converged.all()
        assert all(r.converged for r in scalar)
        np.testing.assert_allclose(batch.t_out, [r.t_out for r in scalar], rtol=0, atol=1e-6)
        np.testing.assert_allclose(batch.vapor_fraction, [r.vapor_fraction for r in scalar], rtol=0, atol=1e-6)
        assert list(batch.phase) == [r.phase for r in scalar]
        assert np.sum(batch.phase == "two-phase") >= 20, f"{name}: too few two-phase outlets in the sample"


# ---------------------------------------------------------------------------------------------
# known defect: flashes just below the dew point
# ---------------------------------------------------------------------------------------------

def dew_temperature(fluid: Fluid, p_pa: float, t_lo: float = 150.0, t_hi: float = 450.0) -> float:
    """Dew temperature [K] at p_pa by bisection on the PT flash's phase label (to 1e-9 K)."""
    for _ in range(60):
        t_mid = 0.5 * (t_lo + t_hi)
        if fluid.flash_pt(t_mid, p_pa).phase == "vapour":
            t_hi = t_mid
        else:
            t_lo = t_mid
    return t_hi


@pytest.mark.parametrize("name, p_pa", [("rich", 0.4 * BAR), ("rich", 2 * BAR), ("rich", 20 * BAR),
                                        ("lean", 5 * BAR)])
def test_pt_flash_converges_just_below_the_dew_point(name, p_pa):
    """Just inside the dew line the liquid is a millionth of the feed; the split must still converge
    (this once failed in windows of 0.0003-0.4 K below the dew point, from round-off in l = z - v)."""
    fluid = gas(name)
    t_dew = dew_temperature(fluid, p_pa)
    for dt in (1e-6, 1e-4, 1e-3):
        res = fluid.flash_pt(t_dew - dt, p_pa)
        assert res.converged, f"{dt} K below the dew point ({t_dew:.6f} K): {res.message}"
        assert res.phase == "two-phase"


@pytest.mark.parametrize("t_in", [319.25, 319.26, 319.27, 319.28])
def test_letdown_converges_when_the_outlet_lands_just_below_the_dew_point(t_in):
    """Rich gas 50 bar -> 2 bar: these inlet temperatures put the outlet within 0.07 K below the dew
    point (about 270.48 K at 2 bar)."""
    r = letdown(gas("rich"), p_in=50 * BAR, t_in=t_in, p_out=2 * BAR)
    assert r.converged, r.message
