"""screen_batch: many letdown rows at once, the batch path checked against the scalar screening row by row."""
from __future__ import annotations

import dataclasses
import json
import math

import numpy as np
import pytest

from jtcheck import Fluid
from jtcheck.screening import batch as batch_module
from jtcheck.screening import screen as screen_module
from jtcheck.screening.batch import BatchCase, BatchScreening, screen_batch
from jtcheck.screening.cold_metal import ColdLimits
from jtcheck.screening.findings import Outcome, Topic
from jtcheck.screening.screen import ScreeningOptions, credible_conditions, screen_letdown, start_up_conditions

BAR = 1e5
T0 = 273.15
LIMITS = ColdLimits(user_limit_k=T0 - 29.0, margin_k=5.0)

# the compositions of tests/conftest.py, defined here so that this file does not import a conftest
LEAN = {"methane": 0.85, "ethane": 0.07, "propane": 0.03, "n-butane": 0.01, "nitrogen": 0.02,
        "carbon dioxide": 0.02}
RICH = {"methane": 0.70, "ethane": 0.10, "propane": 0.08, "n-butane": 0.04, "n-pentane": 0.02,
        "n-hexane": 0.02, "nitrogen": 0.02, "carbon dioxide": 0.02}
CO2_RICH = {"carbon dioxide": 0.9, "methane": 0.1}


def scalar(case: BatchCase, compare_models: bool = True):
    """The scalar screening of a row, as the batch's fallback runs it: the credible conditions and the start-up
    into a depressured outlet from each of them."""
    conds = [*credible_conditions(case.p_in_pa, case.t_in_k, case.p_out_pa, case.p_in_max_pa, case.t_in_min_k),
             *start_up_conditions(case.p_in_pa, case.t_in_k, case.p_out_pa, case.p_atm_pa, case.p_in_max_pa,
                                  case.t_in_min_k)]
    return screen_letdown(case.fluid, conds, ScreeningOptions(case.limits, compare_models,
                                                              True if case.water_saturated else None,
                                                              answers=False))


def random_cases(n: int, seed: int) -> list[BatchCase]:
    rng = np.random.default_rng(seed)
    lean, rich = Fluid(LEAN, kij=0), Fluid(RICH, kij=0)
    out = []
    for i in range(n):
        fluid = lean if rng.random() < 0.7 else rich
        p_in = rng.uniform(20.0, 150.0) * BAR
        t_in = rng.uniform(260.0, 330.0)
        p_out = rng.uniform(1.0 * BAR, 0.9 * p_in)
        t_min = t_in - rng.uniform(1.0, 20.0) if rng.random() < 0.25 else None
        p_max = p_in * rng.uniform(1.01, 1.2) if rng.random() < 0.25 else None
        out.append(BatchCase(row=i + 2, tag=f"PCV-{i}", fluid=fluid, p_in_pa=p_in, t_in_k=t_in, p_out_pa=p_out,
                             limits=LIMITS, t_in_min_k=t_min, p_in_max_pa=p_max,
                             water_saturated=bool(rng.random() < 0.3), service="gas", kind="control valve"))
    return out


@pytest.fixture(scope="module")
def random_run():
    cases = random_cases(500, seed=20261202)
    calls = []
    res = screen_batch(cases, progress=lambda done, total: calls.append((done, total)))
    return cases, res, [scalar(c) for c in cases], calls


def test_every_row_matches_the_scalar_screening(random_run):
    cases, res, ref, _ = random_run
    assert len(res.rows) == len(cases)
    for case, row, s in zip(cases, res.rows, ref, strict=True):
        assert row.row == case.row and row.tag == case.tag
        assert row.outcome == s.outcome.value, (row.path, case)
        if s.t_out_min_k is None:
            assert row.t_screen_k is None
        else:
            assert row.t_screen_k == pytest.approx(s.t_out_min_k, abs=0.01), (row.path, case)
        assert row.coldest_condition == s.coldest_condition


def test_the_mix_has_two_phase_outlets_scalar_rows_and_mostly_batch_rows(random_run):
    cases, res, ref, _ = random_run
    paths = [r.path for r in res.rows]
    assert res.n_scalar == paths.count("scalar") > 0
    assert res.n_batch == paths.count("batch") >= 150
    two = [r for r in res.rows if r.phase == "two-phase"]
    assert len(two) >= 20
    assert all(r.path == "scalar" for r in two)
    # every batch row: single vapour outlet, converged, screened on PR and SRK
    for r in res.rows:
        if r.path == "batch":
            assert r.phase == "vapour" and r.converged
            assert set(r.t_out_by_model) == {"PR", "SRK"}
            assert r.t_screen_k == min(r.t_out_by_model.values())
            assert r.t_out_by_model[r.governing_model] == r.t_screen_k


def test_batch_rows_carry_the_scalar_findings(random_run):
    """Same topics, severities, messages, numbers and bases, in the same order."""
    cases, res, ref, _ = random_run
    n_hydrate = 0
    for row, s in zip(res.rows, ref, strict=True):
        if row.path != "batch":
            continue
        want = [f.to_dict() for f in s.findings]
        assert [(f["topic"], f["severity"], f["message"], f["condition"]) for f in row.findings] == \
            [(f["topic"], f["severity"], f["message"], f["condition"]) for f in want]
        for got, exp in zip(row.findings, want, strict=True):
            assert got["numbers"].keys() == exp["numbers"].keys()
            for k, v in exp["numbers"].items():
                if isinstance(v, float):
                    assert got["numbers"][k] == pytest.approx(v, rel=1e-12, abs=1e-9)
                else:
                    assert got["numbers"][k] == v
            # issue 13: the batch path runs the scalar hydrate assessment, so the bases are the same too
            assert got["basis"] == exp["basis"]
            if got["topic"] == Topic.HYDRATES.value and got["numbers"]:
                n_hydrate += 1
    assert n_hydrate >= 20     # water-saturated rows on the batch path were screened for hydrates


def test_counts_order_and_progress(random_run):
    cases, res, _, calls = random_run
    assert set(res.counts) == {o.value for o in Outcome}
    assert sum(res.counts.values()) == len(cases)
    for o in Outcome:
        assert res.counts[o.value] == sum(r.outcome == o.value for r in res.rows)
    assert [r.row for r in res.rows] == [c.row for c in cases]
    assert res.seconds > 0 and 0 <= res.seconds_scalar <= res.seconds
    assert calls and calls[-1] == (len(cases), len(cases))
    assert all(t == len(cases) for _, t in calls)
    assert [d for d, _ in calls] == sorted(d for d, _ in calls)
    assert len(calls) >= 3     # per group and during the scalar rows
    json.dumps([r.to_dict() for r in res.rows])   # plain JSON
    assert res.coldest(3) == sorted([r for r in res.rows if r.t_screen_k is not None],
                                    key=lambda r: r.t_screen_k)[:3]


def test_co2_rich_rows_below_the_triple_point_get_the_dry_ice_correction():
    fluid = Fluid(CO2_RICH, kij=0)
    spec = [(20 * BAR, 260.0, 1.01325 * BAR), (20 * BAR, 280.0, 1.01325 * BAR), (100 * BAR, 260.0, 4 * BAR),
            (150 * BAR, 250.0, 3 * BAR), (20 * BAR, 290.0, 1.01325 * BAR), (30 * BAR, 300.0, 10 * BAR)]
    cases = [BatchCase(i + 1, f"V{i}", fluid, p, t, po, LIMITS) for i, (p, t, po) in enumerate(spec)]
    res = screen_batch(cases)
    for case, row in zip(cases, res.rows, strict=True):
        s = scalar(case)
        assert row.outcome == s.outcome.value
        assert row.t_screen_k == pytest.approx(s.t_out_min_k, abs=0.01)
    dry = [r for r in res.rows if r.solids is not None]
    assert {r.tag for r in dry} == {"V2", "V3"}
    for r in dry:
        assert r.path == "scalar" and r.phase == "vapour + solid CO2"
        assert r.t_screen_k == pytest.approx(r.solids["t_out_k"])
        assert r.t_screen_k > min(r.t_out_by_model.values())    # warmer than the fluid-only EOS outlet
        assert any(f["topic"] == Topic.CO2_SOLIDS.value for f in r.findings)
    # warm CO2-rich vapour outlets far from the frost point may stay on the batch path
    assert res.rows[0].path == "batch" and res.rows[0].solids is None


def test_co2_frost_point_test_is_conservative():
    fluid = Fluid({"carbon dioxide": 0.3, "nitrogen": 0.7}, kij=0)
    p = np.array([4 * BAR, 4 * BAR, 4 * BAR, 10 * BAR])
    # ideal frost point of 30 % CO2 at 4 bar: sublimation temperature at 1.2 bar, about 196.8 K
    t = np.array([200.07, 206.0, 240.0, 200.0])
    assert batch_module._co2_frost_clear(fluid, p, t).tolist() == [False, False, True, True]
    assert batch_module._co2_frost_clear(Fluid(LEAN, kij=0), p, t).tolist() == [True, True, True, True]


def test_envelope_test_is_conservative():
    fluid = Fluid(LEAN, kij=0)
    env = fluid.phase_envelope()
    dew = np.asarray(env.branch) == "dew"
    # a dew point at about 20 bar, on the polyline
    k = int(np.argmin(np.abs(env.p_pa[dew] - 20 * BAR)))
    t_dew, p_dew = float(env.t_k[dew][k]), float(env.p_pa[dew][k])
    p = np.full(4, p_dew)
    t_out = np.array([t_dew - 5.0, t_dew + 1.0, t_dew + 1.9, t_dew + 6.0])
    clear = batch_module._clear_of_envelope(fluid, t_out - batch_module.NEAR_ENVELOPE_K, p, p)
    assert clear.tolist() == [False, False, False, True]   # inside; 1 K and 1.9 K away; 6 K away
    # just above the cricondenbar no isobar meets the envelope, but the pressure band does
    t_b, p_b = env.cricondenbar
    assert not batch_module._clear_of_envelope(fluid, np.array([t_b - 1.0]), np.array([1.01 * p_b]),
                                               np.array([1.01 * p_b]))[0]
    assert batch_module._clear_of_envelope(fluid, np.array([t_b - 1.0]), np.array([1.1 * p_b]),
                                           np.array([1.1 * p_b]))[0]
    # above the cricondentherm + 2 K: clear at any pressure
    hot = np.array([env.cricondentherm[0] + 2.5])
    assert batch_module._clear_of_envelope(fluid, hot, np.array([50 * BAR]), np.array([50 * BAR]))[0]
    # a path that passes through the envelope is not clear, though its ends are
    t_c, p_c = env.cricondentherm
    assert not batch_module._clear_of_envelope(fluid, np.array([t_c - 1.0]), np.array([10 * BAR]),
                                               np.array([120 * BAR]))[0]
    # NaN never clear
    assert not batch_module._clear_of_envelope(fluid, np.array([math.nan]), p[:1], p[:1])[0]


def test_no_envelope_means_no_batch_rows():
    wet = Fluid({**LEAN, "water": 0.001}, kij=0)    # water: a second liquid possible, no shortcut
    cases = [BatchCase(i + 1, f"W{i}", wet, 80 * BAR, 310.0 - i, 40 * BAR, LIMITS) for i in range(6)]
    res = screen_batch(cases)
    assert res.n_scalar == 6
    for case, row in zip(cases, res.rows, strict=True):
        assert row.t_screen_k == pytest.approx(scalar(case).t_out_min_k, abs=0.01)


def _lean_cases(n: int, fluid: Fluid | None = None) -> list[BatchCase]:
    fluid = fluid or Fluid(LEAN, kij=0)
    return [BatchCase(i + 1, f"L{i}", fluid, (60 + i) * BAR, 300.0, 30 * BAR, LIMITS) for i in range(n)]


MARK_P_OUT = 31.234567 * BAR


def _force_batch_failure(monkeypatch):
    real = batch_module.letdown

    def letdown(fluid, p_in, t_in, p_out):
        r = real(fluid, p_in, t_in, p_out)
        bad = np.asarray(r.p_out) == MARK_P_OUT
        return dataclasses.replace(r, converged=np.asarray(r.converged) & ~bad,
                                   t_out=np.where(bad, np.nan, r.t_out), phase=np.where(bad, "unknown", r.phase))

    monkeypatch.setattr(batch_module, "letdown", letdown)


def test_a_point_the_batch_did_not_converge_is_screened_by_the_scalar_path(monkeypatch):
    _force_batch_failure(monkeypatch)
    cases = _lean_cases(8)
    cases[3] = dataclasses.replace(cases[3], p_out_pa=MARK_P_OUT)
    res = screen_batch(cases)
    row = res.rows[3]
    assert row.path == "scalar" and row.converged
    assert row.outcome == scalar(cases[3]).outcome.value != Outcome.NOT_SCREENED.value
    assert [r.path for r in res.rows].count("batch") == 7


def test_a_row_that_does_not_converge_is_not_screened_never_pass(monkeypatch):
    _force_batch_failure(monkeypatch)
    real = screen_module.letdown

    def letdown(fluid, p_in, t_in, p_out):
        r = real(fluid, p_in, t_in, p_out)
        if np.ndim(p_out) == 0 and p_out == MARK_P_OUT:
            return dataclasses.replace(r, converged=False, t_out=math.nan, phase="unknown", message="forced")
        return r

    monkeypatch.setattr(screen_module, "letdown", letdown)
    cases = _lean_cases(8)
    cases[5] = dataclasses.replace(cases[5], p_out_pa=MARK_P_OUT, t_in_min_k=295.0)
    res = screen_batch(cases)
    row = res.rows[5]
    assert row.outcome == Outcome.NOT_SCREENED.value
    assert not row.converged and row.path == "scalar"
    assert "did not converge" in row.message
    assert res.counts[Outcome.NOT_SCREENED.value] == 1
    assert res.counts[Outcome.PASS.value] + res.counts[Outcome.MARGIN_ERODED.value] + \
        res.counts[Outcome.FAIL.value] == 7


def test_an_exception_in_one_row_is_that_rows_not_screened(monkeypatch):
    real = batch_module.screen_letdown

    def boom(fluid, conditions, options):
        if conditions[0].t_in_k == 301.5:
            raise RuntimeError("kaboom")
        return real(fluid, conditions, options)

    monkeypatch.setattr(batch_module, "screen_letdown", boom)
    cases = _lean_cases(3)
    cases[1] = dataclasses.replace(cases[1], t_in_k=301.5)
    res = screen_batch(cases)      # three rows of one fluid: below BATCH_MIN_ROWS, all scalar
    assert [r.tag for r in res.rows] == ["L0", "L1", "L2"]
    assert res.rows[1].outcome == Outcome.NOT_SCREENED.value and "kaboom" in res.rows[1].message
    assert res.rows[1].t_screen_k is None and res.rows[1].findings[0]["topic"] == Topic.COLD_METAL.value
    assert res.rows[0].outcome != Outcome.NOT_SCREENED.value and res.n_scalar == 3


def test_bad_inputs_do_not_stop_the_group():
    cases = _lean_cases(8)
    cases[2] = dataclasses.replace(cases[2], p_out_pa=cases[2].p_in_pa * 2)   # p_out above p_in
    cases[6] = dataclasses.replace(cases[6], t_in_k=math.nan)
    res = screen_batch(cases)
    assert [r.row for r in res.rows] == [c.row for c in cases]
    for k in (2, 6):
        assert res.rows[k].outcome == Outcome.NOT_SCREENED.value and res.rows[k].path == "scalar"
        assert res.rows[k].message
    assert sum(r.path == "batch" for r in res.rows) == 6


def test_rows_are_grouped_by_fluid_and_keep_their_order():
    a, b = Fluid(LEAN, kij=0), Fluid(LEAN, kij=0, eos="SRK")
    cases = []
    for i in range(12):
        cases.append(BatchCase(i + 1, f"R{i}", a if i % 2 else b, (50 + i) * BAR, 305.0, 25 * BAR, LIMITS))
    res = screen_batch(cases)
    assert [r.tag for r in res.rows] == [c.tag for c in cases]
    for case, row in zip(cases, res.rows, strict=True):
        s = scalar(case)
        assert row.path == "batch"
        assert row.t_screen_k == pytest.approx(s.t_out_min_k, abs=0.01)
        assert list(row.t_out_by_model) == [case.fluid.eos.value, "SRK" if case.fluid.eos.value == "PR" else "PR"]


def test_one_model_when_asked():
    cases = _lean_cases(6)
    res = screen_batch(cases, compare_models=False)
    for case, row in zip(cases, res.rows, strict=True):
        assert row.path == "batch" and list(row.t_out_by_model) == ["PR"]
        assert row.t_screen_k == pytest.approx(scalar(case, compare_models=False).t_out_min_k, abs=0.01)
        assert all(f["topic"] != Topic.MODEL_SPREAD.value for f in row.findings)


def test_no_limit_is_not_screened_and_empty_list():
    cases = [dataclasses.replace(c, limits=ColdLimits()) for c in _lean_cases(6)]
    res = screen_batch(cases)
    assert res.counts[Outcome.NOT_SCREENED.value] == 6
    assert all(r.t_screen_k is not None and r.margin_to_limit_k is None for r in res.rows)
    empty = screen_batch([])
    assert isinstance(empty, BatchScreening) and empty.rows == () and empty.n_scalar == 0
    assert empty.counts == {o.value: 0 for o in Outcome}
