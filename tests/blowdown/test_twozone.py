"""The two-zone (non-equilibrium) vessel model (jtcheck.blowdown.twozone): it reduces to the equilibrium model
without liquid, closes its balances, holds a boiling pure pool on its saturation curve (CoolProp's reference
equation as the reference library), moves rain-out and bubbles between the zones without creating mass or energy,
fails closed, and names the field of a bad input."""
from __future__ import annotations

import math

import numpy as np
import pytest
from CoolProp.CoolProp import PropsSI

from jtcheck import Fluid, depressure
from jtcheck.blowdown import HeatInput, Orifice, Vessel
from jtcheck.blowdown.contents import InsideHeatTransfer, StepFailedError
from jtcheck.blowdown.twozone import TwoZoneContents
from jtcheck.errors import InputError
from jtcheck.screening.cold_metal import ColdLimits
from jtcheck.screening.findings import Outcome


def test_without_liquid_the_two_zone_model_is_the_equilibrium_model():
    # invariant of the model's definition: with no liquid zone and a one-phase gas zone the two-zone state is the
    # equilibrium state, so the curves must coincide (a nitrogen-methane gas that stays far above its dew point)
    fluid = Fluid({"methane": 0.8, "nitrogen": 0.2}, eos="PR")
    kw = dict(p0_pa=40e5, t0_k=300.0, vessel=Vessel("vertical", 1.0, 3.0, 0.02), orifices=Orifice(0.02, 0.85, 1.2e5),
              heat_input=HeatInput("ambient", 288.15), end_time_s=300.0)
    eq = depressure(fluid, model="equilibrium", **kw)
    tz = depressure(fluid, model="two-zone", **kw)
    assert eq.converged and tz.converged, (eq.message, tz.message)
    assert tz.time.size == eq.time.size
    np.testing.assert_allclose(tz.time, eq.time, rtol=1e-12)
    np.testing.assert_allclose(tz.pressure, eq.pressure, rtol=1e-9)
    np.testing.assert_allclose(tz.t_fluid, eq.t_fluid, rtol=1e-9)
    np.testing.assert_allclose(tz.t_wall_gas, eq.t_wall_gas, rtol=1e-9)
    np.testing.assert_allclose(tz.mass_flow, eq.mass_flow, rtol=1e-9)
    assert tz.basis["method"].startswith("two-zone") and eq.basis["method"].startswith("equilibrium")


@pytest.fixture(scope="module")
def propane_run():
    """A horizontal propane drum, half full, from 9.5 bar abs at saturation, 10 minutes, still air outside."""
    fluid = Fluid({"propane": 1.0}, eos="PR")
    return depressure(fluid, p0_pa=9.5e5, t0_k=298.15, vessel=Vessel("horizontal", 1.2, 4.0, 0.015),
                      orifices=Orifice(0.025, 0.85, 1.2e5), heat_input=HeatInput("ambient", 288.15),
                      liquid_level_m=0.6, end_time_s=600.0, model="two-zone",
                      cold_limits=ColdLimits(mdmt_k=244.15, margin_k=5.0))


def test_a_boiling_propane_pool_follows_the_saturation_curve(propane_run):
    # reference library: CoolProp's propane (Lemmon, McLinden and Wagner 2009 reference equation), T_sat(P) at the
    # vessel pressure of every step; the case's PR and the reference equation differ by under 0.1 K here (measured
    # 0.02-0.09 K), the tolerance 0.3 K leaves room for a pool lagging its bubble point by a step
    r = propane_run
    assert r.converged, r.message
    t_sat = np.array([PropsSI("T", "P", float(p), "Q", 0, "Propane") for p in r.pressure])
    np.testing.assert_allclose(r.t_liquid, t_sat, atol=0.3)
    assert r.pressure[-1] < 0.6 * r.pressure[0]        # it did depressure: the check is not trivial
    assert t_sat[0] - t_sat[-1] > 10.0                 # and the pool cooled along the curve


def test_the_propane_run_closes_its_balances(propane_run):
    r = propane_run
    assert r.mass_closure < 1e-6
    assert r.energy_closure < 1e-6


def test_the_pressure_of_a_boiling_pool_falls_without_jumps(propane_run):
    # the pool's vapour is counted while it forms (bubbles in the liquid zone), not in a lump between steps: the
    # vessel pressure falls monotonically through an open valve with no heat from outside that could raise it
    # (before, a lump flash between steps raised it by up to 16 %)
    assert np.all(np.diff(propane_run.pressure) <= 0.0)


def test_the_pool_chills_its_wall_more_than_the_gas_does(propane_run):
    # physics: the liquid-wetted wall under a boiling pool (nucleate boiling, h of order 1e3 W/(m^2 K)) is cooled
    # faster than the gas-wetted wall under natural convection of the gas (order 1-10 W/(m^2 K)); the vessel
    # blowdown experiments with liquid reported this (Haque et al. 1992 Part II; from memory)
    r = propane_run
    assert r.min_wall_liquid_t.value <= r.min_wall_gas_t.value
    assert r.outcome in (Outcome.PASS, Outcome.MARGIN_ERODED, Outcome.FAIL)


def test_a_mixture_pool_closes_its_balances_and_is_not_warmer_than_its_gas():
    fluid = Fluid({"propane": 0.7, "n-butane": 0.3}, eos="PR")
    r = depressure(fluid, p0_pa=7e5, t0_k=300.0, vessel=Vessel("horizontal", 1.2, 4.0, 0.015),
                   orifices=Orifice(0.02, 0.8, 1.2e5), liquid_level_m=0.5, end_time_s=600.0, heat_input="ambient",
                   model="two-zone")
    assert r.converged, r.message
    assert r.mass_closure < 1e-6 and r.energy_closure < 1e-6
    assert np.all(np.isfinite(r.t_liquid)) and r.liquid_level[0] == pytest.approx(0.5, rel=1e-6)
    # the boiling pool (latent heat of its vapour) cools below its start; the wall under it at or below the gas wall
    assert r.t_liquid[-1] < 295.0
    assert r.min_wall_liquid_t.value <= r.min_wall_gas_t.value


def _contents(fluid: Fluid, vessel: Vessel) -> TwoZoneContents:
    c = TwoZoneContents(fluid, vessel, (Orifice(0.02, 0.85, 1.2e5),), InsideHeatTransfer(), np.asarray(fluid.zs))
    return c


def test_rain_out_and_bubbles_move_between_the_zones_conserving_mass_and_energy():
    # a gas zone holding mist (a rich gas cooled into its two-phase region) next to a pool past its bubble point:
    # settle moves the mist down and the bubbles up, each with its own internal energy; the totals are unchanged
    # (to round-off), the mist is gone from the gas zone and the pool has no bubbles left
    fluid = Fluid({"methane": 0.6, "propane": 0.25, "n-butane": 0.15}, eos="PR")
    vessel = Vessel("vertical", 1.0, 3.0, 0.02)
    c = _contents(fluid, vessel)
    z = np.asarray(fluid.zs, float)
    res = fluid.flash_pt(250.0, 20e5)
    assert res.phase == "two-phase"
    # gas zone: the two-phase feed at 250 K, 20 bar filling 90 % of the volume; pool: its liquid at 10 % volume
    from jtcheck.thermo.kernels.flash_uv import phase_props as props
    from jtcheck.thermo.models.conventions import LIQUID, VAPOUR

    prm = fluid.mixture.kernel_params
    x, yv = np.asarray(res.x), np.asarray(res.y)
    pl = props(prm, 250.0, 20e5, x, LIQUID)
    pv = props(prm, 250.0, 20e5, yv, VAPOUR)
    v_mix = res.beta * pv[1] + (1 - res.beta) * pl[1]
    u_mix = res.beta * (pv[2] - 20e5 * pv[1]) + (1 - res.beta) * (pl[2] - 20e5 * pl[1])
    ng = 0.9 * vessel.volume_m3 / v_mix
    nl = 0.1 * vessel.volume_m3 / pl[1]
    n = z.size
    y = np.zeros(2 * n + 2)
    y[:n] = ng * z
    y[n] = ng * u_mix
    y[n + 1:2 * n + 1] = nl * x
    y[2 * n + 1] = nl * (pl[2] - 20e5 * pl[1]) + nl * 300.0   # a pool given 300 J/mol more: past its bubble point
    c.t_guess, c.p_guess = 250.0, 20e5
    st = c.evaluate_y(y, 250.0, 250.0)
    zs = c.zones(y)
    assert zs.gas.phase == "two-phase" and zs.liquid is not None and zs.liquid.beta > 0.0
    y2, st2 = c.settle(y, st, 250.0, 250.0)
    np.testing.assert_allclose(y2[:n] + y2[n + 1:2 * n + 1], y[:n] + y[n + 1:2 * n + 1], rtol=1e-12)
    assert y2[n] + y2[2 * n + 1] == pytest.approx(y[n] + y[2 * n + 1], rel=1e-12, abs=1e-9 * abs(y[n]))
    assert c.mass(y2) == pytest.approx(c.mass(y), rel=1e-13)
    # the liquid moved down (the pool grew) and the zones' states are those of a settled vessel
    assert y2[n + 1:2 * n + 1].sum() > y[n + 1:2 * n + 1].sum() - zs.liquid.n_mol * zs.liquid.beta
    assert st2.phase == "two-zone"


def test_a_failing_pressure_balance_stops_the_run_not_screened(monkeypatch):
    original = TwoZoneContents.liquid_at

    def failing(self, N, U, p, t_guess):
        if p < 7e5:
            raise StepFailedError("forced failure of the liquid zone")
        return original(self, N, U, p, t_guess)

    monkeypatch.setattr(TwoZoneContents, "liquid_at", failing)
    fluid = Fluid({"propane": 1.0}, eos="PR")
    r = depressure(fluid, p0_pa=9.5e5, t0_k=298.15, vessel=Vessel("horizontal", 1.2, 4.0, 0.015),
                   orifices=Orifice(0.025, 0.85, 1.2e5), liquid_level_m=0.6, end_time_s=600.0, model="two-zone",
                   cold_limits=ColdLimits(mdmt_k=200.0, margin_k=0.0))
    assert not r.converged
    assert r.outcome == Outcome.NOT_SCREENED      # fail closed: never a partial curve that passes
    assert "forced failure" in r.message and "Not screened" in r.message
    assert r.pressure[-1] >= 7e5 * (1 - 1e-9)


@pytest.mark.parametrize("kwargs,field", [
    ({"model": "two zone"}, "model"),
    # a vessel full of liquid (propane at 20 bar, 300 K) has no vapour space for the two-zone model to draw from
    ({"model": "two-zone", "p0_pa": 20e5}, "model"),
])
def test_bad_two_zone_input_names_the_field(kwargs, field):
    fluid = Fluid({"propane": 1.0}, eos="PR")
    args = {"p0_pa": 5e5, "t0_k": 300.0, "vessel": Vessel("vertical", 1.0, 2.0, 0.02),
            "orifices": Orifice(0.02, 0.8, 1e5)}
    args.update(kwargs)
    with pytest.raises(InputError) as exc:
        depressure(fluid, **args)
    assert exc.value.field == field
    assert ("two-zone" in exc.value.message) or ("equilibrium" in exc.value.message)


def test_the_liquid_zone_temperature_solve_inverts_the_equation_of_state():
    # invariant: the liquid zone at (P, U) found by the Newton iteration gives back U from the EOS, and a subcooled
    # pool has no bubbles
    fluid = Fluid({"propane": 0.7, "n-butane": 0.3}, eos="PR")
    c = _contents(fluid, Vessel("vertical", 1.0, 2.0, 0.02))
    from jtcheck.thermo.kernels.flash_uv import phase_props as props
    from jtcheck.thermo.models.conventions import LIQUID

    x = np.asarray(fluid.zs, float)
    pr = props(fluid.mixture.kernel_params, 260.0, 10e5, x, LIQUID)
    u = pr[2] - 10e5 * pr[1]
    lz = c.liquid_at(x * 100.0, 100.0 * u, 10e5, 280.0)
    assert lz.t_k == pytest.approx(260.0, abs=1e-6)
    assert lz.beta == 0.0
    assert math.isclose(lz.volume_m3, 100.0 * (pr[1] - float(x @ c.shifts)), rel_tol=1e-9)


def test_a_condensing_rich_gas_forms_a_pool_and_closes_its_balances():
    # a rich gas (invented, methane to n-pentane) starts as one gas zone; its condensate rains out into a liquid zone
    # that did not exist; the balances still close
    fluid = Fluid({"methane": 0.8, "ethane": 0.08, "propane": 0.06, "n-butane": 0.04, "n-pentane": 0.02}, eos="PR")
    assert fluid.flash_pt(310.0, 60e5).phase == "vapour"      # one phase at the start
    r = depressure(fluid, p0_pa=60e5, t0_k=310.0, vessel=Vessel("vertical", 1.5, 4.0, 0.03),
                   orifices=Orifice(0.03, 0.85, 1.5e5), heat_input="none", end_time_s=900.0, model="two-zone")
    assert r.converged, r.message
    assert r.liquid_level[0] == 0.0 and r.liquid_level[-1] > 0.0
    assert np.isnan(r.t_liquid[0]) and np.isfinite(r.t_liquid[-1])
    assert r.mass_closure < 1e-6 and r.energy_closure < 1e-6


def test_a_pure_gas_zone_on_its_dew_line_is_solved_on_the_saturation_line():
    # saturated propane vapour at 4 bar (its u and v from the EOS at the EOS saturation temperature): the
    # saturation-line solve gives back that temperature and pressure with a quality of 1 (a consistency check of
    # the lever rule against the EOS's own saturation)
    from jtcheck.thermo.kernels.flash_uv import phase_props as props
    from jtcheck.thermo.kernels.saturation import pure_saturation_T
    from jtcheck.thermo.models.conventions import VAPOUR

    fluid = Fluid({"propane": 1.0}, eos="PR")
    c = _contents(fluid, Vessel("vertical", 1.0, 2.0, 0.02))
    z = np.ones(1)
    ts = float(pure_saturation_T(fluid.mixture.kernel_params, 4e5, z, 0))
    pv = props(fluid.mixture.kernel_params, ts, 4e5, z, VAPOUR)
    u = pv[2] - 4e5 * pv[1]
    res = c._pure_saturated(u - 1e-3, pv[1], z, 3.8e5)        # a hair inside the dome
    assert res.converged and res.phase == "two-phase"
    assert res.T == pytest.approx(ts, abs=1e-4) and res.P == pytest.approx(4e5, rel=1e-6)
    assert res.beta == pytest.approx(1.0, abs=1e-5)
    assert not c._pure_saturated(u + 500.0, pv[1], z, 3.8e5).converged   # well superheated: not on the line
