"""Coldest letdown over operating ranges.

Sources: invariants only.  At fixed inlet temperature and outlet pressure the outlet enthalpy equals the
inlet enthalpy h(T_in, P_in), and the outlet temperature rises with enthalpy, so over an inlet-pressure
range the coldest outlet comes from the inlet pressure minimising h(T_in, P_in): where (dH/dP)_T = 0, i.e.
where the inlet Joule-Thomson coefficient (phase_state's jt_coefficient) changes sign.  That pressure is
found here independently, with brentq on jt_coefficient.
"""
from __future__ import annotations

import itertools
import json
from dataclasses import replace

import numpy as np
import pytest
from scipy.optimize import brentq

from jtcheck import Fluid, letdown
from jtcheck.errors import InputError
from jtcheck.letdown import sweep as mod
from jtcheck.letdown.sweep import SweepResult, operating_sweep
from jtcheck.thermo.properties import phase_state


def _inversion_pressure(fluid: Fluid, t_k: float) -> float:
    """Inlet pressure [Pa] where the Joule-Thomson coefficient at t_k changes sign ((dH/dP)_T = 0)."""
    def mu(p):
        return float(phase_state(fluid.mixture, t_k, p, fluid.zs).jt_coefficient)

    return brentq(mu, 100e5, 1500e5, xtol=1e-3, rtol=1e-14)


@pytest.mark.parametrize("component, p_range", [("nitrogen", (200e5, 800e5)), ("methane", (250e5, 900e5))])
def test_a_coldest_point_inside_the_range_is_found(component, p_range):
    fluid = Fluid({component: 1.0}, eos="PR")
    p_inv = _inversion_pressure(fluid, 300.0)
    assert p_range[0] < p_inv < p_range[1]
    r = operating_sweep(fluid, p_range, (300.0, 300.0), (10e5, 10e5), n=9)
    assert isinstance(r, SweepResult) and r.converged and r.complete
    assert r.varying_dimensions == ("p_in_pa",)
    assert p_range[0] < r.worst_p_in_pa < p_range[1]
    assert r.worst_is_interior and r.interior_dimensions == ("p_in_pa",)
    assert len(r.corners) == 2
    assert all(r.worst_t_out_k < c.t_out_k for c in r.corners)
    assert r.worst_t_out_k <= r.grid_worst_t_out_k
    # the worst inlet pressure is where the inlet Joule-Thomson coefficient changes sign
    assert r.worst_p_in_pa == pytest.approx(p_inv, abs=1000.0)     # 0.01 bar
    assert r.worst_t_out_k == letdown(fluid, r.worst_p_in_pa, 300.0, 10e5).t_out


def test_three_varying_dimensions_refine_to_the_inversion_at_the_coldest_inlet_temperature():
    n2 = Fluid({"nitrogen": 1.0}, eos="PR")
    r = operating_sweep(n2, (200e5, 800e5), (280.0, 320.0), (1e5, 50e5), n=7)
    assert r.converged and r.complete and r.n_skipped == 0
    assert r.worst_t_in_k == 280.0 and r.worst_p_out_pa == 1e5      # range ends, exactly
    assert r.interior_dimensions == ("p_in_pa",)
    assert r.worst_p_in_pa == pytest.approx(_inversion_pressure(n2, 280.0), abs=1000.0)
    assert all(r.worst_t_out_k < c.t_out_k for c in r.corners) and len(r.corners) == 8
    # display table: inlet x outlet pressure at the coldest inlet temperature
    t = r.table
    assert (t.row_dimension, t.column_dimension, t.fixed_dimension) == ("p_in_pa", "p_out_pa", "t_in_k")
    assert t.fixed_value == 280.0
    assert len(t.t_out_k) == 7 and all(len(row) == 7 for row in t.t_out_k)
    assert min(min(row) for row in t.t_out_k) == pytest.approx(r.grid_worst_t_out_k)


def test_two_phase_outlet_of_the_rich_gas(rich_gas):
    p_in_r, t_in_r, p_out_r = (80e5, 120e5), (310.0, 330.0), (5e5, 30e5)
    r = operating_sweep(rich_gas, p_in_r, t_in_r, p_out_r, n=5)
    assert r.converged and r.complete and r.n_not_converged == 0
    assert r.worst_phase == "two-phase" and 0.0 < r.worst_vapor_fraction < 1.0
    one = letdown(rich_gas, r.worst_p_in_pa, r.worst_t_in_k, r.worst_p_out_pa)
    assert r.worst_t_out_k == one.t_out and r.worst_phase == one.phase
    # nothing inside the ranges is colder (random sample, batch path)
    rng = np.random.default_rng(3)
    sample = letdown(rich_gas, rng.uniform(*p_in_r, 200), rng.uniform(*t_in_r, 200), rng.uniform(*p_out_r, 200))
    assert sample.converged.all()
    assert r.worst_t_out_k <= sample.t_out.min() + 1e-6
    assert r.worst_t_out_k <= min(c.t_out_k for c in r.corners) + 1e-9


def test_all_fixed_sweep_equals_the_single_letdown(lean_gas):
    r = operating_sweep(lean_gas, (100e5, 100e5), (313.15, 313.15), (10e5, 10e5))
    one = letdown(lean_gas, 100e5, 313.15, 10e5)
    assert r.converged and r.complete and r.varying_dimensions == ()
    assert r.n_points == 1 and r.n_evaluated == 1 and len(r.corners) == 1
    assert (r.worst_p_in_pa, r.worst_t_in_k, r.worst_p_out_pa) == (100e5, 313.15, 10e5)
    assert r.worst_t_out_k == one.t_out and r.worst_phase == one.phase
    assert r.grid_worst_t_out_k == pytest.approx(one.t_out, abs=1e-8)
    assert not r.worst_is_interior
    assert r.table.t_out_k == ((r.grid_worst_t_out_k,),)


def test_combinations_with_outlet_above_inlet_are_skipped_and_counted(lean_gas):
    n = 5
    r = operating_sweep(lean_gas, (10e5, 100e5), (300.0, 300.0), (5e5, 30e5), n=n)
    p_in = np.geomspace(10e5, 100e5, n)
    p_out = np.geomspace(5e5, 30e5, n)
    expected = sum(1 for a, b in itertools.product(p_in, p_out) if b > a)
    assert expected > 0
    assert r.n_skipped == expected and r.n_points == n * n and r.n_evaluated == n * n - expected
    assert r.complete and r.converged and "skipped" in r.message
    assert r.worst_p_out_pa <= r.worst_p_in_pa
    assert any(c.status.startswith("skipped") for c in r.corners)
    d = r.to_dict()
    json.dumps(d, allow_nan=False)
    cells = [(t, s) for row_t, row_s in zip(d["table"]["t_out_k"], d["table"]["status"], strict=True)
             for t, s in zip(row_t, row_s, strict=True)]
    assert all(t is None for t, s in cells if s != "converged")
    assert sum(s.startswith("skipped") for _, s in cells) == expected


def test_grid_points_that_do_not_converge_are_listed_and_the_sweep_is_incomplete(monkeypatch, lean_gas):
    real = mod.letdown

    def broken(fluid, p_in, t_in, p_out):
        res = real(fluid, p_in, t_in, p_out)
        if np.ndim(p_out):
            conv = res.converged.copy()
            conv[[2, 7]] = False
            return replace(res, converged=conv, t_out=np.where(conv, res.t_out, np.nan))
        return res

    monkeypatch.setattr(mod, "letdown", broken)
    r = operating_sweep(lean_gas, (50e5, 100e5), (290.0, 310.0), (10e5, 10e5), n=4)
    assert r.converged and not r.complete
    assert r.n_not_converged == 2 and len(r.not_converged) == 2
    assert all(p.status == "not converged" and np.isnan(p.t_out_k) for p in r.not_converged)
    assert "incomplete" in r.message
    d = r.to_dict()
    json.dumps(d, allow_nan=False)
    flat = [s for row in d["table"]["status"] for s in row]
    assert flat.count("not converged") == 2


def test_to_dict_is_plain_json(lean_gas):
    r = operating_sweep(lean_gas, (80e5, 100e5), (300.0, 320.0), (5e5, 20e5), n=3)
    d = r.to_dict()
    back = json.loads(json.dumps(d, allow_nan=False))
    assert back["worst_t_out_k"] == pytest.approx(r.worst_t_out_k)
    assert isinstance(back["corners"], list) and len(back["corners"]) == 8
    assert back["table"]["row_dimension"] == "p_in_pa"


@pytest.mark.parametrize("args, field", [
    (((100e5, 50e5), (300.0, 300.0), (10e5, 10e5)), "p_in_range_pa"),
    (((50e5, 100e5), (320.0, 300.0), (10e5, 10e5)), "t_in_range_k"),
    (((50e5, 100e5), (300.0, 300.0), (20e5, 10e5)), "p_out_range_pa"),
    (((50e5, 100e5), (300.0, 300.0), (120e5, 150e5)), "p_out_range_pa"),
    (((0.0, 100e5), (300.0, 300.0), (10e5, 10e5)), "p_in_range_pa"),
    (((50e5, float("nan")), (300.0, 300.0), (10e5, 10e5)), "p_in_range_pa"),
    (((50e5, 100e5, 150e5), (300.0, 300.0), (10e5, 10e5)), "p_in_range_pa"),
    ((100e5, (300.0, 300.0), (10e5, 10e5)), "p_in_range_pa"),
    (((50e5, 100e5), (300.0, 2500.0), (10e5, 10e5)), "t_in_range_k"),
])
def test_bad_ranges_name_the_field(lean_gas, args, field):
    with pytest.raises(InputError) as exc:
        operating_sweep(lean_gas, *args)
    assert exc.value.field == field


@pytest.mark.parametrize("n", [1, 0, 100, 2.5, True])
def test_bad_grid_size_names_the_field(lean_gas, n):
    with pytest.raises(InputError) as exc:
        operating_sweep(lean_gas, (50e5, 100e5), (300.0, 300.0), (10e5, 10e5), n=n)
    assert exc.value.field == "n"
