"""Lowest outlet pressure that keeps the letdown outlet at or above a temperature limit.

Sources: invariants only.  At the reported pressure the outlet is at the limit; just below it the outlet
is colder; every scanned pressure above it keeps the outlet at or above the limit (the definition).
"""
from __future__ import annotations

import json
from dataclasses import replace

import numpy as np
import pytest

from jtcheck import Fluid, letdown
from jtcheck.errors import InputError
from jtcheck.letdown import outlet_limit as mod
from jtcheck.letdown.outlet_limit import OutletPressureLimit, outlet_pressure_limit


def _check_limit(fluid, p_in, t_in, t_limit, r):
    assert isinstance(r, OutletPressureLimit)
    assert r.converged and r.limited and not r.inlet_too_cold
    assert r.p_floor_pa < r.p_out_min_pa < p_in
    at = letdown(fluid, p_in, t_in, r.p_out_min_pa)
    assert at.t_out == pytest.approx(t_limit, abs=0.05)
    assert at.t_out >= t_limit                      # reported on the safe side
    assert r.t_out_at_limit_k == pytest.approx(at.t_out, abs=1e-9)
    lower = letdown(fluid, p_in, t_in, r.p_out_min_pa * (1.0 - 1e-3))
    assert lower.t_out < t_limit
    # every scanned outlet pressure from the reported one up to p_in keeps the outlet at or above the limit
    p = np.array(r.scan_p_out_pa)
    t = np.array(r.scan_t_out_k)
    assert (t[p >= r.p_out_min_pa] >= t_limit).all()


def test_limit_pressure_for_a_cooling_gas(lean_gas):
    r = outlet_pressure_limit(lean_gas, 100e5, 313.15, 273.15)
    _check_limit(lean_gas, 100e5, 313.15, 273.15, r)
    assert "limited" in r.message and r.p_floor_pa == 101325.0


def test_limit_pressure_where_the_outlet_ends_two_phase(rich_gas):
    """The crossing lies beyond the dew line, where the slope of the outlet temperature changes."""
    r = outlet_pressure_limit(rich_gas, 100e5, 320.0, 273.15)
    _check_limit(rich_gas, 100e5, 320.0, 273.15, r)
    assert letdown(rich_gas, 100e5, 320.0, r.p_out_min_pa).phase == "two-phase"


def test_inverse_joule_thomson_then_cooling_is_scanned_not_assumed_monotonic():
    """Nitrogen from 800 bar at 300 K first warms (above its inversion pressure), then cools: the inlet sits
    exactly at the limit, yet letdowns down to about 200 bar stay above it."""
    n2 = Fluid({"nitrogen": 1.0}, eos="PR")
    r = outlet_pressure_limit(n2, 800e5, 300.0, 300.0)
    assert max(r.scan_t_out_k) > 300.5                 # warms first
    _check_limit(n2, 800e5, 300.0, 300.0, r)
    assert 100e5 < r.p_out_min_pa < 400e5


def test_not_limited_down_to_the_floor(lean_gas):
    r = outlet_pressure_limit(lean_gas, 100e5, 313.15, 220.0, p_floor_pa=2e5)
    assert r.converged and not r.limited and not r.inlet_too_cold
    assert r.p_out_min_pa is None and r.t_out_at_limit_k is None
    assert "not limited" in r.message
    assert r.t_out_at_floor_k == pytest.approx(letdown(lean_gas, 100e5, 313.15, 2e5).t_out, abs=1e-6)
    assert r.scan_p_out_pa[0] == 100e5 and r.scan_p_out_pa[-1] == 2e5
    assert 60 <= len(r.scan_p_out_pa) <= 100


@pytest.mark.parametrize("t_limit", [313.15, 330.0])
def test_inlet_at_or_below_the_limit_is_too_cold(lean_gas, t_limit):
    r = outlet_pressure_limit(lean_gas, 100e5, 313.15, t_limit)
    assert r.converged and r.inlet_too_cold and r.limited
    assert r.p_out_min_pa is None
    assert "heat the inlet" in r.message


def test_to_dict_is_plain_json(lean_gas):
    d = outlet_pressure_limit(lean_gas, 100e5, 313.15, 273.15).to_dict()
    json.dumps(d, allow_nan=False)
    assert isinstance(d["scan_t_out_k"], list) and d["p_out_min_pa"] > 0


def test_failed_letdown_above_the_crossing_makes_the_limit_unknown(monkeypatch, lean_gas):
    real = mod.letdown
    bad_p = float(np.geomspace(100e5, 101325.0, mod.SCAN_POINTS)[3])

    def broken(fluid, p_in, t_in, p_out):
        res = real(fluid, p_in, t_in, p_out)
        if np.ndim(p_out):
            conv = res.converged.copy()
            conv[3] = False
            return replace(res, converged=conv, t_out=np.where(conv, res.t_out, np.nan))
        if abs(p_out - bad_p) < 1.0:
            return replace(res, converged=False, t_out=float("nan"), message="forced failure for the test")
        return res

    monkeypatch.setattr(mod, "letdown", broken)
    r = outlet_pressure_limit(lean_gas, 100e5, 313.15, 273.15)
    assert not r.converged and r.p_out_min_pa is None
    assert "did not converge" in r.message
    json.dumps(r.to_dict(), allow_nan=False)


@pytest.mark.parametrize("kwargs, field", [
    (dict(p_in_pa=-1.0, t_in_k=300.0, t_limit_k=250.0), "p_in_pa"),
    (dict(p_in_pa=100e5, t_in_k=float("nan"), t_limit_k=250.0), "t_in_k"),
    (dict(p_in_pa=100e5, t_in_k=300.0, t_limit_k=0.0), "t_limit_k"),
    (dict(p_in_pa=100e5, t_in_k=300.0, t_limit_k=250.0, p_floor_pa=100e5), "p_floor_pa"),
    (dict(p_in_pa=100e5, t_in_k=300.0, t_limit_k=250.0, p_floor_pa=0.0), "p_floor_pa"),
])
def test_bad_input_names_the_field(lean_gas, kwargs, field):
    with pytest.raises(InputError) as exc:
        outlet_pressure_limit(lean_gas, **kwargs)
    assert exc.value.field == field
