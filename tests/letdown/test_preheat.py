"""Preheat needed for a target outlet temperature.

Sources: invariants only.  The isenthalpic energy balance (a letdown from the required inlet ends at the
target), monotonicity of the outlet temperature in the inlet temperature, and the duty definition
Q = (m / M) (h_required - h_in).
"""
from __future__ import annotations

import json
import math
from dataclasses import replace

import pytest
from conftest import LEAN_GAS

from jtcheck import Fluid, letdown
from jtcheck.errors import InputError
from jtcheck.letdown.preheat import PreheatResult, required_preheat


def test_preheat_lands_the_letdown_on_the_target(lean_gas):
    r = required_preheat(lean_gas, 100e5, 283.15, 10e5, 273.15, mass_flow_kg_per_s=10.0)
    assert isinstance(r, PreheatResult) and r.converged and r.needed
    assert r.t_out_current_k < 273.15
    # energy balance: the letdown from the required inlet ends on the target
    assert letdown(lean_gas, 100e5, r.t_in_required_k, 10e5).t_out == pytest.approx(273.15, abs=1e-6)
    assert r.t_out_check_k == pytest.approx(273.15, abs=1e-6)
    # the lowest such inlet: a little colder misses the target
    assert letdown(lean_gas, 100e5, r.t_in_required_k - 0.05, 10e5).t_out < 273.15
    assert r.temperature_rise_k == pytest.approx(r.t_in_required_k - 283.15)
    # enthalpies: target outlet state by PT flash, current inlet by PT flash
    assert r.h_required_j_per_mol == pytest.approx(lean_gas.flash_pt(273.15, 10e5).h, abs=1e-9)
    assert r.h_in_j_per_mol == pytest.approx(lean_gas.flash_pt(283.15, 100e5).h, abs=1e-9)
    # duty = m / M * dh with M in kg/mol
    assert r.molar_mass_kg_per_mol == pytest.approx(lean_gas.molar_mass) and 0.015 < r.molar_mass_kg_per_mol < 0.025
    assert r.duty_w == pytest.approx(10.0 / lean_gas.molar_mass * (r.h_required_j_per_mol - r.h_in_j_per_mol))
    assert r.duty_w > 0.0
    assert r.inlet_phase_required == "vapour" and r.outlet_phase_target == "vapour"


def test_duty_scales_with_mass_flow_and_is_none_without_it(lean_gas):
    one = required_preheat(lean_gas, 100e5, 283.15, 10e5, 273.15, mass_flow_kg_per_s=1.0)
    three = required_preheat(lean_gas, 100e5, 283.15, 10e5, 273.15, mass_flow_kg_per_s=3.0)
    none = required_preheat(lean_gas, 100e5, 283.15, 10e5, 273.15)
    assert three.duty_w == pytest.approx(3.0 * one.duty_w)
    assert none.duty_w is None and none.to_dict()["duty_w"] is None
    assert none.t_in_required_k == one.t_in_required_k


def test_target_already_met_needs_nothing(lean_gas):
    r = required_preheat(lean_gas, 100e5, 313.15, 10e5, 253.15, mass_flow_kg_per_s=10.0)
    assert r.converged and not r.needed
    assert r.temperature_rise_k == 0.0 and r.duty_w == 0.0
    assert r.t_out_current_k >= 253.15
    # the required inlet is still reported: colder than the current one, and it lands on the target
    assert r.t_in_required_k < 313.15
    assert letdown(lean_gas, 100e5, r.t_in_required_k, 10e5).t_out == pytest.approx(253.15, abs=1e-6)
    assert "no preheat needed" in r.message


def test_inverse_joule_thomson_fluid_warms_so_the_required_inlet_is_below_the_target():
    """Nitrogen at 800 -> 500 bar near 290 K is above its inversion pressure: it warms on letdown."""
    n2 = Fluid({"nitrogen": 1.0}, eos="PR")
    r = required_preheat(n2, 800e5, 280.0, 500e5, 300.0)
    assert r.converged and r.needed
    assert r.t_out_current_k > 280.0
    assert r.t_in_required_k < 300.0
    assert letdown(n2, 800e5, r.t_in_required_k, 500e5).t_out == pytest.approx(300.0, abs=1e-6)
    assert any("inverse Joule-Thomson" in w for w in r.warnings)
    assert "inverse Joule-Thomson" in r.message


def test_two_phase_outlet_and_inlet(rich_gas):
    r = required_preheat(rich_gas, 100e5, 300.0, 20e5, 273.15, mass_flow_kg_per_s=1.0)
    assert r.converged and r.needed
    assert letdown(rich_gas, 100e5, 300.0, 20e5).phase == "two-phase"
    assert r.outlet_phase_target == "two-phase"
    assert letdown(rich_gas, 100e5, r.t_in_required_k, 20e5).t_out == pytest.approx(273.15, abs=1e-6)


def test_volume_translated_fluid_is_consistent():
    fluid = Fluid(LEAN_GAS, kij=0, volume_translation=True)
    r = required_preheat(fluid, 100e5, 283.15, 10e5, 273.15)
    assert r.converged
    assert letdown(fluid, 100e5, r.t_in_required_k, 10e5).t_out == pytest.approx(273.15, abs=1e-6)


def test_to_dict_is_plain_json(lean_gas):
    d = required_preheat(lean_gas, 100e5, 283.15, 10e5, 273.15, mass_flow_kg_per_s=2.0).to_dict()
    text = json.dumps(d, allow_nan=False)
    assert json.loads(text)["t_in_required_k"] == pytest.approx(d["t_in_required_k"])
    assert isinstance(d["warnings"], list) and d["basis"]["eos"] == "PR"


def test_failed_inlet_flash_is_reported_not_a_number(monkeypatch):
    fluid = Fluid(LEAN_GAS, kij=0)
    real = fluid.flash_ph

    def broken(p_pa, h, t_guess_k=None):
        res = real(p_pa, h, t_guess_k)
        return replace(res, converged=False, message="forced failure for the test") if p_pa == 100e5 else res

    monkeypatch.setattr(fluid, "flash_ph", broken)
    r = required_preheat(fluid, 100e5, 283.15, 10e5, 273.15, mass_flow_kg_per_s=1.0)
    assert not r.converged and "forced failure" in r.message
    assert math.isnan(r.t_in_required_k) and r.duty_w is None
    d = r.to_dict()
    assert d["t_in_required_k"] is None and d["temperature_rise_k"] is None
    json.dumps(d, allow_nan=False)


@pytest.mark.parametrize("kwargs, field", [
    (dict(p_in_pa=10e5, t_in_k=300.0, p_out_pa=20e5, t_target_k=273.15), "p_out_pa"),
    (dict(p_in_pa=0.0, t_in_k=300.0, p_out_pa=1e5, t_target_k=273.15), "p_in_pa"),
    (dict(p_in_pa=10e5, t_in_k=-1.0, p_out_pa=1e5, t_target_k=273.15), "t_in_k"),
    (dict(p_in_pa=10e5, t_in_k=300.0, p_out_pa=float("nan"), t_target_k=273.15), "p_out_pa"),
    (dict(p_in_pa=10e5, t_in_k=300.0, p_out_pa=1e5, t_target_k=0.0), "t_target_k"),
    (dict(p_in_pa=10e5, t_in_k=300.0, p_out_pa=1e5, t_target_k=2500.0), "t_target_k"),
    (dict(p_in_pa=10e5, t_in_k=300.0, p_out_pa=1e5, t_target_k=273.15, mass_flow_kg_per_s=-2.0),
     "mass_flow_kg_per_s"),
    (dict(p_in_pa=10e5, t_in_k=300.0, p_out_pa=1e5, t_target_k=273.15, mass_flow_kg_per_s=float("inf")),
     "mass_flow_kg_per_s"),
    (dict(p_in_pa=[10e5], t_in_k=300.0, p_out_pa=1e5, t_target_k=273.15), "p_in_pa"),
])
def test_bad_input_names_the_field(lean_gas, kwargs, field):
    with pytest.raises(InputError) as exc:
        required_preheat(lean_gas, **kwargs)
    assert exc.value.field == field
