"""Regression: the time step must not collapse when a first liquid film condenses in a depressured gas (issue 16).

Case (invented, the reproduction of the report): a 36 m^3 horizontal vessel (2.4 m x 8 m, 40 mm carbon steel
wall), a 6-component lean natural gas at 71 bar abs and 300 K, a 40 mm orifice (Cd 0.85) to 1.5 bar abs, no heat
input, 15 minutes.  Before the fix the liquid-wetted wall's frozen boiling coefficient and the 3 K wall limit cut
the step to ~0.1 s: 6 074 steps and 86 693 flashes (measured on this code before the change, benchmarks/
bench_blowdown.py).  The bounds below are counts, not times.  Also the run budgets: a run past its step or
computing-time budget stops, not converged and not screened, with the reason (fail closed).
"""
from __future__ import annotations

import numpy as np
import pytest

from jtcheck import Fluid, depressure
from jtcheck.blowdown import Orifice, Vessel
from jtcheck.blowdown.wall import MATERIALS, conduction_step, conduction_step_implicit
from jtcheck.errors import InputError
from jtcheck.screening.cold_metal import ColdLimits
from jtcheck.screening.findings import Outcome

GAS = {"methane": 0.88, "ethane": 0.06, "propane": 0.03, "isobutane": 0.01, "n-butane": 0.01, "nitrogen": 0.01}
KW = dict(p0_pa=71e5, t0_k=300.0, vessel=Vessel("horizontal", 2.4, 8.0, 0.04), orifices=Orifice(0.04, 0.85, 1.5e5),
          heat_input="none", end_time_s=900.0, wall_nodes=4)


@pytest.fixture(scope="module")
def film_run():
    return depressure(Fluid(GAS, eos="PR"), **KW)


def test_a_first_liquid_film_does_not_collapse_the_step(film_run):
    r = film_run
    assert r.converged
    assert np.isfinite(r.min_wall_liquid_t.value)          # the liquid film does appear
    assert r.steps <= 600                                  # 6 074 before the fix, 263 after
    assert r.flashes <= 15000                              # 86 693 before the fix, 6 434 after


def test_the_film_run_closes_its_balances(film_run):
    # issue 16's check: mass and energy closure of the real-fluid model better than 1e-6 relative
    assert film_run.mass_closure < 1e-6
    assert film_run.energy_closure < 1e-6


def test_a_film_wall_is_never_colder_than_the_coldest_fluid(film_run):
    # backward Euler with the coefficient implicit cannot overshoot the fluid temperature
    assert film_run.min_wall_liquid_t.value >= film_run.min_fluid_t.value - 1e-6


def test_the_implicit_coefficient_reduces_to_the_fixed_one_for_a_constant_law():
    mat = MATERIALS["carbon steel"]
    w = np.array([300.0, 299.0, 298.0, 297.0])
    fixed = conduction_step(w, 5.0, 0.03, mat, 800.0, 230.0, 3.0, 288.0, 0.0)
    implicit, h = conduction_step_implicit(w, 5.0, 0.03, mat, lambda d: 800.0, 230.0, 3.0, 288.0, 0.0, 10.0)
    assert h == pytest.approx(800.0, rel=1e-5)
    assert implicit == pytest.approx(fixed, abs=1e-4)


def test_the_implicit_coefficient_is_the_one_at_the_end_superheat():
    mat = MATERIALS["carbon steel"]
    w = np.full(4, 280.0)
    law = lambda d: 50.0 * max(d, 0.0) ** (7.0 / 3.0) + 100.0   # noqa: E731  (a boiling-like law)
    new, h = conduction_step_implicit(w, 20.0, 0.03, mat, law, 240.0, 0.0, 288.0, 0.0, law(40.0))
    assert h == pytest.approx(law(new[0] - 240.0), rel=1e-4)
    assert 240.0 < new[0] < 280.0


def test_a_run_past_its_step_budget_stops_not_converged_and_not_screened():
    r = depressure(Fluid(GAS, eos="PR"), **KW, max_steps=20, cold_limits=ColdLimits(mdmt_k=100.0))
    assert not r.converged
    assert r.outcome == Outcome.NOT_SCREENED
    assert "step budget" in r.message and "not converged" in r.message


def test_a_run_past_its_time_budget_stops_not_converged_and_not_screened():
    r = depressure(Fluid(GAS, eos="PR"), **KW, max_seconds=1e-9)
    assert not r.converged
    assert r.outcome == Outcome.NOT_SCREENED
    assert "time budget" in r.message


@pytest.mark.parametrize("field, value", [("max_steps", 0), ("max_steps", 2.5), ("max_seconds", -1.0)])
def test_bad_budgets_are_input_errors(field, value):
    with pytest.raises(InputError) as e:
        depressure(Fluid(GAS, eos="PR"), **KW, **{field: value})
    assert field in str(e.value)


@pytest.mark.parametrize("orientation", ["horizontal", "vertical"])
def test_a_first_film_has_almost_no_wetted_area(orientation):
    # the wetted area starts from zero with a finite slope dA/dV (before, a horizontal vessel's wetted shell grew
    # as V^(1/3): a first film of 1e-6 m^3 wetted about 0.1 m^2), and grows monotonically with the liquid volume
    v = Vessel(orientation, 2.4, 8.0, 0.04)
    vols = np.geomspace(1e-9, 1.0, 40)
    areas = np.array([v.wetted_area_m2(x) for x in vols])
    assert np.all(np.diff(areas) > 0.0)
    slope = areas / vols
    assert slope[0] <= 2.0 * slope[10]                     # bounded as V -> 0, not growing like V^(-2/3)
    assert v.wetted_area_m2(1e-6) < 1e-2


def test_the_implicit_wall_step_conserves_energy():
    # the heat through the inside surface over the step equals the wall's energy change (no outside heat): what the
    # wall gives the fluid is what it loses (first law)
    mat = MATERIALS["carbon steel"]
    w = np.array([290.0, 292.0, 294.0, 296.0])
    law = lambda d: 20.0 * max(d, 0.0) ** (7.0 / 3.0) + 100.0   # noqa: E731
    dt, thick, tf = 12.0, 0.04, 235.0
    new, h = conduction_step_implicit(w, dt, thick, mat, law, tf, 0.0, 288.0, 0.0, law(55.0))
    stored = mat.density_kg_per_m3 * mat.cp_j_per_kg_k * thick / w.size * float(np.sum(new - w))
    assert stored == pytest.approx(h * (tf - new[0]) * dt, rel=1e-9)
