"""The public letdown interface: behaviour, bad input, batches, warnings."""
from __future__ import annotations

import math

import numpy as np
import pytest
from conftest import LEAN_GAS

from jtcheck import Fluid, LetdownBatch, LetdownResult, letdown
from jtcheck.errors import InputError


def test_issue_example_runs_and_reports_everything(lean_gas):
    r = letdown(lean_gas, p_in=100e5, t_in=313.15, p_out=10e5)
    assert isinstance(r, LetdownResult)
    assert r.converged and r.phase == "vapour" and r.vapor_fraction == 1.0
    assert r.t_out < r.t_in and r.dt == pytest.approx(r.t_out - r.t_in)
    assert r.basis["eos"] == "PR" and "kij = 0" in r.basis["kij_basis"]
    assert r.to_dict()["t_out"] == pytest.approx(r.t_out)


def test_outlet_enthalpy_equals_inlet(lean_gas):
    r = letdown(lean_gas, p_in=100e5, t_in=313.15, p_out=10e5)
    out = lean_gas.flash_pt(r.t_out, 10e5)
    assert out.h == pytest.approx(r.h, abs=1e-6)


def test_default_kij_comes_from_the_table_and_says_which_pairs_defaulted():
    gas = Fluid(LEAN_GAS)
    assert "table" in gas.kij_basis
    assert gas.kij[gas.ids.index("methane"), gas.ids.index("carbon dioxide")] != 0.0
    assert all(len(p) == 2 for p in gas.kij_defaulted)


def test_kij_zero_sets_every_pair_to_zero():
    gas = Fluid(LEAN_GAS, kij=0)
    assert not gas.kij.any()


@pytest.mark.parametrize("kwargs, field", [
    (dict(p_in=10e5, t_in=300.0, p_out=20e5), "p_out"),
    (dict(p_in=0.0, t_in=300.0, p_out=1e5), "p_in"),
    (dict(p_in=-5e5, t_in=300.0, p_out=1e5), "p_in"),
    (dict(p_in=10e5, t_in=0.0, p_out=1e5), "t_in"),
    (dict(p_in=10e5, t_in=-3.0, p_out=1e5), "t_in"),
    (dict(p_in=float("nan"), t_in=300.0, p_out=1e5), "p_in"),
    (dict(p_in=10e5, t_in=float("inf"), p_out=1e5), "t_in"),
    (dict(p_in=10e5, t_in=300.0, p_out=float("nan")), "p_out"),
    (dict(p_in=np.array([10e5, 20e5]), t_in=300.0, p_out=np.array([5e5, 30e5])), "p_out"),
])
def test_bad_letdown_input_names_the_field(lean_gas, kwargs, field):
    with pytest.raises(InputError) as exc:
        letdown(lean_gas, **kwargs)
    assert exc.value.field == field


@pytest.mark.parametrize("composition, fragment", [
    ({}, "empty"),
    ({"methane": 0.5, "unobtainium": 0.5}, "unknown component"),
    ({"methane": 0.9, "ethane": 0.05}, "sum to"),
    ({"methane": 1.1, "ethane": -0.1}, "negative"),
    ({"methane": float("nan"), "ethane": 1.0}, "finite"),
    ({"methane": 0.5, "CH4": 0.5}, "same component"),
    ({"methane": 0.0, "ethane": 0.0}, "every amount is zero"),
])
def test_bad_compositions_are_rejected_with_the_entry_named(composition, fragment):
    with pytest.raises(InputError) as exc:
        Fluid(composition)
    assert exc.value.field == "composition"
    assert fragment in str(exc.value)


def test_unknown_component_suggests_close_names():
    with pytest.raises(InputError) as exc:
        Fluid({"methan": 1.0})
    assert "methane" in str(exc.value)


def test_mole_percent_and_near_unit_sums_are_normalised_with_a_warning():
    pct = Fluid({"methane": 90.0, "ethane": 10.2})
    assert pct.zs.sum() == pytest.approx(1.0)
    assert pct.composition.basis == "mole percent"
    assert any("normalised" in w for w in pct.warnings)
    frac = Fluid({"methane": 0.902, "ethane": 0.1})
    assert frac.zs == pytest.approx([0.902 / 1.002, 0.1 / 1.002])


def test_unknown_eos_lists_the_valid_ones():
    with pytest.raises(InputError) as exc:
        Fluid({"methane": 1.0}, eos="BWR")
    assert exc.value.field == "eos" and "PR" in str(exc.value) and "VDW" in str(exc.value)


@pytest.mark.parametrize("eos", ["PR", "SRK", "RK", "VDW"])
def test_every_eos_gives_a_cooling_letdown_for_methane(eos):
    r = letdown(Fluid({"methane": 1.0}, eos=eos), p_in=80e5, t_in=300.0, p_out=10e5)
    assert r.converged and r.t_out < 300.0


def test_arrays_give_a_batch_of_the_broadcast_shape(lean_gas):
    p_in = np.array([[100e5, 80e5], [60e5, 40e5]])
    res = letdown(lean_gas, p_in=p_in, t_in=300.0, p_out=10e5)
    assert isinstance(res, LetdownBatch)
    assert res.t_out.shape == (2, 2) and res.converged.all()
    one = letdown(lean_gas, p_in=60e5, t_in=300.0, p_out=10e5)
    assert res.t_out[1, 0] == pytest.approx(one.t_out, abs=1e-8)
    assert len(res.warnings) == 4


def test_large_batch_uses_the_envelope_shortcut_and_still_equals_the_scalar_path(rich_gas):
    rng = np.random.default_rng(7)
    n = 400   # above BATCH_ENVELOPE_MIN, so stability tests above the cricondentherm are skipped
    p_in = rng.uniform(30e5, 150e5, n)
    t_in = rng.uniform(260.0, 360.0, n)
    p_out = p_in * rng.uniform(0.05, 0.9, n)
    res = letdown(rich_gas, p_in, t_in, p_out)
    assert res.converged.all()
    assert (res.phase == "two-phase").any() and (res.phase != "two-phase").any()
    for k in rng.choice(n, 25, replace=False):
        one = letdown(rich_gas, float(p_in[k]), float(t_in[k]), float(p_out[k]))
        assert res.t_out[k] == pytest.approx(one.t_out, abs=1e-6)
        assert res.vapor_fraction[k] == pytest.approx(one.vapor_fraction, abs=1e-8)


def test_co2_let_down_below_its_triple_point_pressure_is_flagged():
    co2 = Fluid({"carbon dioxide": 1.0})
    r = letdown(co2, p_in=60e5, t_in=290.0, p_out=1.01325e5)
    assert any("dry ice" in w for w in r.warnings)


def test_hydrogen_is_flagged_as_poorly_modelled():
    r = letdown(Fluid({"hydrogen": 0.5, "methane": 0.5}), p_in=100e5, t_in=300.0, p_out=10e5)
    assert any("Hydrogen" in w for w in r.warnings)


def test_volume_translation_is_applied_at_inlet_and_outlet_alike():
    """Peneloux shifts H by -P sum(z c): applied consistently it changes the outlet by c dP / cp
    (about a kelvin at 100 bar, as REFERENCES.md notes), applied nowhere it changes nothing."""
    plain = letdown(Fluid(LEAN_GAS, kij=0), 100e5, 313.15, 10e5)
    shifted_fluid = Fluid(LEAN_GAS, kij=0, volume_translation=True)
    shifted = letdown(shifted_fluid, 100e5, 313.15, 10e5)
    assert shifted.converged
    assert 0.01 < abs(shifted.t_out - plain.t_out) < 3.0
    # energy balance closes in translated enthalpies
    h_out = shifted_fluid.flash_pt(shifted.t_out, 10e5).h
    assert h_out == pytest.approx(shifted.h, abs=1e-6)
    batch = letdown(shifted_fluid, np.array([100e5]), 313.15, 10e5)
    assert batch.t_out[0] == pytest.approx(shifted.t_out, abs=1e-8)


def test_non_converged_result_is_never_a_plain_number(monkeypatch, lean_gas):
    from jtcheck.thermo import flash as flash_mod

    real = flash_mod.flash_ph

    def broken(mix, P, H, z, T_guess=None):
        res = real(mix, P, H, z, T_guess)
        from dataclasses import replace

        return replace(res, converged=False, message="forced failure for the test")

    monkeypatch.setattr(flash_mod, "flash_ph", broken)
    r = letdown(lean_gas, 100e5, 313.15, 10e5)
    assert not r.converged and math.isnan(r.t_out) and "forced failure" in r.message
