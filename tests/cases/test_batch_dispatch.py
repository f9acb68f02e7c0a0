"""Letdown-list rows are screened by their case kind: same results as the letdown screening for letdown rows,
and a kind can keep its rows off the vectorised path."""
from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from jtcheck import Fluid
from jtcheck.cases import batch as cases_batch
from jtcheck.cases.letdown import LETDOWN
from jtcheck.cases.relief import RELIEF_VALVE
from jtcheck.screening.batch import BatchCase, screen_batch
from jtcheck.screening.cold_metal import ColdLimits

BAR = 1e5
LIMITS = ColdLimits(user_limit_k=273.15 - 29.0, margin_k=5.0)
LEAN = {"methane": 0.85, "ethane": 0.07, "propane": 0.03, "n-butane": 0.01, "nitrogen": 0.02,
        "carbon dioxide": 0.02}


def rows(n: int, kind: str = "control valve") -> list[BatchCase]:
    """Invented rows of one lean gas (the batch path needs a group of rows of one fluid)."""
    rng = np.random.default_rng(7)
    fluid = Fluid(LEAN, kij=0)
    out = []
    for i in range(n):
        p_in = rng.uniform(30.0, 120.0) * BAR
        out.append(BatchCase(row=i + 2, tag=f"PCV-{i}", fluid=fluid, p_in_pa=p_in, t_in_k=rng.uniform(270.0, 320.0),
                             p_out_pa=rng.uniform(2.0 * BAR, 0.8 * p_in), limits=LIMITS,
                             t_in_min_k=None, p_in_max_pa=None, kind=kind))
    return out


def test_rows_take_their_kind():
    assert cases_batch.row_kind(rows(1, "control valve")[0]) is LETDOWN
    assert cases_batch.row_kind(rows(1, "relief_valve")[0]) is RELIEF_VALVE
    assert cases_batch.row_kind(rows(1, "")[0]) is LETDOWN
    marked = cases_batch.with_kind(rows(1)[0])
    assert marked.vectorised is LETDOWN.vectorised and marked.screen is cases_batch.row_screening


def test_letdown_rows_screened_by_kind_equal_the_letdown_screening():
    plain = rows(40)
    by_kind = screen_batch([cases_batch.with_kind(c) for c in plain])
    direct = screen_batch(plain)
    assert [r.to_dict() for r in by_kind.rows] == [r.to_dict() for r in direct.rows]
    assert by_kind.n_batch > 0


def test_rows_of_a_kind_that_is_not_vectorised_take_the_scalar_path_with_the_kind_screening():
    calls = []

    def scalar_only(case, compare_models):
        calls.append(case.row)
        return cases_batch.row_screening(case, compare_models)

    plain = rows(30)
    res = screen_batch([dataclasses.replace(c, vectorised=False, screen=scalar_only) for c in plain])
    assert res.n_scalar == 30
    assert sorted(calls) == [c.row for c in plain]
    direct = screen_batch(plain)
    for a, b in zip(res.rows, direct.rows, strict=True):
        assert a.outcome == b.outcome
        assert a.t_screen_k == pytest.approx(b.t_screen_k, abs=0.05)
