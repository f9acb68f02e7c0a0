"""GERG-2008 (Kunz and Wagner, J. Chem. Eng. Data 57 (2012) 3032-3091) behind the model interface.

Check values and references (each named beside its use):
- the check values printed with the NIST reference implementation of GERG-2008 (usnistgov/AGA8,
  AGA8CODE/C/GERG2008.cpp, main() under TEST_GERG, commit 143c929d; 21-component mixture at 400 K, 50 MPa);
- pyaga8 0.1.18 (a Rust port of the AGA8 reference code, from the package registry);
- teqp 0.23.2 (model kind "GERG2008resid"), an independent implementation of the residual part;
- CoolProp 8.0.0 HEOS: pure fluids on their own reference equations (hydrogen: Leachman et al. 2009;
  CO2: Span and Wagner 1996), mixtures with the GERG-2008 reducing and departure functions but those
  pure-fluid equations, so they differ slightly from GERG-2008's own pure-fluid equations.
"""
from __future__ import annotations

import math

import numpy as np
import pytest
from CoolProp import CoolProp
from hypothesis import given, settings
from hypothesis import strategies as st

from jtcheck.errors import InputError
from jtcheck.thermo.flash import flash_ph, flash_pt
from jtcheck.thermo.models import interface
from jtcheck.thermo.models.conventions import GIBBS, LIQUID, P_REF, T_REF, VAPOUR
from jtcheck.thermo.models.gerg2008 import (
    EXTENDED_RANGE,
    GERG_COMPONENTS,
    NORMAL_RANGE,
    GergMixture,
    make_gerg_mixture,
)
from jtcheck.thermo.models.gerg2008 import kernels as gk
from jtcheck.thermo.models.gerg2008.mixture import tables
from jtcheck.thermo.models.gerg2008.properties import gerg_state

R = gk.R_GERG
RSR = gk.R_STAR / gk.R_GERG

# the 21-component mixture of the reference implementation's check (GERG2008.cpp, main)
X21 = np.array([0.77824, 0.02, 0.06, 0.08, 0.03, 0.0015, 0.003, 0.0005, 0.00165, 0.00215, 0.00088, 0.00024,
                0.00015, 0.00009, 0.004, 0.005, 0.002, 0.0001, 0.0025, 0.007, 0.001])

NATURAL_GAS = {"methane": 0.85, "ethane": 0.07, "propane": 0.03, "n-butane": 0.01, "nitrogen": 0.02,
               "carbon dioxide": 0.02}


@pytest.fixture(scope="module")
def mix21() -> GergMixture:
    return make_gerg_mixture(GERG_COMPONENTS)


def _ref_ideal_offsets(x):
    """The ideal-gas h [J/mol] and s + R sum x ln x [J/(mol K)] at 298.15 K and 101.325 kPa of the reference
    implementation, whose rounded integration constants n1, n2 (pure.csv n1_ref, n2_ref) make them zero only to
    about 1e-5 J/mol; jtcheck integrates exactly from 298.15 gk.  Formulas of GERG2008.cpp Alpha0GERG/SetupGERG."""
    tb = tables()
    T0 = T_REF
    d0 = P_REF / (R * T0)
    a01 = 0.0
    a00 = 0.0
    for xi, c in zip(x, GERG_COMPONENTS, strict=True):
        row = tb.pure[c]
        n3 = RSR * (row["n3"] - 1.0)
        n2 = RSR * (row["n2_ref"] + T0) - T0
        n1 = RSR * row["n1_ref"] - math.log(d0 / 1000.0)
        s0 = 0.0
        s1 = 0.0
        for k, (nk, th) in enumerate(zip((row["n4"], row["n5"], row["n6"], row["n7"]),
                                         (row["th4_k"], row["th5_k"], row["th6_k"], row["th7_k"]), strict=True)):
            if th <= 0.0:
                continue
            u = th / T0
            if k in (0, 2):
                s0 += RSR * nk * math.log(math.sinh(u))
                s1 += RSR * nk * u / math.tanh(u)
            else:
                s0 -= RSR * nk * math.log(math.cosh(u))
                s1 -= RSR * nk * u * math.tanh(u)
        a00 += xi * (math.log(d0 / 1000.0) + n1 + n2 / T0 - n3 * math.log(T0) + s0)
        a01 += xi * (n3 + n2 / T0 + s1)
    h0 = R * T0 * (1.0 + a01)
    s0 = R * (a01 - a00)
    return h0, s0


def test_reference_implementation_check_values(mix21):
    """GERG2008.cpp main(): 400 K, 50 MPa, the 21-component mixture (values printed to 16 digits there)."""
    st_ = gerg_state(mix21, 400.0, 50e6, X21, VAPOUR)
    h0, s0 = _ref_ideal_offsets(X21)
    h_ref = st_.h + h0
    s_ref = st_.s + s0
    expected = {
        "molar mass [g/mol]": (st_.molar_mass * 1000.0, 20.54274450160000),
        "density [mol/l]": (st_.rho / 1000.0, 12.79828626082062),
        "Z": (st_.Z, 1.174690666383717),
        "dP/drho [kPa/(mol/l)]": (st_.dP_drho, 7000.694030193327),
        "dP/dT [kPa/K]": (st_.dP_dT / 1000.0, 235.9832292593096),
        "U [J/mol]": (h_ref - 50e6 / st_.rho, -2746.492901212530),
        "H [J/mol]": (h_ref, 1160.280160510973),
        "S [J/(mol K)]": (s_ref, -38.57590392409089),
        "cv [J/(mol K)]": (st_.cv, 39.02948218156372),
        "cp [J/(mol K)]": (st_.cp, 58.45522051000366),
        "w [m/s]": (st_.w, 714.4248840596024),
        "G [J/mol]": (h_ref - 400.0 * s_ref, 16590.64173014733),
        "JT [K/kPa]": (st_.jt * 1000.0, 7.155629581480913e-05),
        "kappa": (st_.kappa, 2.683820255058032),
    }
    for name, (got, want) in expected.items():
        assert got == pytest.approx(want, rel=1e-10, abs=1e-10), name
    p = gk.props(mix21.kernel_params, 400.0, 50e6, X21, GIBBS)
    assert 50e6 * p[1] / (R * 400.0) == pytest.approx(1.174690666383717, rel=1e-12)


def test_reference_offsets_are_tiny():
    """The reference implementation's ideal-gas reference is ours to rounding (about 1e-4 J/mol)."""
    h0, s0 = _ref_ideal_offsets(X21)
    assert abs(h0) < 1e-3 and abs(s0) < 1e-5


def _pyaga8_state(comp, T, P_kpa):
    import pyaga8

    g = pyaga8.Gerg2008()
    c = pyaga8.Composition()
    names = {"carbon dioxide": "carbon_dioxide", "n-butane": "n_butane", "n-pentane": "n_pentane",
             "n-hexane": "hexane", "n-heptane": "heptane", "n-octane": "octane", "n-nonane": "nonane",
             "n-decane": "decane", "carbon monoxide": "carbon_monoxide", "hydrogen sulfide": "hydrogen_sulfide"}
    for cid, xi in comp.items():
        setattr(c, names.get(cid, cid), float(xi))
    g.set_composition(c)
    g.temperature = T
    g.pressure = P_kpa
    g.calc_density(0)
    g.calc_properties()
    return g


def _random_gas(rng, n_extra):
    """A methane-rich gas with n_extra other GERG-2008 components (single-phase gas at T >= 250 K, P <= 20 MPa)."""
    others = [c for c in GERG_COMPONENTS if c != "methane"]
    light = ["nitrogen", "carbon dioxide", "ethane", "hydrogen", "helium", "argon", "oxygen", "carbon monoxide",
             "propane", "hydrogen sulfide"]
    pick = list(rng.choice(light, size=min(n_extra, len(light)), replace=False))
    heavy = [c for c in others if c not in light]
    pick += list(rng.choice(heavy, size=int(rng.integers(0, 3)), replace=False))
    w = rng.dirichlet(np.ones(len(pick))) * rng.uniform(0.02, 0.4)
    comp = {"methane": 1.0 - w.sum()}
    for c, wi in zip(pick, w, strict=True):
        comp[c] = wi if c in light else wi * 0.05
    s = sum(comp.values())
    return {c: v / s for c, v in comp.items()}


def test_against_pyaga8_random_states():
    """pyaga8 0.1.18 GERG-2008 at 200 random gases and states: density, Z, cp, cv, w, JT, and h, s to 1e-8."""
    rng = np.random.default_rng(2008)
    worst = 0.0
    for _ in range(200):
        comp = _random_gas(rng, int(rng.integers(1, 6)))
        T = float(rng.uniform(250.0, 450.0))
        P = float(rng.uniform(0.1e6, 20e6))
        ids = list(comp)
        x = np.array([comp[c] for c in ids])
        mix = make_gerg_mixture(ids)
        ours = gerg_state(mix, T, P, x, VAPOUR)
        ref = _pyaga8_state(comp, T, P / 1000.0)
        xf = np.zeros(21)
        for c, v in comp.items():
            xf[GERG_COMPONENTS.index(c)] = v
        h0, s0 = _ref_ideal_offsets(xf)
        pairs = [(ours.rho / 1000.0, ref.d), (ours.Z, ref.z), (ours.cp, ref.cp), (ours.cv, ref.cv), (ours.w, ref.w),
                 (ours.jt * 1000.0, ref.jt), (ours.h + h0, ref.h), (ours.s + s0, ref.s)]
        for k, (a, b) in enumerate(pairs):
            scale = max(abs(b), 1.0) if k >= 6 else abs(b)
            err = abs(a - b) / scale
            worst = max(worst, err)
            assert err < 1e-8, (comp, T, P, k, a, b)
    assert worst < 1e-8


TEQP_NAMES = {"carbon dioxide": "carbondioxide", "carbon monoxide": "carbonmonoxide",
              "hydrogen sulfide": "hydrogensulfide"}


def test_alphar_derivatives_against_teqp():
    """alpha_r and delta/tau derivatives equal teqp 0.23.2's GERG2008resid (all 21 components, random x, T, rho)."""
    import teqp

    rng = np.random.default_rng(15)
    model = teqp.make_model({"kind": "GERG2008resid",
                             "model": {"names": [TEQP_NAMES.get(c, c) for c in GERG_COMPONENTS]}})
    mix = make_gerg_mixture(GERG_COMPONENTS)
    for _ in range(40):
        x = rng.dirichlet(np.ones(21) * 0.3)
        T = float(rng.uniform(150.0, 600.0))
        rho = float(rng.uniform(10.0, 15000.0))
        A, ad, add, addd, at, att, adt, addt = gk.residual_tv(mix.kernel_params, T, rho, x)
        ref = [model.get_Ar00(T, rho, x), model.get_Ar01(T, rho, x), model.get_Ar02(T, rho, x),
               model.get_Ar03(T, rho, x), model.get_Ar10(T, rho, x), model.get_Ar20(T, rho, x),
               model.get_Ar11(T, rho, x), model.get_Ar12(T, rho, x)]
        for got, want in zip((A, ad, add, addd, at, att, adt, addt), ref, strict=True):
            assert got == pytest.approx(want, rel=1e-9, abs=1e-12)


def _richardson(f, h):
    """Derivative of f at 0 by Richardson-extrapolated central differences (error O(h^4))."""
    d1 = (f(h) - f(-h)) / (2 * h)
    d2 = (f(h / 2) - f(-h / 2)) / h
    return (4 * d2 - d1) / 3


def _F(prm, T, V, nvec):
    """n alpha_r at (T, V, n): the residual Helmholtz energy over RT."""
    ntot = nvec.sum()
    return ntot * gk.residual_tv(prm, T, ntot / V, nvec / ntot)[0]


COMPS6 = ["methane", "nitrogen", "carbon dioxide", "ethane", "propane", "hydrogen"]


@settings(max_examples=25, deadline=None)
@given(w=st.lists(st.floats(0.05, 1.0), min_size=6, max_size=6), T=st.floats(220.0, 420.0),
       P=st.floats(1e5, 15e6))
def test_fugacity_by_numerical_differentiation(w, T, P):
    """ln phi_i = (dF/dn_i)_{T,V} - ln Z with F = n alpha_r, by central differences; sum x ln phi = ln phi_mix;
    Gibbs-Duhem sum_i n_i d ln phi_i/d n_j = 0; and the T, P, n derivatives of fug_derivs by differences."""
    mix = make_gerg_mixture(COMPS6)
    prm = mix.kernel_params
    x = np.array(w) / sum(w)
    n = x.size
    lnphi = np.empty(n)
    Z = gk.ln_phi(prm, T, P, x, VAPOUR, lnphi)
    V = Z * R * T / P
    for i in range(n):
        e = np.zeros(n)
        e[i] = 1.0
        d = _richardson(lambda h, e=e: _F(prm, T, V, x + h * e), 1e-4)
        assert lnphi[i] == pytest.approx(d - math.log(Z), abs=1e-8)
    A = gk.residual_tv(prm, T, 1.0 / V, x)[0]
    assert float(x @ lnphi) == pytest.approx(A + Z - 1.0 - math.log(Z), abs=1e-10)
    lp = np.empty(n)
    dn = np.empty((n, n))
    dT = np.empty(n)
    dP = np.empty(n)
    vb = np.empty(n)
    Z2 = gk.fug_derivs(prm, T, P, x, VAPOUR, lp, dn, dT, dP, vb)
    assert Z2 == pytest.approx(Z, rel=1e-14)
    np.testing.assert_allclose(lp, lnphi, rtol=0, atol=1e-12)
    np.testing.assert_allclose(x @ dn, 0.0, atol=1e-9)
    np.testing.assert_allclose(dn, dn.T, atol=1e-12)
    def lnphi_at(T_, P_, x_):
        out = np.empty(n)
        gk.ln_phi(prm, T_, P_, x_, VAPOUR, out)
        return out

    for j in range(n):
        e = np.zeros(n)
        e[j] = 1.0
        num = _richardson(lambda h, e=e: lnphi_at(T, P, (x + h * e) / (1 + h)), 1e-4)
        np.testing.assert_allclose(dn[:, j], num, rtol=1e-5, atol=1e-6)
    np.testing.assert_allclose(dT, _richardson(lambda h: lnphi_at(T + h, P, x), 1e-2), rtol=1e-5, atol=1e-8)
    np.testing.assert_allclose(dP * P, _richardson(lambda h: lnphi_at(T, P * (1 + h), x), 1e-4), rtol=1e-5,
                               atol=1e-8)
    np.testing.assert_allclose(vb, R * T * (dP + 1.0 / P), rtol=1e-12)
    assert float(x @ vb) == pytest.approx(V, rel=1e-10)


def test_props_consistent_with_derivatives():
    """h and s of props: dh/dT = cp and T ds/dT = cp at constant P (central differences), natural gas."""
    ids = list(NATURAL_GAS)
    z = np.array([NATURAL_GAS[c] for c in ids])
    prm = make_gerg_mixture(ids).kernel_params
    for T, P in [(300.0, 5e6), (250.0, 10e6), (400.0, 30e6)]:
        p0 = gk.props(prm, T, P, z, GIBBS)
        pp = gk.props(prm, T + 0.01, P, z, GIBBS)
        pm = gk.props(prm, T - 0.01, P, z, GIBBS)
        assert (pp[2] - pm[2]) / 0.02 == pytest.approx(p0[4], rel=1e-6)
        assert T * (pp[3] - pm[3]) / 0.02 == pytest.approx(p0[4], rel=1e-6)


def test_interface_dispatch_both_families():
    """The interface stubs return each family's result (Python level) and compile for both tuples."""
    from jtcheck.thermo.fluid import Fluid

    ids = list(NATURAL_GAS)
    z = np.array([NATURAL_GAS[c] for c in ids])
    g = make_gerg_mixture(ids).kernel_params
    assert interface.props(g, 300.0, 5e6, z, GIBBS)[2] == gk.props(g, 300.0, 5e6, z, GIBBS)[2]
    cub = Fluid(NATURAL_GAS, eos="PR").mixture.kernel_params
    from jtcheck.thermo.models.cubic import kernels as ck
    assert interface.props(cub, 300.0, 5e6, z, GIBBS)[2] == ck.props(cub, 300.0, 5e6, z, GIBBS)[2]
    tc, pc, om = interface.critical_constants(g)
    assert tc[0] == pytest.approx(190.564, abs=0.1)


def test_unknown_component_refused():
    with pytest.raises(InputError) as e:
        make_gerg_mixture(["methane", "ammonia"])
    assert "ammonia" in str(e.value) and "helium" in str(e.value) and "composition" in str(e.value)
    with pytest.raises(InputError):
        make_gerg_mixture(["methane", "methane"])


def test_ranges_from_the_paper():
    assert NORMAL_RANGE == {"t_min_k": 90.0, "t_max_k": 450.0, "p_max_pa": 35e6}
    assert EXTENDED_RANGE == {"t_min_k": 60.0, "t_max_k": 700.0, "p_max_pa": 70e6}


def test_density_roots_and_gibbs_choice():
    """Pure CO2 at 250 K: liquid root at 40 bar (above saturation, 17.9 bar from CoolProp 8.0.0) and vapour
    root at 10 bar; where both roots exist GIBBS picks the one of lower Gibbs energy."""
    prm = make_gerg_mixture(["carbon dioxide"]).kernel_params
    z = np.ones(1)
    rl = gk.density_tp(prm, 250.0, 40e5, z, LIQUID)
    rv = gk.density_tp(prm, 250.0, 40e5, z, VAPOUR)
    rg = gk.density_tp(prm, 250.0, 40e5, z, GIBBS)
    assert rl > 20000.0 and rg == rl
    assert gk.pip(prm, 250.0, 40e5, z, GIBBS) > 1.0
    rg10 = gk.density_tp(prm, 250.0, 10e5, z, GIBBS)
    assert rg10 < 1000.0 and gk.pip(prm, 250.0, 10e5, z, GIBBS) < 1.0
    assert rv <= rl


def _coolprop_mixture_names(ids):
    names = {"methane": "Methane", "ethane": "Ethane", "propane": "Propane", "n-butane": "n-Butane",
             "nitrogen": "Nitrogen", "carbon dioxide": "CarbonDioxide", "n-pentane": "n-Pentane",
             "n-hexane": "n-Hexane"}
    return [names[c] for c in ids]


def test_ph_flash_single_phase_vs_coolprop():
    """Lean natural gas 100 bar, 313.15 K -> 30 bar: GERG-2008 outlet temperature within 0.2 K of CoolProp 8.0.0
    HEOS (its mixture model uses the GERG-2008 reducing and departure functions with other pure-fluid equations)."""
    ids = list(NATURAL_GAS)
    z = np.array([NATURAL_GAS[c] for c in ids])
    mix = make_gerg_mixture(ids)
    h_in = flash_pt(mix, 313.15, 100e5, z).h
    out = flash_ph(mix, 30e5, h_in, z)
    assert out.converged and out.beta == 1.0
    AS = CoolProp.AbstractState("HEOS", "&".join(_coolprop_mixture_names(ids)))
    AS.set_mole_fractions(list(z))
    AS.update(CoolProp.PT_INPUTS, 100e5, 313.15)
    h_cp = AS.hmolar()
    AS.update(CoolProp.HmolarP_INPUTS, h_cp, 30e5)
    assert out.T == pytest.approx(AS.T(), abs=0.2)
    assert out.T < 313.15 - 10.0


def test_pt_flash_two_phase_vs_coolprop():
    """Rich gas at 250 K, 30 bar: vapour fraction and phase compositions close to CoolProp 8.0.0 HEOS
    (GERG-2008 mixing rules, other pure-fluid equations); flash consistency: equal fugacities."""
    ids = ["methane", "ethane", "propane", "n-butane", "nitrogen", "carbon dioxide"]
    z = np.array([0.70, 0.10, 0.10, 0.06, 0.02, 0.02])
    mix = make_gerg_mixture(ids)
    r = flash_pt(mix, 250.0, 30e5, z)
    assert r.converged and 0.0 < r.beta < 1.0
    lx = np.empty(6)
    ly = np.empty(6)
    gk.ln_phi(mix.kernel_params, 250.0, 30e5, r.x, LIQUID, lx)
    gk.ln_phi(mix.kernel_params, 250.0, 30e5, r.y, VAPOUR, ly)
    np.testing.assert_allclose(np.log(r.x) + lx, np.log(r.y) + ly, atol=1e-9)
    AS = CoolProp.AbstractState("HEOS", "&".join(_coolprop_mixture_names(ids)))
    AS.set_mole_fractions(list(z))
    AS.update(CoolProp.PT_INPUTS, 30e5, 250.0)
    assert r.beta == pytest.approx(AS.Q(), abs=0.01)
    np.testing.assert_allclose(r.y, AS.mole_fractions_vapor(), atol=0.005)


def test_hydrogen_warms_on_throttling():
    """Pure hydrogen 100 -> 10 bar from 300 K warms (inversion temperature about 200 K at low pressure,
    Leachman et al., J. Phys. Chem. Ref. Data 38 (2009) 721); outlet within 0.3 K of CoolProp 8.0.0 Hydrogen HEOS."""
    mix = make_gerg_mixture(["hydrogen"])
    z = np.ones(1)
    h_in = flash_pt(mix, 300.0, 100e5, z).h
    out = flash_ph(mix, 10e5, h_in, z)
    assert out.converged
    assert out.T > 300.0
    h_cp = CoolProp.PropsSI("Hmolar", "T", 300.0, "P", 100e5, "Hydrogen")
    T_cp = CoolProp.PropsSI("T", "Hmolar", h_cp, "P", 10e5, "Hydrogen")
    assert out.T == pytest.approx(T_cp, abs=0.3)


def test_co2_saturation_vs_coolprop():
    """Pure CO2: a PH flash inside the dome sits at the saturation temperature, within 0.3 K of CoolProp 8.0.0
    (Span and Wagner 1996) at 20, 40 and 60 bar."""
    mix = make_gerg_mixture(["carbon dioxide"])
    z = np.ones(1)
    for P in (20e5, 40e5, 60e5):
        T_cp = CoolProp.PropsSI("T", "P", P, "Q", 0.5, "CO2")
        hl = gk.props(mix.kernel_params, T_cp - 0.5, P, z, LIQUID)[2]
        hv = gk.props(mix.kernel_params, T_cp + 0.5, P, z, VAPOUR)[2]
        out = flash_ph(mix, P, 0.5 * (hl + hv), z)
        assert out.converged and 0.0 < out.beta < 1.0
        assert out.T == pytest.approx(T_cp, abs=0.3)


def test_no_spurious_density_root():
    """Inside the two-phase region P(rho) of GERG-2008 oscillates (here from -880 MPa to +2700 MPa between
    1500 and 4200 mol/m^3) and crosses P at spurious 'roots'.  A liquid-like hexane-rich phase at 300.15 K,
    10 MPa has no vapour-like root: every phase code returns the liquid root, on a rising branch of P(rho)."""
    ids = ["methane", "ethane", "propane", "n-butane", "n-pentane", "n-hexane", "nitrogen", "carbon dioxide"]
    w = np.array([0.18915737, 0.0645476, 0.08099638, 0.087638, 0.09233178, 0.4750693, 0.00196908, 0.00829049])
    prm = make_gerg_mixture(ids).kernel_params
    rhos = {ph: gk.density_tp(prm, 300.15, 1e7, w, ph) for ph in (GIBBS, LIQUID, VAPOUR)}
    assert rhos[GIBBS] == rhos[LIQUID] == rhos[VAPOUR]
    r = gk.residual_tv(prm, 300.15, rhos[GIBBS], w)
    assert rhos[GIBBS] * R * 300.15 * (1.0 + r[1]) == pytest.approx(1e7, rel=1e-9)
    assert 1.0 + 2.0 * r[1] + r[2] > 0.0 and 1.0 + r[1] < 0.6


def test_rich_gas_two_phase_flash_consistent():
    """Rich gas at 300.15 K, 10 MPa (the case that found the spurious root): two phases with equal fugacities
    and a stable split (tpd of the feed negative)."""
    ids = ["methane", "ethane", "propane", "n-butane", "n-pentane", "n-hexane", "nitrogen", "carbon dioxide"]
    z = np.array([0.70, 0.10, 0.08, 0.04, 0.02, 0.02, 0.02, 0.02])
    mix = make_gerg_mixture(ids)
    r = flash_pt(mix, 300.15, 1e7, z)
    assert r.converged and 0.0 < r.beta < 1.0 and r.tpd_min < 0.0
    lx = np.empty(8)
    ly = np.empty(8)
    gk.ln_phi(mix.kernel_params, 300.15, 1e7, r.x, GIBBS, lx)
    gk.ln_phi(mix.kernel_params, 300.15, 1e7, r.y, GIBBS, ly)
    np.testing.assert_allclose(np.log(r.x) + lx, np.log(r.y) + ly, atol=1e-9)


def test_rich_gas_letdown_two_phase():
    """Rich gas 100 bar, 300.15 K -> 10 bar: the PH flash lands in the two-phase region (between the PT flashes at
    250 K and 255 K, whose enthalpies bracket the inlet's), and agrees with a PT flash at its temperature."""
    ids = ["methane", "ethane", "propane", "n-butane", "n-pentane", "n-hexane", "nitrogen", "carbon dioxide"]
    z = np.array([0.70, 0.10, 0.08, 0.04, 0.02, 0.02, 0.02, 0.02])
    mix = make_gerg_mixture(ids)
    h_in = flash_pt(mix, 300.15, 100e5, z).h
    assert flash_pt(mix, 250.0, 10e5, z).h < h_in < flash_pt(mix, 255.0, 10e5, z).h
    out = flash_ph(mix, 10e5, h_in, z, 300.15)
    assert out.converged and out.phase == "two-phase" and 250.0 < out.T < 255.0
    check = flash_pt(mix, out.T, 10e5, z)
    assert check.beta == pytest.approx(out.beta, abs=1e-8) and check.h == pytest.approx(h_in, abs=1e-5)


def test_cold_liquid_density_root():
    """Near-pure n-hexane at 210.62 K and 10 bar is a liquid denser than three times its critical density
    (CoolProp 8.0.0: 8.49 kmol/m^3; its n-hexane equation differs from GERG-2008's by about 0.25 % here); the
    liquid search reaches it."""
    prm = make_gerg_mixture(["n-hexane"]).kernel_params
    rho = gk.density_tp(prm, 210.0, 10e5, np.ones(1), LIQUID)
    assert rho == pytest.approx(CoolProp.PropsSI("Dmolar", "T", 210.0, "P", 10e5, "n-Hexane"), rel=5e-3)


@pytest.mark.parametrize("cid", ["nitrogen", "methane"])
def test_supercritical_gases_not_liquid(cid):
    """Pure N2 and CH4 at 300 K, far above their critical temperatures: the phase identification parameter
    (Venkatarathnam and Oellrich 2011) is below 1 at 1 and 10 bar (vapour) and the PT flash never says liquid."""
    mix = make_gerg_mixture([cid])
    for P in (1e5, 10e5):
        assert gk.pip(mix.kernel_params, 300.0, P, np.ones(1), GIBBS) < 1.0
    for P in (1e5, 10e5, 100e5):
        assert flash_pt(mix, 300.0, P, np.ones(1)).phase in ("vapour", "supercritical")


@pytest.mark.parametrize("cid", ["hydrogen", "helium"])
def test_pip_of_near_ideal_repulsive_gases(cid):
    """For an ideal gas the phase identification parameter is exactly 1 (Venkatarathnam and Oellrich 2011, eq. for
    P = rho R T); H2 and He at 300 K and 1 bar have Z slightly above 1 and PIP within 1e-3 above 1, so the rule
    'PIP above 1 is liquid' alone would call these gases liquid."""
    mix = make_gerg_mixture([cid])
    pip = gk.pip(mix.kernel_params, 300.0, 1e5, np.ones(1), GIBBS)
    assert 1.0 < pip < 1.001


def test_ps_uv_tv_flashes_run_on_gerg():
    """The PS, UV and TV flashes (written once over the model interface) recover a GERG-2008 PT state of the rich
    gas, single-phase (320 K, 50 bar) and two-phase (250 K, 30 bar)."""
    from jtcheck.thermo.flash import flash_ps, flash_tv, flash_uv

    ids = ["methane", "ethane", "propane", "n-butane", "nitrogen", "carbon dioxide"]
    z = np.array([0.70, 0.10, 0.10, 0.06, 0.02, 0.02])
    mix = make_gerg_mixture(ids)
    for T, P in [(320.0, 50e5), (250.0, 30e5)]:
        ref = flash_pt(mix, T, P, z)
        assert ref.converged
        ps = flash_ps(mix, P, ref.s, z, T_guess=T + 15.0)
        assert ps.converged and ps.T == pytest.approx(T, abs=1e-6)
        if ref.beta in (0.0, 1.0):
            v = gk.props(mix.kernel_params, T, P, z, GIBBS)[1]
        else:
            v = (ref.beta * gk.props(mix.kernel_params, T, P, ref.y, VAPOUR)[1]
                 + (1.0 - ref.beta) * gk.props(mix.kernel_params, T, P, ref.x, LIQUID)[1])
        uv = flash_uv(mix, ref.h - P * v, v, z, T_guess=T + 10.0)
        assert uv.converged and uv.T == pytest.approx(T, abs=1e-5) and uv.P == pytest.approx(P, rel=1e-6)
        tv = flash_tv(mix, T, v, z)
        assert tv.converged and tv.P == pytest.approx(P, rel=1e-6)
