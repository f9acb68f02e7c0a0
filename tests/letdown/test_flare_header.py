"""The flare header as a path: relief sources mixed, then let down isenthalpically section by section.

Sources beside the values:

* an ideal gas has a Joule-Thomson coefficient of zero, so an isenthalpic expansion leaves its
  temperature unchanged; an ideal monatomic gas has cp = 5/2 R at every temperature, so adiabatic
  mixing of equal molar flows ends at the mean temperature (any thermodynamics text, e.g. Smith, Van
  Ness and Abbott, *Introduction to Chemical Engineering Thermodynamics*, ch. 2-4 and 7);
* isenthalpic flashes of pure fluids from CoolProp's reference equations of state (Setzmann and
  Wagner 1991 for methane, Lemmon, McLinden and Wagner 2009 for propane, Span and Wagner 1996 for CO2),
  version in each assertion message (measured with CoolProp 8.0.0);
* mole and energy balances of steady adiabatic mixing (conservation laws; Hypothesis properties);
* the issue's point (the header is coldest where its pressure is lowest) with invented numbers set at
  the fictional Kestrel Ridge terminal, checked against today's relief-valve screening
  (:func:`jtcheck.letdown.relief.relief_valve_case`), which stops at the back pressure.

Measured differences jtcheck (PR) - CoolProp, source at 5 bar abs, sections down to 4, 3, 2, 1.2 bar abs
(CoolProp 8.0.0):  methane from 300 K: -0.07, -0.14, -0.20, -0.26 K;  CO2 from 300 K: -0.02, -0.04,
-0.05, -0.06 K;  propane vapour from 320 K: +0.08, +0.17, +0.26, +0.34 K (0.3 K is not met at 1.2 bar,
see ``KNOWN_EXCEEDANCES_K``).  Outside the tested set: propane from 300 K reaches +0.76 K and CO2
from 260 K +0.52 K at 1.2 bar (the Joule-Thomson cooling, and with it PR's error, grows as the gas
gets colder and denser).
"""
from __future__ import annotations

import json
import math
from dataclasses import replace

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from jtcheck import Fluid
from jtcheck.errors import InputError
from jtcheck.letdown import HeaderSection, ReliefSource, screen_header, sections_from_drops
from jtcheck.letdown import flare_header as fh
from jtcheck.letdown.flare_header import Band
from jtcheck.letdown.relief import relief_valve_case
from jtcheck.thermo.idealgas import T_REF

BAR = 1e5
P_ATM = 101325.0


def barg(p: float) -> float:
    return p * BAR + P_ATM


def coolprop():
    """(PropsSI, version), or skip when CoolProp (a test extra) is missing."""
    cp = pytest.importorskip("CoolProp")
    return pytest.importorskip("CoolProp.CoolProp").PropsSI, cp.__version__


@pytest.fixture(scope="module")
def helium():
    return Fluid({"helium": 1.0})


@pytest.fixture(scope="module")
def lean_gas():
    # invented composition of the Kestrel Ridge separator gas
    return Fluid({"methane": 0.90, "ethane": 0.06, "propane": 0.03, "nitrogen": 0.01})


def header_5_to_1_2_bar(limit_k: float | None = None) -> tuple[HeaderSection, ...]:
    """Tailpipe, sub-header, main header, knock-out drum: 5 -> 4 -> 3 -> 2 -> 1.2 bar abs (invented)."""
    return sections_from_drops(5.0 * BAR, ["tailpipe", "sub-header", "main header", "knock-out drum"],
                               [1.0 * BAR, 1.0 * BAR, 1.0 * BAR, 0.8 * BAR], [limit_k] * 4)


# -- 1. ideal gas ------------------------------------------------------------------------------

def test_a_near_ideal_gas_keeps_its_temperature_through_the_header(helium):
    """Ideal gas: the JT coefficient is 0, so T is unchanged (textbook).  Tolerance 0.15 K: real helium
    departs from the ideal gas by about -0.06 K/bar at 300 K (it warms; CoolProp 8.0.0 gives +0.125 K
    from 3 bar to 1 atm), and PR gives +0.009 K; an enthalpy-reference error would show as kelvins."""
    secs = sections_from_drops(3.0 * BAR, ["sub-header", "knock-out drum"], [1.0 * BAR, 2.0 * BAR - P_ATM],
                               [None, None])
    r = screen_header([ReliefSource("helium vent", helium, 1.0, p_pa=3.0 * BAR, t_k=300.0)], secs)
    assert r.converged
    for s in r.sections:
        assert s.t_inlet_k == pytest.approx(300.0, abs=0.15)
        assert s.t_outlet_k == pytest.approx(300.0, abs=0.15)
        assert s.liquid_present is False     # helium at 300 K is a gas, whatever the flash's phase label
        assert s.vapor_fraction == 1.0
    assert any("Helium 100 mol%" in w and "GERG2008" in w for w in r.warnings)   # the cubic EOS caution


def test_nitrogen_near_room_temperature_cools_only_by_its_small_jt_coefficient():
    """Nitrogen at 300 K, 3 bar -> 1 atm: an ideal gas would keep 300 K; nitrogen's JT coefficient at
    300 K and low pressure is about 0.2 K/bar (CoolProp 8.0.0: -0.42 K over this drop; PR: -0.51 K).
    Tolerance 0.6 K around 300 K, and the sign: a real cooling of well under 1 K."""
    n2 = Fluid({"nitrogen": 1.0})
    r = screen_header([ReliefSource("nitrogen purge", n2, 1.0, p_pa=3.0 * BAR, t_k=300.0)],
                      [HeaderSection("header", 3.0 * BAR, P_ATM, None)])
    t = r.sections[0].t_outlet_k
    assert t == pytest.approx(300.0, abs=0.6)
    assert t < 300.0


def test_equal_molar_flows_of_a_monatomic_ideal_gas_mix_to_the_mean_temperature(helium):
    """cp = 5/2 R at every temperature (ideal monatomic gas): equal molar flows at 250 K and 350 K mix
    adiabatically to 300 K (textbook energy balance).  Tolerance 0.05 K: helium's residual enthalpy at
    2 bar is a few J/mol and nearly the same for both streams (measured: 299.999 K)."""
    r = screen_header([ReliefSource("cold", helium, 1.0, p_pa=2.0 * BAR, t_k=250.0),
                       ReliefSource("warm", helium, 1.0, p_pa=2.0 * BAR, t_k=350.0)],
                      [HeaderSection("knock-out drum", 2.0 * BAR, 2.0 * BAR, None)])
    assert r.sections[0].t_k == pytest.approx(300.0, abs=0.05)


# -- 2. pure fluids against CoolProp ------------------------------------------------------------

#: (fluid, CoolProp name, source temperature [K]): each source at 5 bar abs, the state at the valve outlet.
PURE_CASES = [("methane", "Methane", 300.0), ("carbon dioxide", "CO2", 300.0), ("propane", "Propane", 320.0)]

#: The 0.3 K agreement is not met here; the measured difference (CoolProp 8.0.0) is stated and the
#: tolerance widened openly.  PR's Joule-Thomson coefficient of propane vapour at 5 bar and 300-320 K is
#: about 6 % below the reference equation's (its ideal-gas heat capacity agrees within 0.1 %: the
#: difference is PR's residual enthalpy), and the error grows with the 5 K drop to 1.2 bar.
KNOWN_EXCEEDANCES_K = {("propane", 1.2 * BAR): 0.4}   # measured +0.341 K


@pytest.mark.parametrize(("name", "cp_name", "t0"), PURE_CASES, ids=[c[0] for c in PURE_CASES])
def test_pure_fluid_header_temperatures_match_coolprop_isenthalpic_flash(name, cp_name, t0):
    """Source already at the valve outlet (5 bar abs), header sections down to 1.2 bar abs.  Over a few
    bar at low pressure the JT cooling is 2-5 K and depends mainly on the second virial coefficient, which
    PR represents to about 5-15 % for these fluids, so PR and the reference equation are expected to agree
    within 0.3 K (unlike a 100 bar letdown, where PR's error is kelvins).  CoolProp: the temperature of
    PropsSI('T', 'P', p, 'H', h, fluid) with h = PropsSI('Hmass', 'P', 5 bar, 'T', t0, fluid)."""
    PropsSI, version = coolprop()
    r = screen_header([ReliefSource(name, Fluid({name: 1.0}), 2.0, p_pa=5.0 * BAR, t_k=t0)], header_5_to_1_2_bar())
    assert r.converged, r.message
    h = PropsSI("Hmass", "P", 5.0 * BAR, "T", t0, cp_name)
    for s in r.sections:
        t_ref = PropsSI("T", "P", s.p_outlet_pa, "H", h, cp_name)
        tol = KNOWN_EXCEEDANCES_K.get((name, s.p_outlet_pa), 0.3)
        assert s.t_outlet_k == pytest.approx(t_ref, abs=tol), \
            f"{name} at {s.p_outlet_pa:g} Pa: jtcheck {s.t_outlet_k:.3f} K, CoolProp {version} {t_ref:.3f} K"
        assert s.phase == "vapour"


@pytest.mark.parametrize(("name", "cp_name", "t0"), PURE_CASES, ids=[c[0] for c in PURE_CASES])
def test_pure_fluid_header_temperatures_on_gerg_2008_match_coolprop_within_0_3_k(name, cp_name, t0):
    """Issue 12's check, met everywhere on GERG-2008 (Kunz and Wagner 2012): the same header as above, every
    section within 0.3 K of CoolProp's reference equations (HEOS: Setzmann and Wagner 1991 methane, Span and
    Wagner 1996 CO2, Lemmon et al. 2009 propane), propane at 1.2 bar included, where PR misses by 0.34 K."""
    PropsSI, version = coolprop()
    src = ReliefSource(name, Fluid({name: 1.0}, eos="GERG2008"), 2.0, p_pa=5.0 * BAR, t_k=t0)
    r = screen_header([src], header_5_to_1_2_bar())
    assert r.converged, r.message
    h = PropsSI("Hmass", "P", 5.0 * BAR, "T", t0, cp_name)
    for s in r.sections:
        t_ref = PropsSI("T", "P", s.p_outlet_pa, "H", h, cp_name)
        assert s.t_outlet_k == pytest.approx(t_ref, abs=0.3), \
            f"{name} at {s.p_outlet_pa:g} Pa: jtcheck GERG2008 {s.t_outlet_k:.3f} K, CoolProp {version} {t_ref:.3f} K"
        assert s.phase == "vapour"


def test_liquid_propane_flashes_in_the_header_and_is_flagged():
    """LPG storage relief (invented): liquid propane at 15 bar abs, 300 K flashes to 1.2 bar abs.  CoolProp
    8.0.0 (Lemmon et al. 2009): 234.94 K, vapour quality 0.382; PR: 234.90 K, 0.381.  Tolerances: 0.3 K
    (PR's vapour pressure of propane is fitted through its acentric factor) and 0.01 in vapour fraction."""
    PropsSI, version = coolprop()
    lpg = ReliefSource("PSV-301 LPG sphere", Fluid({"propane": 1.0}), 2.0, p_pa=15.0 * BAR, t_k=300.0)
    secs = sections_from_drops(4.0 * BAR, ["tailpipe", "knock-out drum"], [1.0 * BAR, 1.8 * BAR], [None, None])
    r = screen_header([lpg], secs)
    drum = r.sections[-1]
    h = PropsSI("Hmass", "P", 15.0 * BAR, "T", 300.0, "Propane")
    assert drum.t_k == pytest.approx(PropsSI("T", "P", 1.2 * BAR, "H", h, "Propane"), abs=0.3), f"CoolProp {version}"
    assert drum.vapor_fraction == pytest.approx(PropsSI("Q", "P", 1.2 * BAR, "H", h, "Propane"), abs=0.01)
    assert drum.phase == "two-phase"
    assert all(s.liquid_present for s in r.sections)
    assert any("liquid in the header" in w for w in drum.warnings)


# -- 3. the coldest section, fail and not screened ------------------------------------------------

def test_the_lowest_pressure_section_is_the_coldest_for_a_cooling_gas(lean_gas):
    """Lean gas cools on expansion (positive JT coefficient): colder at every lower pressure."""
    r = screen_header([ReliefSource("PSV-101", lean_gas, 10.0, p_pa=40.0 * BAR, t_k=303.15)],
                      header_5_to_1_2_bar(limit_k=200.0))
    temps = [s.t_k for s in r.sections]
    assert temps == sorted(temps, reverse=True)
    assert r.coldest_section == "knock-out drum"
    assert r.p_coldest_pa == pytest.approx(1.2 * BAR)
    assert all(s.p_screened_pa == s.p_outlet_pa for s in r.sections)
    assert r.band is Band.PASS and r.converged


def test_a_section_colder_than_its_limit_fails(lean_gas):
    src = ReliefSource("PSV-101", lean_gas, 10.0, p_pa=40.0 * BAR, t_k=303.15)
    first = screen_header([src], header_5_to_1_2_bar())
    t_tail, t_drum = first.sections[0].t_k, first.sections[-1].t_k
    limit = 0.5 * (t_tail + t_drum)          # between the tailpipe's and the drum's temperature
    r = screen_header([src], header_5_to_1_2_bar(limit_k=limit))
    assert r.sections[0].band is Band.PASS and r.sections[0].margin_k > 0.0
    assert r.sections[-1].band is Band.FAIL and r.sections[-1].margin_k < 0.0
    assert r.band is Band.FAIL
    assert "knock-out drum" in r.message


def test_a_section_without_a_limit_is_not_screened(lean_gas):
    r = screen_header([ReliefSource("PSV-101", lean_gas, 10.0, p_pa=40.0 * BAR, t_k=303.15)], header_5_to_1_2_bar())
    assert {s.band for s in r.sections} == {Band.NOT_SCREENED}
    assert r.band is Band.NOT_SCREENED
    assert all(math.isnan(s.margin_k) for s in r.sections)


def _fail_at(monkeypatch, p_fail_pa: float):
    """Make every PH flash at ``p_fail_pa`` report non-convergence."""
    original = Fluid.flash_ph

    def flash_ph(self, p_pa, h_j_per_mol, t_guess_k=None):
        res = original(self, p_pa, h_j_per_mol, t_guess_k)
        if p_pa == p_fail_pa:
            return replace(res, converged=False, T=math.nan, phase="unknown", message="forced failure")
        return res

    monkeypatch.setattr(Fluid, "flash_ph", flash_ph)


def test_a_flash_that_did_not_converge_is_not_screened_never_pass(monkeypatch, lean_gas):
    _fail_at(monkeypatch, 1.2 * BAR)
    r = screen_header([ReliefSource("PSV-101", lean_gas, 10.0, p_pa=40.0 * BAR, t_k=303.15)],
                      header_5_to_1_2_bar(limit_k=150.0))
    drum = r.sections[-1]
    assert drum.band is Band.NOT_SCREENED and not drum.converged
    assert math.isnan(drum.t_outlet_k)
    assert "forced failure" in drum.message
    assert [s.band for s in r.sections[:-1]] == [Band.PASS] * 3
    assert r.band is Band.NOT_SCREENED and not r.converged


def test_a_converged_end_below_the_limit_fails_even_when_the_other_end_did_not_converge(monkeypatch, lean_gas):
    src = ReliefSource("PSV-101", lean_gas, 10.0, p_pa=40.0 * BAR, t_k=303.15)
    t_drum_inlet = screen_header([src], header_5_to_1_2_bar()).sections[-1].t_inlet_k
    _fail_at(monkeypatch, 1.2 * BAR)
    r = screen_header([src], header_5_to_1_2_bar(limit_k=t_drum_inlet + 1.0))
    assert r.sections[-1].band is Band.FAIL and not r.sections[-1].converged


def test_a_source_whose_flash_did_not_converge_leaves_the_header_not_screened(monkeypatch, lean_gas):
    original = fh._flash.flash_pt
    monkeypatch.setattr(fh._flash, "flash_pt",
                        lambda *a: replace(original(*a), converged=False, message="forced failure"))
    r = screen_header([ReliefSource("PSV-101", lean_gas, 10.0, p_pa=40.0 * BAR, t_k=303.15)],
                      header_5_to_1_2_bar(limit_k=150.0))
    assert r.band is Band.NOT_SCREENED and not r.converged
    assert r.coldest_section is None
    assert "forced failure" in r.message


def test_a_gas_that_warms_on_expansion_is_screened_at_the_section_inlet(helium):
    """Helium warms on throttling at 300 K (inverse JT; its maximum inversion temperature is about 45 K);
    PR gives a tiny warming here (+0.005 K per section), enough to make the inlet the colder end."""
    secs = sections_from_drops(3.0 * BAR, ["a", "b"], [1.0 * BAR, 1.0 * BAR], [250.0, 250.0])
    r = screen_header([ReliefSource("helium", helium, 1.0, p_pa=3.0 * BAR, t_k=300.0)], secs)
    for s in r.sections:
        assert s.t_outlet_k > s.t_inlet_k
        assert s.p_screened_pa == s.p_inlet_pa and s.t_k == s.t_inlet_k
    assert r.coldest_section == "a"


# -- 4. mixing ----------------------------------------------------------------------------------

GAS_A = {"methane": 0.90, "ethane": 0.10}
GAS_B = {"methane": 0.85, "ethane": 0.10, "propane": 0.05}   # similar composition, one more component


@pytest.fixture(scope="module")
def gases():
    return Fluid(GAS_A), Fluid(GAS_B)


@settings(max_examples=25, deadline=None)
@given(m_a=st.floats(0.1, 50.0), m_b=st.floats(0.1, 50.0), t_a=st.floats(260.0, 330.0),
       t_b=st.floats(260.0, 330.0))
def test_mixing_conserves_mass_moles_and_enthalpy(gases, m_a, m_b, t_a, t_b):
    """Steady adiabatic mixing: mass, moles of each component and enthalpy are conserved; the section's
    state carries the mixture's enthalpy (a PT flash at the reported temperature gives it back).  Each
    source's enthalpy is recomputed with its own Fluid, independent of the mixture's model.  The PH
    flash's tolerance is 1e-9 relative (about 1e-5 J/mol here): the round trip is held to 1e-3 J/mol."""
    fa, fb = gases
    srcs = [ReliefSource("A", fa, m_a, p_pa=40.0 * BAR, t_k=t_a), ReliefSource("B", fb, m_b, p_pa=30.0 * BAR, t_k=t_b)]
    r = screen_header(srcs, [HeaderSection("main header", 3.0 * BAR, 1.5 * BAR, None)])
    assert r.converged, r.message
    assert r.mass_flow_kg_per_s == pytest.approx(m_a + m_b, rel=1e-12)
    n = [m_a / fa.molar_mass, m_b / fb.molar_mass]
    assert r.molar_flow_mol_per_s == pytest.approx(sum(n), rel=1e-12)
    assert r.molar_flow_mol_per_s * r.molar_mass_kg_per_mol == pytest.approx(m_a + m_b, rel=1e-12)
    for k, cid in enumerate(r.component_ids):
        moles_in = sum(n_i * dict(zip(f.ids, f.zs, strict=True)).get(cid, 0.0) for n_i, f in zip(n, gases, strict=True))
        assert r.molar_flow_mol_per_s * r.zs[k] == pytest.approx(moles_in, rel=1e-12)
    h_own = [fa.flash_pt(t_a, 40.0 * BAR).h, fb.flash_pt(t_b, 30.0 * BAR).h]
    assert [s.h_j_per_mol for s in r.sources] == pytest.approx(h_own, abs=1e-6)
    assert r.molar_flow_mol_per_s * r.h_j_per_mol == pytest.approx(float(np.dot(n, h_own)), rel=1e-12, abs=1e-6)
    mixture = Fluid(list(zip(r.component_ids, r.zs, strict=True)))
    s = r.sections[0]
    assert mixture.flash_pt(s.t_k, s.p_screened_pa).h == pytest.approx(r.h_j_per_mol, abs=1e-3)


@settings(max_examples=15, deadline=None)
@given(m_a=st.floats(0.1, 50.0), m_b=st.floats(0.1, 50.0), t_a=st.floats(260.0, 330.0),
       t_b=st.floats(260.0, 330.0))
def test_the_mixed_temperature_lies_between_the_sources_alone(gases, m_a, m_b, t_a, t_b):
    """For similar compositions the mixture's enthalpy is the flow-weighted mean of the sources' (heat of
    mixing of gases at 1.5 bar: well under 1 J/mol), so its temperature lies between the temperatures the
    sources reach alone at that pressure; 0.01 K allows for that heat of mixing."""
    fa, fb = gases
    a = ReliefSource("A", fa, m_a, p_pa=40.0 * BAR, t_k=t_a)
    b = ReliefSource("B", fb, m_b, p_pa=30.0 * BAR, t_k=t_b)
    secs = [HeaderSection("main header", 3.0 * BAR, 1.5 * BAR, None)]
    t_a_alone = screen_header([a], secs).sections[0].t_k
    t_b_alone = screen_header([b], secs).sections[0].t_k
    t_mix = screen_header([a, b], secs).sections[0].t_k
    assert min(t_a_alone, t_b_alone) - 0.01 <= t_mix <= max(t_a_alone, t_b_alone) + 0.01


def test_a_source_given_by_its_enthalpy_mixes_like_one_given_by_its_state(gases):
    fa, fb = gases
    h_b = fb.flash_pt(280.0, 30.0 * BAR).h
    secs = [HeaderSection("main header", 3.0 * BAR, 1.5 * BAR, None)]
    by_state = screen_header([ReliefSource("A", fa, 5.0, p_pa=40.0 * BAR, t_k=310.0),
                              ReliefSource("B", fb, 3.0, p_pa=30.0 * BAR, t_k=280.0)], secs)
    by_h = screen_header([ReliefSource("A", fa, 5.0, p_pa=40.0 * BAR, t_k=310.0),
                          ReliefSource("B", fb, 3.0, h_j_per_mol=h_b)], secs)
    assert by_h.sections[0].t_k == pytest.approx(by_state.sections[0].t_k, abs=1e-9)
    assert by_h.sources[1].enthalpy_from == "given"


def test_the_enthalpy_reference_is_the_ideal_gas_at_298_15_k(gases):
    """The common reference that makes sources' enthalpies addable: every component's ideal-gas enthalpy
    is zero at T_REF (jtcheck's convention), so a gas at T_REF and 1 Pa has h close to 0 (its residual
    enthalpy there, about P (B - T dB/dT), is of the order of 1e-4 J/mol)."""
    fa, _ = gases
    r = screen_header([ReliefSource("A", fa, 1.0, p_pa=1.0, t_k=T_REF)], [HeaderSection("tip", 1.0, 0.5, None)])
    assert r.h_j_per_mol == pytest.approx(0.0, abs=1e-3)


# -- 5. the issue: screened at the valve's back pressure vs along the header ----------------------

def test_a_relief_stream_is_colder_at_the_knock_out_drum_than_at_the_valve_back_pressure(lean_gas):
    """Invented Kestrel Ridge case: separator relief valve set at 100 barg, 10 % overpressure, relieving
    at 30 degC into a header at 3 barg back pressure, falling to 0.2 barg at the knock-out drum; invented
    header limit -31 degC.  Today's relief screening stops at 3 barg and passes; along the path the
    knock-out drum at 0.2 barg is colder and fails.  The header's temperature at 3 barg equals today's
    downstream temperature (the same isenthalp), within the PH flash tolerance."""
    limit_k = 273.15 - 31.0
    today = relief_valve_case(lean_gas, barg(100.0), 0.10, 303.15, barg(3.0), 0.0, header_limit_k=limit_k)
    assert today.converged and today.below_header_limit is False

    src = ReliefSource("PSV-101 separator", lean_gas, 25.0, p_pa=today.p_relieving_pa, t_k=303.15)
    secs = sections_from_drops(barg(3.0), ["tailpipe", "sub-header", "main header", "knock-out drum"],
                               [0.4 * BAR, 0.8 * BAR, 1.2 * BAR, 0.4 * BAR], [limit_k] * 4)
    assert secs[-1].p_outlet_pa == pytest.approx(barg(0.2))
    r = screen_header([src], secs)
    assert r.sections[0].t_inlet_k == pytest.approx(today.t_downstream_k, abs=0.01)
    assert r.t_coldest_k < today.t_downstream_k
    assert r.coldest_section == "knock-out drum"
    assert r.sections[-1].band is Band.FAIL
    assert r.band is Band.FAIL


# -- inputs and output ------------------------------------------------------------------------------

def test_a_section_whose_outlet_is_above_its_inlet_is_refused():
    with pytest.raises(InputError, match="main header") as exc:
        HeaderSection("main header", 2.0 * BAR, 2.5 * BAR, None)
    assert exc.value.field == "p_outlet_pa"


def test_sections_out_of_pressure_order_are_refused(lean_gas):
    secs = [HeaderSection("tailpipe", 3.0 * BAR, 2.0 * BAR, None), HeaderSection("main", 2.5 * BAR, 1.5 * BAR, None)]
    with pytest.raises(InputError, match="'main'.*'tailpipe'") as exc:
        screen_header([ReliefSource("PSV", lean_gas, 1.0, p_pa=40.0 * BAR, t_k=300.0)], secs)
    assert exc.value.field == "sections[1].p_inlet_pa"


def test_a_section_inlet_within_the_tolerance_of_the_previous_outlet_is_accepted(lean_gas):
    secs = [HeaderSection("tailpipe", 3.0 * BAR, 2.0 * BAR, None),
            HeaderSection("main", 2.0 * BAR + 50.0, 1.5 * BAR, None)]
    assert screen_header([ReliefSource("PSV", lean_gas, 1.0, p_pa=40.0 * BAR, t_k=300.0)], secs).converged


def test_a_source_below_the_header_inlet_pressure_is_refused(lean_gas):
    with pytest.raises(InputError, match="PSV") as exc:
        screen_header([ReliefSource("PSV", lean_gas, 1.0, p_pa=2.0 * BAR, t_k=300.0)],
                      [HeaderSection("tailpipe", 3.0 * BAR, 2.0 * BAR, None)])
    assert exc.value.field == "sources[0].p_pa"


def test_sources_on_different_equations_of_state_are_refused(gases):
    fa, fb = gases
    secs = [HeaderSection("tailpipe", 3.0 * BAR, 2.0 * BAR, None)]
    with pytest.raises(InputError, match="one equation of state") as exc:
        screen_header([ReliefSource("A", fa, 1.0, p_pa=40.0 * BAR, t_k=300.0),
                       ReliefSource("B", fb.with_eos("SRK"), 1.0, p_pa=40.0 * BAR, t_k=300.0)], secs)
    assert exc.value.field == "sources[1].fluid"


def test_sources_with_different_kij_for_one_pair_are_refused(gases):
    fa, _ = gases
    other = Fluid(GAS_A, kij={("methane", "ethane"): 0.05})
    with pytest.raises(InputError, match="kij") as exc:
        screen_header([ReliefSource("A", fa, 1.0, p_pa=40.0 * BAR, t_k=300.0),
                       ReliefSource("B", other, 1.0, p_pa=40.0 * BAR, t_k=300.0)],
                      [HeaderSection("tailpipe", 3.0 * BAR, 2.0 * BAR, None)])
    assert exc.value.field == "sources"


def test_a_source_keeps_its_own_kij_in_the_mixture():
    """A user kij of one source is carried into the mixture's model: its enthalpy is the same as with its
    own fluid."""
    own = Fluid(GAS_A, kij={("methane", "ethane"): 0.05})
    r = screen_header([ReliefSource("A", own, 1.0, p_pa=40.0 * BAR, t_k=250.0),
                       ReliefSource("B", Fluid({"propane": 1.0}), 1.0, p_pa=40.0 * BAR, t_k=350.0)],
                      [HeaderSection("tailpipe", 3.0 * BAR, 2.0 * BAR, None)])
    assert r.sources[0].h_j_per_mol == pytest.approx(own.flash_pt(250.0, 40.0 * BAR).h, abs=1e-6)
    assert "user values" in r.basis["kij_basis"]


@pytest.mark.parametrize(("kwargs", "field"), [
    (dict(p_pa=40.0 * BAR), "t_k"),
    (dict(t_k=300.0), "p_pa"),
    (dict(p_pa=40.0 * BAR, t_k=300.0, h_j_per_mol=-500.0), "h_j_per_mol"),
], ids=["no temperature", "no pressure", "enthalpy and temperature"])
def test_a_source_needs_its_state_or_its_enthalpy(lean_gas, kwargs, field):
    with pytest.raises(InputError, match="PSV-7") as exc:
        ReliefSource("PSV-7", lean_gas, 1.0, **kwargs)
    assert exc.value.field == field


def test_a_source_needs_a_positive_mass_flow(lean_gas):
    with pytest.raises(InputError) as exc:
        ReliefSource("PSV-7", lean_gas, 0.0, p_pa=40.0 * BAR, t_k=300.0)
    assert exc.value.field == "mass_flow_kg_per_s"


def test_sections_from_drops_chain_inlet_to_outlet():
    secs = sections_from_drops(barg(3.0), ["a", "b", "c"], [0.5 * BAR, 1.0 * BAR, 0.0], [244.0, None, 230.0],
                               ["A333 Gr 6", "A106 B", ""])
    assert [s.p_inlet_pa for s in secs[1:]] == [s.p_outlet_pa for s in secs[:-1]]
    assert secs[-1].p_outlet_pa == pytest.approx(barg(1.5))
    assert [s.limit_k for s in secs] == [244.0, None, 230.0]
    with pytest.raises(InputError) as exc:
        sections_from_drops(2.0 * BAR, ["a"], [2.5 * BAR], [None])
    assert exc.value.field == "dp_pas"


def test_the_result_is_plain_json(lean_gas):
    r = screen_header([ReliefSource("PSV-101", lean_gas, 10.0, p_pa=40.0 * BAR, t_k=303.15)],
                      header_5_to_1_2_bar(limit_k=250.0))
    d = json.loads(json.dumps(r.to_dict()))
    assert d["sections"][-1]["band"] == "pass"
    assert d["coldest_section"] == "knock-out drum"
    assert d["basis"]["eos"] == "PR" and "isenthalpic" in d["basis"]["method"]
