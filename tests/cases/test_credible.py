"""Generated credible cases: settle-out, start-up into a depressured outlet, heater loss, minimum ambient.

Numbers are invented (Kestrel Ridge style); the settle-out check value is the settle-out module's own
doctest (jtcheck.letdown.settle_out.settle_out, methane, PR), and every condition is compared with the function
that defines it.
"""
from __future__ import annotations

import math

import pytest

from jtcheck.cases import credible
from jtcheck.cases.credible import CASE_NAMES, generated_conditions
from jtcheck.cases.letdown import LETDOWN, check_letdown
from jtcheck.errors import InputError
from jtcheck.letdown.settle_out import SettleOutResult, settle_out
from jtcheck.screening.findings import Outcome, Topic
from jtcheck.thermo.fluid import Fluid

BAR = 1e5
P_ATM = 101325.0
METHANE = Fluid({"methane": 1.0}, eos="PR")
#: The settle-out doctest of jtcheck.letdown.settle_out: 270.4 K, 33.6 bar abs.
VOLUMES = [{"name": "separator", "volume_m3": 10.0, "p_pa": 100e5, "t_k": 300.0},
           {"name": "flare header", "volume_m3": 20.0, "p_pa": 2e5, "t_k": 290.0}]


def values(**extra):
    """A letdown in SI (invented numbers): 70 bar abs, 290 K to 20 bar abs."""
    out = {"inlet_pressure_pa": 70 * BAR, "inlet_temperature_k": 290.0, "outlet_pressure_pa": 20 * BAR,
           "inlet_temperature_min_k": None, "inlet_pressure_max_pa": None, "outlet_pressure_min_pa": None,
           "mass_flow_kg_per_s": None, "mdmt_k": 244.15, "cold_limit_k": None, "margin_k": 5.0,
           "mdmt_source": "entered", "p_atm_pa": P_ATM, "water_saturated": False, "hydrate_inhibitor": "methanol"}
    out.update(extra)
    return out


def by_name(generated):
    return {g.condition.name: g for g in generated.generated}


def test_settle_out_of_two_volumes_is_the_condition_at_the_settle_out_state():
    gen = generated_conditions(METHANE, values(settle_out_volumes=VOLUMES, outlet_pressure_min_pa=15 * BAR))
    ref = settle_out(METHANE, [(v["name"], v["volume_m3"], v["p_pa"], v["t_k"]) for v in VOLUMES])
    assert (round(ref.t_k, 1), round(ref.p_pa / 1e5, 1)) == (270.4, 33.6)   # settle_out's doctest
    cond = by_name(gen)["settle-out after shutdown"].condition
    assert (cond.p_in_pa, cond.t_in_k, cond.p_out_pa) == (ref.p_pa, ref.t_k, 15 * BAR)   # the colder outlet
    assert "adiabatic mixing" in by_name(gen)["settle-out after shutdown"].reasoning
    assert gen.settle_out == ref


def test_start_up_lets_down_to_atmospheric_and_is_colder_than_normal():
    gen = generated_conditions(METHANE, values(inlet_temperature_min_k=280.0))
    starts = [g.condition for g in gen.generated if g.case == credible.START_UP]
    assert [c.name for c in starts] == ["start-up into depressured outlet",
                                        "start-up into depressured outlet (min inlet temperature)"]
    assert all(c.p_out_pa == P_ATM for c in starts)
    assert [(c.p_in_pa, c.t_in_k) for c in starts] == [(70 * BAR, 290.0), (70 * BAR, 280.0)]
    screening = LETDOWN.compute(METHANE, values(ambient_temperature_min_k=250.0), answers=False)
    t = {cs.condition.name: cs.t_screen_k for cs in screening.conditions}
    assert t["start-up into depressured outlet"] < t["normal"]   # methane cools on letdown (JT > 0)


def test_heater_loss_and_minimum_ambient_use_the_given_temperatures_at_normal_and_maximum_pressure():
    gen = generated_conditions(METHANE, values(heater_upstream_temperature_k=275.0, ambient_temperature_min_k=255.0,
                                               inlet_pressure_max_pa=80 * BAR))
    got = {n: (g.condition.p_in_pa, g.condition.t_in_k, g.condition.p_out_pa) for n, g in by_name(gen).items()}
    assert got["loss of upstream heater"] == (70 * BAR, 275.0, 20 * BAR)
    assert got["loss of upstream heater (max inlet pressure)"] == (80 * BAR, 275.0, 20 * BAR)
    assert got["minimum ambient, uninsulated inlet"] == (70 * BAR, 255.0, 20 * BAR)
    assert got["minimum ambient, uninsulated inlet (max inlet pressure)"] == (80 * BAR, 255.0, 20 * BAR)


def test_an_ambient_not_below_the_inlet_is_not_generated_with_the_reason():
    gen = generated_conditions(METHANE, values(ambient_temperature_min_k=300.0))
    [skip] = [s for s in gen.skipped if s.case == credible.AMBIENT]
    assert skip.status == credible.NOT_GENERATED and "not below" in skip.reason


def test_switched_off_cases_carry_their_reasons_and_are_not_computed():
    off = {"start_up": "outlet held at 5 barg by the downstream regulator", "heater_loss": "two heaters, 2 x 100 %"}
    v = values(heater_upstream_temperature_k=275.0, credible_off=off)
    screening = LETDOWN.compute(METHANE, v, answers=False)
    names = [cs.condition.name for cs in screening.conditions]
    assert not any(n.startswith(("start-up", "loss of upstream heater")) for n in names)
    listed = {g["case"]: g for g in screening.answers["generated_cases"]}
    assert {k: (listed[k]["status"], listed[k]["reason"]) for k in off} == {
        "start_up": ("off", off["start_up"]), "heater_loss": ("off", off["heater_loss"])}


@pytest.mark.parametrize("reason", ["", "   ", None])
def test_switching_off_without_a_reason_is_an_input_error_naming_the_case(reason):
    with pytest.raises(InputError) as err:
        check_letdown(values(credible_off={"start_up": reason}))
    assert err.value.field == "credible_off.start_up"


def test_a_bad_settle_out_volume_is_named_with_what_is_allowed():
    bad = [VOLUMES[0], {**VOLUMES[1], "volume_m3": -1.0}]
    with pytest.raises(InputError, match="allowed") as err:
        check_letdown(values(settle_out_volumes=bad))
    assert err.value.field == "settle_out_volumes[1].volume_m3"


def test_a_settle_out_that_does_not_converge_makes_the_case_not_screened(monkeypatch):
    def failing(fluid, volumes):
        return SettleOutResult(converged=False, message="settle-out state not found: test", p_pa=math.nan,
                               t_k=math.nan, vapor_fraction=math.nan, n_mol=math.nan, u_j=math.nan, volumes=())

    monkeypatch.setattr(credible, "settle_out", failing)
    screening = LETDOWN.compute(METHANE, values(settle_out_volumes=VOLUMES, mdmt_k=100.0), answers=False)
    assert screening.outcome is Outcome.NOT_SCREENED
    [cs] = [cs for cs in screening.conditions if cs.condition.name == "settle-out after shutdown"]
    assert not cs.converged and "settle-out did not converge" in cs.message
    assert any(f.topic is Topic.CONVERGENCE and "settle-out did not converge" in f.message
               for f in screening.findings)
    [entry] = [g for g in screening.answers["generated_cases"] if g["case"] == "settle_out"]
    assert entry["converged"] is False and entry["status"] == "computed"


def test_with_no_extra_inputs_only_the_start_up_case_is_added():
    gen = generated_conditions(METHANE, values())
    assert [g.condition.name for g in gen.generated] == [CASE_NAMES[credible.START_UP]]
    assert {s.case: s.status for s in gen.skipped} == {"settle_out": "not generated", "heater_loss": "not generated",
                                                       "ambient": "not generated"}


def test_start_up_is_generated_for_every_letdown_from_its_operating_data():
    """Start-up into a depressured downstream needs no input beyond the letdown itself: it is screened for every
    letdown whose outlet is above the atmosphere, on every entry point (the batch path adds it too)."""
    plain = LETDOWN.compute(METHANE, values(), answers=False)
    assert [cs.condition.name for cs in plain.conditions] == ["normal", "start-up into depressured outlet"]
    start_up = plain.conditions[1]
    assert start_up.condition.p_out_pa == P_ATM and start_up.t_screen_k < plain.conditions[0].t_screen_k
    assert plain.coldest_condition == "start-up into depressured outlet"
    listed = {e["case"]: e["status"] for e in plain.answers["generated_cases"]}
    assert listed["start_up"] == "computed" and listed["settle_out"] == "not generated"
    off = LETDOWN.compute(METHANE, values(credible_off={"start_up": "outlet held at pressure by the network "
                                                                    "(invented)"}), answers=False)
    assert [cs.condition.name for cs in off.conditions] == ["normal"]
    at_atm = LETDOWN.compute(METHANE, values(outlet_pressure_pa=P_ATM), answers=False)
    assert [cs.condition.name for cs in at_atm.conditions] == ["normal"]
