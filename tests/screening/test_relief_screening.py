"""The relieving case of a relief valve, screened fail closed: every relieving temperature, the outlet piping and
the flare header as a path, each limit in the letdown's bands; remedies that fit a relief valve (no heater).

Check values
------------
* Pure-fluid temperatures after an isenthalpic expansion from CoolProp 8.0.0 (reference equations of state:
  methane Setzmann-Wagner, CO2 Span-Wagner, propane Lemmon et al.), ``PropsSI("T", "P", p2, "H", h1, fluid)``
  with ``h1 = PropsSI("H", "P", p1, "T", t1, fluid)``.  jtcheck screens on the colder of PR and SRK, which
  stays within the tolerance stated beside each value.
* Set pressures, relieving temperatures, back pressures, header pressures and limits: invented (Kestrel Ridge
  demo style), chosen to fall on either side of the CoolProp values.
"""
from __future__ import annotations

from dataclasses import replace

import pytest

from jtcheck.errors import JtcheckError
from jtcheck.letdown.relief import relief_valve_case
from jtcheck.screening import relief_screen
from jtcheck.screening.cold_metal import ColdLimits
from jtcheck.screening.findings import Outcome, Severity, Topic
from jtcheck.screening.screen import (
    Condition,
    HeaderSpec,
    ReliefInputs,
    ScreeningOptions,
    screen_letdown,
)
from jtcheck.thermo.fluid import Fluid

T0 = 273.15
BAR = 1e5
ATM = 101325.0


def barg(p: float) -> float:
    return p * BAR + ATM


def relief(**kw) -> ReliefInputs:
    base = dict(set_pressure_pa=barg(60.0), overpressure_fraction=0.10, t_relieving_k=T0 + 30.0,
                superimposed_back_pressure_pa=barg(1.0), built_up_back_pressure_pa=2 * BAR)   # invented
    return ReliefInputs(**{**base, **kw})


def screen(fluid: Fluid, rel: ReliefInputs, limits: ColdLimits, t_in_k: float | None = None):
    """A relief case whose letdown condition (a small pressure drop at the relieving temperature) passes, so
    the outcome is the relieving case's."""
    t_in = rel.t_relieving_k if t_in_k is None else t_in_k
    cond = Condition("normal", rel.p_relieving_pa, t_in, rel.p_relieving_pa - 5 * BAR)
    return screen_letdown(fluid, [cond], ScreeningOptions(limits=limits, relief=rel, remedies="relief"))


def rows(scr) -> dict[str, dict]:
    return {r["limit"]: r for r in scr.answers["relief_valve"]["limits"]}


@pytest.fixture(scope="module")
def methane() -> Fluid:
    return Fluid({"methane": 1.0})


# -- (a) the outlet piping ---------------------------------------------------------------------------------------
def test_outlet_colder_than_the_piping_limit_fails_with_a_hazard(methane):
    # methane relieving at 66 barg, -5 degC, to 3 barg: CoolProp 8.0.0 gives -42.45 degC (PR -46.0, SRK -43.7)
    rel = relief(t_relieving_k=T0 - 5.0)
    scr = screen(methane, rel, ColdLimits(mdmt_k=T0 - 29.0, margin_k=5.0))            # carbon steel, -29 degC
    outlet = rows(scr)[relief_screen.OUTLET_PIPING]
    assert outlet["t_k"] == pytest.approx(T0 - 42.45, abs=4.0)                        # CoolProp 8.0.0
    assert outlet["band"] == "fail" and outlet["p_pa"] == pytest.approx(barg(3.0))
    assert scr.outcome is Outcome.FAIL
    hazards = [f for f in scr.findings if f.topic is Topic.RELIEF and f.severity is Severity.HAZARD]
    assert any("outlet piping" in f.message and "below its limit" in f.message for f in hazards)


# -- (b) the minimum credible relieving temperature --------------------------------------------------------------
def test_minimum_relieving_temperature_fails_where_the_normal_one_passes(methane):
    # methane relieving at 110 barg to the tip (atmospheric): CoolProp 8.0.0 gives -4.77 degC from 40 degC and
    # -56.55 degC from 5 degC; the header limit -46 degC lies between (invented); stainless outlet piping
    limits = ColdLimits(mdmt_k=T0 - 196.0, margin_k=5.0)
    normal = relief(set_pressure_pa=barg(100.0), t_relieving_k=T0 + 40.0, header_limit_k=T0 - 46.0)
    alone = screen(methane, normal, limits)
    assert alone.answers["relief_valve"]["outcome"] == "pass" and alone.outcome is Outcome.PASS
    assert rows(alone)[relief_screen.HEADER_AT_TIP]["t_k"] == pytest.approx(T0 - 4.77, abs=5.0)   # CoolProp

    cold = screen(methane, replace(normal, t_relieving_min_k=T0 + 5.0), limits)
    header = rows(cold)[relief_screen.HEADER_AT_TIP]
    assert header["t_k"] == pytest.approx(T0 - 56.55, abs=5.0)                        # CoolProp 8.0.0
    assert header["band"] == "fail" and header["t_relieving_k"] == pytest.approx(T0 + 5.0)
    assert header["p_pa"] == pytest.approx(ATM)                                        # screened at the tip
    assert cold.outcome is Outcome.FAIL
    assert cold.answers["relief_valve"]["relieving_temperatures_k"] == pytest.approx([T0 + 5.0, T0 + 22.5, T0 + 40.0])


# -- (c) the lowest header pressure ------------------------------------------------------------------------------
def test_header_fails_at_the_knock_out_drum_where_the_back_pressure_passes():
    # CO2 relieving at 33 barg, 30 degC: CoolProp 8.0.0 gives -7.25 degC at 3 barg and -11.46 degC at 0.2 barg
    # (PR -7.85 / -11.80, SRK -6.75 / -10.59); the header limit -9.5 degC lies between (invented)
    co2 = Fluid({"carbon dioxide": 1.0})
    limit = T0 - 9.5
    rel = relief(set_pressure_pa=barg(30.0), header_limit_k=limit,
                 header_sections=(HeaderSpec("tailpipe", barg(3.0), None), HeaderSpec("knock-out drum", barg(0.2),
                                                                                      None, "LTCS")))
    # at the back pressure alone, as before, the header passed
    old = relief_valve_case(co2, rel.set_pressure_pa, 0.10, rel.t_relieving_k, barg(1.0), 2 * BAR,
                            header_limit_k=limit)
    assert old.converged and old.below_header_limit is False
    scr = screen(co2, rel, ColdLimits(mdmt_k=T0 - 29.0, margin_k=0.0))
    r = rows(scr)
    assert r["tailpipe"]["band"] == "pass"
    assert r["tailpipe"]["t_k"] == pytest.approx(T0 - 7.25, abs=1.0)                  # CoolProp 8.0.0
    assert r["knock-out drum"]["band"] == "fail" and r["knock-out drum"]["material"] == "LTCS"
    assert r["knock-out drum"]["t_k"] == pytest.approx(T0 - 11.46, abs=1.0)            # CoolProp 8.0.0
    assert scr.outcome is Outcome.FAIL
    header = scr.answers["relief_valve"]["header"]
    assert [s["name"] for s in header["sections"]] == ["tailpipe", "knock-out drum"]
    assert header["sections"][0]["p_inlet_pa"] == pytest.approx(barg(3.0))


def test_lpg_liquid_relief_flashes_below_minus_29_degc_at_the_tip():
    # propane liquid relieving at 16.5 barg, 15 degC: CoolProp 8.0.0 gives -5.37 degC at 3 barg and -42.11 degC
    # at 0 barg (PR -42.19); a -29 degC header screened at the back pressure would have passed
    propane = Fluid({"propane": 1.0})
    rel = relief(set_pressure_pa=barg(15.0), t_relieving_k=T0 + 15.0, header_limit_k=T0 - 29.0)
    scr = screen(propane, rel, ColdLimits(mdmt_k=T0 - 46.0, margin_k=5.0))
    r = rows(scr)
    assert r[relief_screen.OUTLET_PIPING]["t_k"] == pytest.approx(T0 - 5.37, abs=1.0)    # CoolProp 8.0.0
    assert r[relief_screen.OUTLET_PIPING]["band"] == "pass"
    assert r[relief_screen.HEADER_AT_TIP]["t_k"] == pytest.approx(T0 - 42.11, abs=1.0)   # CoolProp 8.0.0
    assert r[relief_screen.HEADER_AT_TIP]["band"] == "fail" and scr.outcome is Outcome.FAIL
    stated = [f for f in scr.findings if f.condition == relief_screen.HEADER_AT_TIP]
    assert stated and "atmospheric pressure at the tip" in stated[0].message and "conservative" in stated[0].message


# -- remedies ----------------------------------------------------------------------------------------------------
def test_relief_remedies_offer_no_heater_and_name_the_mdmt_needed(methane):
    rel = relief(set_pressure_pa=barg(100.0), t_relieving_k=T0 + 40.0, t_relieving_min_k=T0 + 5.0,
                 header_limit_k=T0 - 46.0)
    scr = screen(methane, rel, ColdLimits(mdmt_k=T0 - 196.0, margin_k=5.0))
    assert scr.outcome is Outcome.FAIL
    assert "preheat" not in scr.answers and "outlet_pressure_limit" not in scr.answers
    rem = scr.answers["relief_remedies"]
    header = rows(scr)[relief_screen.HEADER_AT_TIP]
    need = {m["where"]: m for m in rem["materials"]}
    # the MDMT needed leaves the total margin: the 5 K entered + the PR/SRK spread of the letdown condition
    assert scr.limits.total_margin_k == pytest.approx(5.0 + scr.limits.model_spread_k) and rem["margin_k"] > 5.0
    assert need[relief_screen.HEADER_AT_TIP]["mdmt_needed_k"] == pytest.approx(header["t_k"] - rem["margin_k"])
    assert "a material whose MDMT is at or below" in need[relief_screen.HEADER_AT_TIP]["sentence"]
    temp = rem["min_relieving_temperature"]
    assert temp["found"] and T0 + 5.0 < temp["t_relieving_min_k"] < T0 + 40.0
    assert temp["sentence"].startswith("Keep the relieving temperature at or above")


def test_the_minimum_relieving_temperature_remedy_when_applied_passes(methane):
    limits = ColdLimits(mdmt_k=T0 - 196.0, margin_k=5.0)
    rel = relief(set_pressure_pa=barg(100.0), t_relieving_k=T0 + 40.0, t_relieving_min_k=T0 + 5.0,
                 header_limit_k=T0 - 46.0)
    first = screen(methane, rel, limits)
    t_keep = first.answers["relief_remedies"]["min_relieving_temperature"]["t_relieving_min_k"]
    applied = screen(methane, replace(rel, t_relieving_min_k=t_keep), limits)
    assert applied.answers["relief_valve"]["outcome"] == "pass" and applied.outcome is Outcome.PASS
    header = rows(applied)[relief_screen.HEADER_AT_TIP]
    total = first.limits.total_margin_k          # 5 K entered + the model spread (issue 12 item 5)
    assert total > 5.0
    assert header["t_k"] == pytest.approx(T0 - 46.0 + total, abs=0.05)       # it lands on limit + margin


def test_letdown_remedies_stay_for_a_letdown(methane):
    cond = Condition("normal", barg(100.0), T0 + 5.0, barg(3.0))
    scr = screen_letdown(methane, [cond], ScreeningOptions(limits=ColdLimits(mdmt_k=T0 - 29.0)))
    assert "preheat" in scr.answers and "relief_remedies" not in scr.answers


# -- fail closed -------------------------------------------------------------------------------------------------
def _unconverged_outlet(fluid, p1, t1, pb):
    from jtcheck.letdown.relief import downstream_of_relief
    r = downstream_of_relief(fluid, p1, t1, pb)
    return replace(r, converged=False, message="PH flash did not converge (forced by the test)")


def _failing_header(sources, sections):
    raise JtcheckError("PH flash did not converge (forced by the test)")


@pytest.mark.parametrize("target, stand_in", [("downstream_of_relief", _unconverged_outlet),
                                              ("screen_header", _failing_header)])
def test_a_relief_that_did_not_converge_never_passes(methane, monkeypatch, target, stand_in):
    rel = relief(set_pressure_pa=barg(100.0), t_relieving_k=T0 + 40.0, header_limit_k=T0 - 100.0)
    limits = ColdLimits(mdmt_k=T0 - 196.0, margin_k=5.0)
    assert screen(methane, rel, limits).outcome is Outcome.PASS            # it passes when it converges
    monkeypatch.setattr(relief_screen, target, stand_in)
    scr = screen(methane, rel, limits)
    assert scr.outcome is Outcome.NOT_SCREENED
    assert scr.answers["relief_valve"]["outcome"] == "not screened"
    assert any(f.topic is Topic.RELIEF and f.severity is Severity.HAZARD and "Not screened" in f.message
               for f in scr.findings)


def test_fail_governs_over_not_screened():
    assert relief_screen.worst_outcome(Outcome.PASS, Outcome.NOT_SCREENED, Outcome.FAIL) is Outcome.FAIL
    assert relief_screen.worst_outcome(Outcome.MARGIN_ERODED, Outcome.NOT_SCREENED) is Outcome.NOT_SCREENED
    assert relief_screen.worst_outcome(Outcome.PASS, Outcome.MARGIN_ERODED) is Outcome.MARGIN_ERODED


def test_unknown_remedies_are_refused():
    with pytest.raises(ValueError, match="remedies"):
        ScreeningOptions(limits=ColdLimits(), remedies="heater")
