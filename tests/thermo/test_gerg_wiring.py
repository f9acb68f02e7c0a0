"""GERG-2008 behind the Fluid: the choice, its cubic-only options, its range of validity, its letdowns.

Reference values: CoolProp 8.0.0 (HEOS backend, pure-fluid reference equations: nitrogen Span et al. 2000,
normal hydrogen Leachman et al. 2009), computed with ``CoolProp.CoolProp.PropsSI`` in the test itself.  They
can differ from GERG-2008 by a few hundredths of a kelvin, because GERG-2008's pure-fluid equations are its
own (Kunz and Wagner 2012) and less accurate than those reference equations; 0.3 K is the issue's tolerance.
"""
from __future__ import annotations

import numpy as np
import pytest

from jtcheck import Fluid, letdown
from jtcheck.errors import InputError
from jtcheck.screening.cold_metal import ColdLimits
from jtcheck.screening.findings import Severity, Topic
from jtcheck.screening.screen import Condition, ScreeningOptions, screen_letdown
from jtcheck.thermo.eos import EOS
from jtcheck.thermo.properties import phase_state

CP = pytest.importorskip("CoolProp.CoolProp")
LEAN_GAS = {"methane": 0.9, "ethane": 0.06, "propane": 0.02, "nitrogen": 0.01, "carbon dioxide": 0.01}


@pytest.mark.parametrize("text", ["GERG2008", "GERG-2008", "gerg", "GERG 2008"])
def test_gerg_2008_is_chosen_by_its_names(text):
    assert EOS.parse(text) is EOS.GERG2008 and not EOS.GERG2008.is_cubic


def test_a_component_gerg_2008_does_not_hold_is_refused_by_name_and_stays_with_the_cubics():
    with pytest.raises(InputError) as exc:
        Fluid({"methane": 0.9, "ethylene": 0.1}, eos="GERG2008")
    assert exc.value.field == "composition" and "Ethylene" in exc.value.message and "PR" in exc.value.message
    assert Fluid({"methane": 0.9, "ethylene": 0.1}, eos="PR").eos is EOS.PR


@pytest.mark.parametrize("kwargs, field", [({"kij": 0}, "kij"), ({"kij": {("methane", "ethane"): 0.01}}, "kij"),
                                           ({"volume_translation": True}, "volume_translation")])
def test_kij_and_the_volume_translation_are_cubic_only(kwargs, field):
    with pytest.raises(InputError) as exc:
        Fluid(LEAN_GAS, eos="GERG2008", **kwargs)
    assert exc.value.field == field


def test_the_basis_names_the_model_its_version_and_its_range():
    basis = Fluid(LEAN_GAS, eos="GERG2008").basis()
    assert basis["eos"] == "GERG2008" and basis["eos_version"] == "GERG-2008, Kunz and Wagner 2012"
    assert "Kunz and Wagner" in basis["eos_reference"] and "doi:10.1021/je300655b" in basis["eos_reference"]
    assert basis["eos_range"].startswith("normal range 90-450 K up to 35 MPa; extended range 60-700 K up to 70 MPa")


def test_with_eos_moves_between_gerg_and_the_cubics_dropping_cubic_only_choices():
    pr = Fluid(LEAN_GAS, eos="PR", kij=0, volume_translation=True)
    gerg = pr.with_eos("GERG2008")
    assert gerg.eos is EOS.GERG2008 and not gerg.volume_translation
    back = gerg.with_eos("SRK")
    assert back.eos is EOS.SRK and "table" in back.kij_basis


# -- range of validity (Kunz and Wagner 2012, section 7) ------------------------------------------------------
def test_inside_the_normal_range_nothing_is_said():
    r = letdown(Fluid(LEAN_GAS, eos="GERG2008"), 100e5, 300.0, 50e5)
    assert r.converged and not any("GERG-2008" in w for w in r.warnings)


def test_outside_the_normal_range_a_warning_rides_with_the_result():
    r = letdown(Fluid(LEAN_GAS, eos="GERG2008"), 50e5, 470.0, 10e5)   # 470 K: above 450 K, below 700 K
    assert r.converged
    assert any("outside the normal range of GERG-2008" in w and "470.0 K" in w for w in r.warnings), r.warnings


def test_a_pressure_above_the_normal_range_warns_too():
    r = letdown(Fluid({"nitrogen": 1.0}, eos="GERG2008"), 40e6, 400.0, 30e6)   # 40 MPa: above 35 MPa
    assert r.converged and any("pressure 40.0 MPa above 35 MPa" in w for w in r.warnings), r.warnings


@pytest.mark.parametrize("kwargs, field, words", [
    (dict(p_in=50e5, t_in=750.0, p_out=10e5), "t_in", "750.00 K is outside the extended range"),
    (dict(p_in=80e6, t_in=400.0, p_out=10e6), "p_in", "80.00 MPa is above the extended range"),
])
def test_outside_the_extended_range_the_letdown_is_refused_naming_the_condition(kwargs, field, words):
    with pytest.raises(InputError) as exc:
        letdown(Fluid(LEAN_GAS, eos="GERG2008"), **kwargs)
    assert exc.value.field == field and words in exc.value.message


def test_the_cubic_models_keep_their_own_range():
    r = letdown(Fluid(LEAN_GAS, eos="PR"), 50e5, 750.0, 10e5)
    assert r.converged


# -- letdowns against CoolProp 8.0.0 HEOS ---------------------------------------------------------------------
@pytest.mark.parametrize("ours, theirs, p_in, p_out", [
    ("nitrogen", "Nitrogen", 200e5, 20e5),    # CoolProp 8.0.0 HEOS: 274.00 K
    ("hydrogen", "Hydrogen", 100e5, 10e5),    # CoolProp 8.0.0 HEOS: 303.00 K (warms: inverse JT)
])
def test_letdown_outlet_matches_coolprop_heos_within_0_3_k(ours, theirs, p_in, p_out):
    h = CP.PropsSI("H", "T", 300.0, "P", p_in, theirs)
    t_ref = CP.PropsSI("T", "H", h, "P", p_out, theirs)
    r = letdown(Fluid({ours: 1.0}, eos="GERG2008"), p_in, 300.0, p_out)
    assert r.converged and r.phase == "vapour"
    assert r.t_out == pytest.approx(t_ref, abs=0.3)


def test_hydrogen_warms_on_gerg_where_peng_robinson_cools():
    # maximum inversion temperature of hydrogen about 200 K (textbook value, from memory): at 300 K it warms
    gerg = letdown(Fluid({"hydrogen": 1.0}, eos="GERG2008"), 100e5, 300.0, 10e5)
    pr = letdown(Fluid({"hydrogen": 1.0}, eos="PR"), 100e5, 300.0, 10e5)
    assert gerg.t_out > 300.0 > pr.t_out


# -- model-generic thermo: properties, envelope, CO2 solids ---------------------------------------------------
def test_speed_of_sound_of_nitrogen_matches_coolprop():
    st = phase_state(Fluid({"nitrogen": 1.0}, eos="GERG2008").mixture, 300.0, 100e5, np.array([1.0]))
    w_ref = CP.PropsSI("A", "T", 300.0, "P", 100e5, "Nitrogen")   # CoolProp 8.0.0 HEOS
    assert float(st.speed_of_sound) == pytest.approx(w_ref, rel=2e-3)


def test_the_phase_envelope_on_gerg_starts_at_1_bar_closes_and_bounds_the_flash():
    fl = Fluid(LEAN_GAS, eos="GERG2008")
    env = fl.phase_envelope()
    assert env.converged, env.message
    assert env.p_pa[0] == pytest.approx(1e5) and env.branch[0] == "dew"
    assert "interpolated" in env.critical_method
    t_dew = float(env.t_k[0])
    assert fl.flash_pt(t_dew - 1.0, 1e5).phase == "two-phase"
    assert fl.flash_pt(t_dew + 1.0, 1e5).phase == "vapour"
    t_ct, p_ct = env.cricondentherm
    assert fl.flash_pt(t_ct + 1.0, p_ct).phase != "two-phase"


def test_co2_let_down_to_atmosphere_on_gerg_forms_dry_ice():
    fl = Fluid({"carbon dioxide": 0.955, "nitrogen": 0.030, "methane": 0.015}, eos="GERG2008")
    s = screen_letdown(fl, [Condition("normal", 111e5, 283.15, 1.2e5)],
                       ScreeningOptions(ColdLimits(user_limit_k=227.15, margin_k=5.0)))
    assert any(f.topic is Topic.CO2_SOLIDS for f in s.findings)
    assert s.conditions[0].governing_model == "GERG2008" and s.outcome.value == "fail"


# -- screening: which model governs, and the hydrogen caution on a cubic --------------------------------------
def test_gerg_governs_alone_and_the_cubic_spread_is_not_added_to_the_margin():
    fl = Fluid({"hydrogen": 1.0}, eos="GERG2008")
    s = screen_letdown(fl, [Condition("normal", 100e5, 300.0, 10e5)],
                       ScreeningOptions(ColdLimits(user_limit_k=244.15, margin_k=5.0)))
    cs = s.conditions[0]
    assert s.models == ("GERG2008", "PR", "SRK") and cs.governing_model == "GERG2008"
    assert cs.t_screen_k == pytest.approx(cs.results["GERG2008"].t_out)
    assert cs.t_screen_k > cs.results["PR"].t_out          # PR is colder, but does not govern
    assert s.limits.model_spread_k == 0.0
    spread = next(f for f in s.findings if f.topic is Topic.MODEL_SPREAD)
    assert spread.severity is Severity.INFORMATION and "reference-grade" in spread.message


def test_a_hydrogen_rich_fluid_on_a_cubic_is_a_caution_pointing_to_gerg():
    fl = Fluid({"hydrogen": 0.3, "methane": 0.7}, eos="PR")
    s = screen_letdown(fl, [Condition("normal", 100e5, 300.0, 10e5)],
                       ScreeningOptions(ColdLimits(user_limit_k=244.15, margin_k=5.0)))
    f = next(f for f in s.findings if f.topic is Topic.MODEL_VALIDITY and "GERG2008" in f.message)
    assert f.severity is Severity.CAUTION and "PR predicts cooling where hydrogen really warms" in f.message


def test_a_trace_of_hydrogen_on_a_cubic_stays_information():
    fl = Fluid({"hydrogen": 0.02, "methane": 0.98}, eos="PR")
    assert not any("GERG2008" in w for w in fl.warnings) and any("Hydrogen present" in w for w in fl.warnings)


def test_screening_refuses_a_condition_outside_the_extended_range_naming_it():
    fl = Fluid(LEAN_GAS, eos="GERG2008")
    with pytest.raises(InputError) as exc:
        screen_letdown(fl, [Condition("normal", 50e5, 300.0, 10e5), Condition("hot", 50e5, 720.0, 10e5)],
                       ScreeningOptions(ColdLimits(user_limit_k=244.15, margin_k=5.0)))
    assert exc.value.field == "t_in" and "hot condition" in exc.value.message and "720.00 K" in exc.value.message


def test_an_outlet_outside_the_extended_range_is_not_converged_never_a_number(monkeypatch):
    # the extended range narrowed to start at 280 K (instead of 60 K) so that a real letdown leaves it
    import jtcheck.thermo.fluid as fluid_module

    monkeypatch.setattr(fluid_module, "gerg_ranges", lambda: ((290.0, 450.0, 35e6), (280.0, 700.0, 70e6)))
    fl = Fluid({"nitrogen": 1.0}, eos="GERG2008")
    r = letdown(fl, 200e5, 300.0, 20e5)       # outlet about 274 K
    assert not r.converged and r.message.startswith("not screened: outlet temperature")
    b = letdown(fl, np.array([200e5, 30e5]), 300.0, np.array([20e5, 20e5]))
    assert list(b.converged) == [False, True]
