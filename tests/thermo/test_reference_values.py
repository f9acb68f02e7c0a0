"""Letdown temperatures and Joule-Thomson coefficients against outside sources.

Peng-Robinson is a model, not the truth: these tests measure how far it lies from the best available
description of each pure fluid and assert that it stays inside a band that documents the cubic's
known error.  Each band was set after measuring the difference; the measured value is in the comment
beside the case (jtcheck PR with kij = 0, CoolProp 8.0.0).

Sources, named beside every case:

- Reference equations of state, evaluated with CoolProp 8.0.0 (Bell, Wronski, Quoilin and Lemort,
  Ind. Eng. Chem. Res. 53 (2014) 2498-2508), backend HEOS.  The isenthalpic outlet is
  ``h_in = PropsSI('HMOLAR', 'T', t_in, 'P', p_in, fluid)`` then
  ``T_out = PropsSI('T', 'P', p_out, 'HMOLAR', h_in, fluid)``, the quality with ``'Q'``.
  The reference EOS per fluid is listed in :data:`REFERENCE_EOS` (CoolProp's bibliography key in the
  test id, the paper in the comment).
- Published or handbook facts, marked "from memory" where the exact table could not be checked.
- Trade rules of thumb, marked "common practice".

What PR gets wrong, as measured here: for light supercritical gases (N2, CH4, and to a lesser degree
CO2 and C2H6 well above their critical temperature) PR overstates the Joule-Thomson coefficient near
room temperature (N2 by about 22 %, CH4 by about 16 % at 300 K, 1 bar), so its letdown outlets are
1-4 K too cold.  Where the outlet is two-phase the outlet temperature is the EOS saturation
temperature at the outlet pressure, and PR's vapour pressure (its acentric-factor fit) puts that
within a few tenths of a kelvin of the reference.  For hydrogen PR gets even the sign wrong at room
temperature, which is why a hydrogen-containing fluid carries a warning.
"""
from __future__ import annotations

import functools

import CoolProp
import pytest
from CoolProp.CoolProp import PropsSI, get_phase_index
from scipy.optimize import brentq

from jtcheck import Fluid, letdown
from jtcheck.thermo.properties import phase_state

COOLPROP_VERSION = CoolProp.__version__

#: CoolProp fluid name -> (jtcheck component name, CoolProp bibliography key); the paper in the comment.
REFERENCE_EOS = {
    # Span, Lemmon, Jacobsen, Wagner and Yokozeki, J. Phys. Chem. Ref. Data 29 (2000) 1361-1433
    "Nitrogen": ("nitrogen", "Span-JPCRD-2000"),
    # Setzmann and Wagner, J. Phys. Chem. Ref. Data 20 (1991) 1061-1155
    "Methane": ("methane", "Setzmann-JPCRD-1991"),
    # Span and Wagner, J. Phys. Chem. Ref. Data 25 (1996) 1509-1596
    "CarbonDioxide": ("carbon dioxide", "Span-JPCRD-1996"),
    # Buecker and Wagner, J. Phys. Chem. Ref. Data 35 (2006) 205-266
    "Ethane": ("ethane", "Buecker-JPCRD-2006"),
    # Lemmon, McLinden and Wagner, J. Chem. Eng. Data 54 (2009) 3141-3180
    "Propane": ("propane", "Lemmon-JCED-2009"),
    # Leachman, Jacobsen, Penoncello and Lemmon, J. Phys. Chem. Ref. Data 38 (2009) 721-748 (normal hydrogen)
    "Hydrogen": ("hydrogen", "Leachman-JPCRD-2009"),
    # Ortiz-Vega et al., CoolProp 8.0.0's helium EOS (bibliography key as given by CoolProp)
    "Helium": ("helium", "OrtizVega-JPCRD-2019"),
}

BAR = 1e5

# Outlet categories: the CoolProp phase of the outlet and the jtcheck label it must agree with.
# "supercritical" (T > Tc and P > Pc) has no vapour/liquid name; there we require a single phase.
_CP_PHASES = {
    "vapour": {get_phase_index("phase_gas"), get_phase_index("phase_supercritical_gas")},
    "two-phase": {get_phase_index("phase_twophase")},
    "liquid": {get_phase_index("phase_liquid"), get_phase_index("phase_supercritical_liquid")},
    "supercritical": {get_phase_index("phase_supercritical")},
}

# (label, CoolProp fluid, p_in [Pa], t_in [K], p_out [Pa], outlet category,
#  allowed |T_PR - T_ref| [K], allowed |vapour fraction PR - quality ref| (two-phase outlets only))
CASES = [
    # gas-phase letdowns: PR too cold by 1-4 K for N2 and CH4, by 1.5-1.7 K for CO2 and C2H6 well above
    # their critical temperature, on the mark for propane
    ("N2 100->10 bar at 300 K", "Nitrogen", 100 * BAR, 300.0, 10 * BAR, "vapour", 3.5, None),  # -2.41 K
    ("N2 200->1 bar at 300 K", "Nitrogen", 200 * BAR, 300.0, 1 * BAR, "vapour", 5.0, None),  # -3.79 K
    ("N2 150->20 bar at 200 K", "Nitrogen", 150 * BAR, 200.0, 20 * BAR, "vapour", 2.0, None),  # -1.18 K
    ("CH4 100->10 bar at 300 K", "Methane", 100 * BAR, 300.0, 10 * BAR, "vapour", 5.0, None),  # -3.59 K
    ("CH4 70->40 bar at 20 degC", "Methane", 70 * BAR, 293.15, 40 * BAR, "vapour", 2.0, None),  # -1.07 K
    ("CO2 30->6 bar at 350 K", "CarbonDioxide", 30 * BAR, 350.0, 6 * BAR, "vapour", 2.5, None),  # -1.66 K
    ("C2H6 40->10 bar at 330 K", "Ethane", 40 * BAR, 330.0, 10 * BAR, "vapour", 2.5, None),  # -1.51 K
    ("C3H8 10->2 bar at 350 K", "Propane", 10 * BAR, 350.0, 2 * BAR, "vapour", 1.0, None),  # +0.07 K
    # dense CO2 staying supercritical
    ("CO2 dense 150->80 bar at 330 K", "CarbonDioxide", 150 * BAR, 330.0, 80 * BAR, "supercritical", 1.0,
     None),  # -0.38 K
    # outlets on the saturation line: T_out is the EOS saturation temperature at p_out
    ("CH4 cold gas 60->5 bar at 200 K", "Methane", 60 * BAR, 200.0, 5 * BAR, "two-phase", 0.5,
     0.04),  # -0.10 K; vapour fraction 0.810 vs 0.789
    ("CO2 liquid 60->10 bar at 280 K", "CarbonDioxide", 60 * BAR, 280.0, 10 * BAR, "two-phase", 0.5,
     0.02),  # +0.24 K; 0.319 vs 0.316
    ("CO2 dense 150->60 bar at 320 K", "CarbonDioxide", 150 * BAR, 320.0, 60 * BAR, "two-phase", 0.5,
     0.07),  # -0.11 K; 0.250 vs 0.297 (PR's dense-phase enthalpy near the critical point)
    ("CO2 dense 150->40 bar at 310 K", "CarbonDioxide", 150 * BAR, 310.0, 40 * BAR, "two-phase", 0.5,
     0.03),  # +0.03 K; 0.288 vs 0.299
    ("C2H6 liquid 60->10 bar at 270 K", "Ethane", 60 * BAR, 270.0, 10 * BAR, "two-phase", 0.5,
     0.02),  # -0.06 K; 0.2185 vs 0.2169
    ("C3H8 liquid 20->2 bar at 300 K", "Propane", 20 * BAR, 300.0, 2 * BAR, "two-phase", 0.5,
     0.02),  # +0.03 K; 0.3224 vs 0.3232
]

TWO_PHASE_CASES = [c for c in CASES if c[5] == "two-phase"]
LIGHT_GAS_CASES = [c for c in CASES if c[5] == "vapour" and c[1] in ("Nitrogen", "Methane")]


def _case_id(case) -> str:
    return f"{case[0]} [CoolProp {COOLPROP_VERSION} HEOS, {REFERENCE_EOS[case[1]][1]}]"


@functools.cache
def reference_letdown(cp_fluid: str, p_in: float, t_in: float, p_out: float) -> tuple[float, float, int]:
    """(T_out [K], quality [-] or -1 in a single phase, CoolProp phase index) of an isenthalpic letdown."""
    h_in = PropsSI("HMOLAR", "T", t_in, "P", p_in, cp_fluid)
    t_out = PropsSI("T", "P", p_out, "HMOLAR", h_in, cp_fluid)
    quality = PropsSI("Q", "P", p_out, "HMOLAR", h_in, cp_fluid)
    phase = int(PropsSI("Phase", "P", p_out, "HMOLAR", h_in, cp_fluid))
    return t_out, quality, phase


@functools.cache
def pr_letdown(cp_fluid: str, p_in: float, t_in: float, p_out: float):
    fluid = Fluid({REFERENCE_EOS[cp_fluid][0]: 1.0}, eos="PR", kij=0)
    return letdown(fluid, p_in=p_in, t_in=t_in, p_out=p_out)


def reference_jt_k_per_bar(cp_fluid: str, t_k: float, p_pa: float) -> float:
    """Joule-Thomson coefficient (dT/dP)_h from the reference EOS [K/bar]."""
    return PropsSI("d(T)/d(P)|Hmolar", "T", t_k, "P", p_pa, cp_fluid) * BAR


def pr_jt_k_per_bar(component: str, t_k: float, p_pa: float) -> float:
    """Joule-Thomson coefficient of jtcheck's PR [K/bar]."""
    fluid = Fluid({component: 1.0}, eos="PR", kij=0)
    return float(phase_state(fluid.mixture, t_k, p_pa, fluid.zs).jt_coefficient) * BAR


# ---------------------------------------------------------------------------------------------
# letdowns of pure fluids against the reference equations of state
# ---------------------------------------------------------------------------------------------

@pytest.mark.parametrize("case", CASES, ids=_case_id)
def test_pr_outlet_temperature_lies_within_the_documented_band_of_the_reference_eos(case):
    label, cp_fluid, p_in, t_in, p_out, outlet, dt_band, _ = case
    t_ref, _, _ = reference_letdown(cp_fluid, p_in, t_in, p_out)
    ours = pr_letdown(cp_fluid, p_in, t_in, p_out)
    assert ours.converged, ours.message
    assert abs(ours.t_out - t_ref) < dt_band, f"{label}: PR {ours.t_out:.3f} K, reference {t_ref:.3f} K"


@pytest.mark.parametrize("case", CASES, ids=_case_id)
def test_outlet_phase_agrees_with_the_reference_eos(case):
    label, cp_fluid, p_in, t_in, p_out, outlet, _, _ = case
    _, _, cp_phase = reference_letdown(cp_fluid, p_in, t_in, p_out)
    assert cp_phase in _CP_PHASES[outlet], f"{label}: reference phase index {cp_phase}"
    ours = pr_letdown(cp_fluid, p_in, t_in, p_out)
    if outlet == "supercritical":
        # one phase; jtcheck names a pure fluid above its critical pressure "supercritical"
        assert ours.phase in ("supercritical", "vapour", "liquid")
    else:
        assert ours.phase == outlet


@pytest.mark.parametrize("case", TWO_PHASE_CASES, ids=_case_id)
def test_two_phase_outlet_vapour_fraction_is_close_to_the_reference_quality(case):
    label, cp_fluid, p_in, t_in, p_out, _, _, quality_band = case
    _, quality, _ = reference_letdown(cp_fluid, p_in, t_in, p_out)
    ours = pr_letdown(cp_fluid, p_in, t_in, p_out)
    assert 0.0 < quality < 1.0
    assert abs(ours.vapor_fraction - quality) < quality_band, f"{label}: PR {ours.vapor_fraction:.4f}, " \
                                                              f"reference {quality:.4f}"


@pytest.mark.parametrize("case", LIGHT_GAS_CASES, ids=_case_id)
def test_pr_is_colder_than_the_reference_eos_for_light_supercritical_gases(case):
    """The sign of PR's error for N2 and CH4 letdowns: it overstates the cooling (measured 1.1-3.8 K)."""
    _, cp_fluid, p_in, t_in, p_out, _, _, _ = case
    t_ref, _, _ = reference_letdown(cp_fluid, p_in, t_in, p_out)
    assert pr_letdown(cp_fluid, p_in, t_in, p_out).t_out < t_ref


# ---------------------------------------------------------------------------------------------
# Joule-Thomson coefficients at 300 K and 1 bar
# ---------------------------------------------------------------------------------------------

# (CoolProp fluid, allowed |mu_PR / mu_ref - 1| [-], handbook range [K/bar], allowed excess of PR over
#  that range [-]).  Measured at 300 K, 1 bar (K/bar): N2 PR 0.2597 vs reference 0.2120 (+22.5 %);
#  CH4 PR 0.5010 vs 0.4322 (+15.9 %); CO2 PR 1.0928 vs 1.0761 (+1.6 %).  PR's second virial coefficient
#  for these gases is too negative, so it overstates mu_JT = (T dB/dT - B)/cp at low pressure.
#  The handbook ranges are from memory (handbook tables of mu_JT near 300 K, 1 bar).
JT_CASES = [
    ("Nitrogen", 0.30, (0.21, 0.22), 0.25),
    ("Methane", 0.20, (0.43, 0.45), 0.15),
    ("CarbonDioxide", 0.03, (1.08, 1.10), 0.03),
]


def _jt_id(case) -> str:
    return f"{case[0]} [CoolProp {COOLPROP_VERSION} HEOS, {REFERENCE_EOS[case[0]][1]}]"


@pytest.mark.parametrize("case", JT_CASES, ids=_jt_id)
def test_pr_joule_thomson_coefficient_at_300K_1bar_is_within_the_documented_band_of_the_reference_eos(case):
    cp_fluid, rel_band, _, _ = case
    mu_ref = reference_jt_k_per_bar(cp_fluid, 300.0, 1e5)
    mu_pr = pr_jt_k_per_bar(REFERENCE_EOS[cp_fluid][0], 300.0, 1e5)
    assert abs(mu_pr / mu_ref - 1.0) < rel_band, f"{cp_fluid}: PR {mu_pr:.4f} K/bar, reference {mu_ref:.4f} K/bar"


@pytest.mark.parametrize("case", JT_CASES, ids=_jt_id)
def test_reference_eos_joule_thomson_coefficient_at_300K_1bar_lies_in_the_handbook_range(case):
    """Ties the from-memory handbook range to the reference EOS (within 1 %, the rounding of the range
    and the K/bar-K/atm ambiguity of such tables): N2 0.2120, CH4 0.4322, CO2 1.0761 K/bar."""
    cp_fluid, _, (lo, hi), _ = case
    mu_ref = reference_jt_k_per_bar(cp_fluid, 300.0, 1e5)
    assert 0.99 * lo < mu_ref < 1.01 * hi


@pytest.mark.parametrize("case", JT_CASES, ids=_jt_id)
def test_pr_joule_thomson_coefficient_at_300K_1bar_is_near_the_handbook_range(case):
    """Loose check: the handbook range (from memory) widened upwards by PR's known overstatement
    (N2 +18 % and CH4 +11 % above the top of the range, CO2 inside it)."""
    cp_fluid, _, (lo, hi), excess = case
    mu_pr = pr_jt_k_per_bar(REFERENCE_EOS[cp_fluid][0], 300.0, 1e5)
    assert lo * (1.0 - 0.03) < mu_pr < hi * (1.0 + excess)


# ---------------------------------------------------------------------------------------------
# hydrogen and helium: warming on throttling at room temperature
# ---------------------------------------------------------------------------------------------

QUANTUM_GASES = ["Hydrogen", "Helium"]


@pytest.mark.parametrize("cp_fluid", QUANTUM_GASES,
                         ids=lambda f: f"{f} [CoolProp {COOLPROP_VERSION} HEOS, {REFERENCE_EOS[f][1]}]")
def test_reference_eos_hydrogen_and_helium_warm_when_throttled_at_room_temperature(cp_fluid):
    """100 bar, 300 K -> 10 bar: the reference EOS gives H2 +3.00 K and He +5.62 K.

    Measurements agree for helium: "The Joule-Thomson effect in helium" (Roebuck and Osterberg,
    Phys. Rev., 1933; authors and journal from memory) reports in its abstract mu_JT negative from
    -190 to 300 degC at 1-200 atm.
    """
    t_out, _, _ = reference_letdown(cp_fluid, 100 * BAR, 300.0, 10 * BAR)
    assert t_out > 300.0


@pytest.mark.parametrize("cp_fluid, t_inv_quoted_k, rel", [("Hydrogen", 200.0, 0.05), ("Helium", 40.0, 0.20)],
                         ids=[f"{f} [CoolProp {COOLPROP_VERSION} HEOS, {REFERENCE_EOS[f][1]}]"
                              for f in QUANTUM_GASES])
def test_reference_eos_inversion_temperature_lies_far_below_room_temperature(cp_fluid, t_inv_quoted_k, rel):
    """Where mu_JT changes sign at 1 bar: reference EOS 200.5 K (H2) and 45.3 K (He).  The quoted values,
    about 200 K for H2 and about 40 K for He, are from memory (textbook tables of maximum inversion
    temperatures); the helium band is wide because quoted values range from about 35 to 45 K."""
    t_inv = brentq(lambda t: reference_jt_k_per_bar(cp_fluid, t, 1e5), 0.5 * t_inv_quoted_k, 2.5 * t_inv_quoted_k)
    assert t_inv < 250.0
    assert t_inv == pytest.approx(t_inv_quoted_k, rel=rel)


@pytest.mark.parametrize("composition", [{"hydrogen": 1.0}, {"hydrogen": 0.5, "methane": 0.5},
                                         {"methane": 0.9, "hydrogen": 0.1}],
                         ids=["pure H2", "50 % H2 in CH4", "10 % H2 in CH4"])
def test_a_hydrogen_containing_fluid_carries_a_warning_about_hydrogen(composition):
    r = letdown(Fluid(composition, eos="PR"), p_in=100 * BAR, t_in=300.0, p_out=10 * BAR)
    assert r.converged, r.message
    assert any("hydrogen" in w.lower() for w in r.warnings), r.warnings


def test_pr_predicts_slight_cooling_for_hydrogen_the_known_defect_the_warning_is_for():
    """100 bar, 300 K -> 10 bar of pure H2: PR gives 299.83 K (-0.17 K) where the reference EOS gives
    303.00 K (+3.00 K).  PR with the classic alpha and omega = -0.219 puts the hydrogen inversion
    temperature at 361 K at 1 bar (the reference: 200.5 K), so at 300 K it predicts cooling.
    This records the defect; if a better alpha function fixes it, this test must be rewritten."""
    t_ref, _, _ = reference_letdown("Hydrogen", 100 * BAR, 300.0, 10 * BAR)
    r = pr_letdown("Hydrogen", 100 * BAR, 300.0, 10 * BAR)
    assert r.converged, r.message
    assert -1.0 < r.t_out - 300.0 < 0.0
    assert t_ref - r.t_out > 2.0


def test_pr_joule_thomson_coefficient_of_hydrogen_at_300K_has_the_wrong_sign():
    """At 300 K, 1 bar: PR +0.0124 K/bar (cooling), reference EOS -0.0303 K/bar (warming)."""
    assert pr_jt_k_per_bar("hydrogen", 300.0, 1e5) > 0.0
    assert reference_jt_k_per_bar("Hydrogen", 300.0, 1e5) < 0.0


def test_pr_predicts_warming_for_helium_but_understates_it():
    """100 bar, 300 K -> 10 bar of pure He: PR gives 301.36 K (+1.36 K), the reference EOS 305.62 K
    (+5.62 K).  The sign is right (PR's helium inversion temperature at 1 bar is 252 K), the
    size about a quarter of the reference."""
    t_ref, _, _ = reference_letdown("Helium", 100 * BAR, 300.0, 10 * BAR)
    r = pr_letdown("Helium", 100 * BAR, 300.0, 10 * BAR)
    assert r.converged, r.message
    assert 300.0 < r.t_out < t_ref
    assert any("helium" in w.lower() for w in r.warnings), r.warnings


# ---------------------------------------------------------------------------------------------
# the natural-gas rule of thumb
# ---------------------------------------------------------------------------------------------

def test_lean_gas_cools_about_half_a_kelvin_per_bar(lean_gas):
    """About 7 degF per 100 psi, i.e. about 0.5 K per bar, for lean natural gas (common practice; loose:
    the real figure depends on pressure, temperature and composition).  LEAN_GAS (PR, kij = 0)
    70 bar, 20 degC -> 40 bar: 0.568 K/bar."""
    r = letdown(lean_gas, p_in=70 * BAR, t_in=293.15, p_out=40 * BAR)
    assert r.converged, r.message
    drop_per_bar = (293.15 - r.t_out) / 30.0
    assert 0.35 < drop_per_bar < 0.75
