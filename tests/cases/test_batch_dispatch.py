"""Letdown lists dispatch on the case kind: same results as the screening they wrap, and a kind can opt out of
the vectorised path."""
from __future__ import annotations

import numpy as np
import pytest

from jtcheck import Fluid
from jtcheck.cases import batch as cases_batch
from jtcheck.cases.letdown import LETDOWN
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


def test_dispatch_by_kind_gives_the_screening_it_wraps():
    cases = rows(40)
    by_kind = cases_batch.screen_rows(cases)
    direct = screen_batch(cases)
    assert [r.to_dict() for r in by_kind.rows] == [r.to_dict() for r in direct.rows]
    assert by_kind.n_batch > 0


def test_a_kind_that_is_not_vectorised_takes_the_scalar_path_with_its_own_screening(monkeypatch):
    calls = []

    class ScalarOnly(type(LETDOWN)):
        vectorised = False

        def compute(self, fluid, values, **switches):
            calls.append(values["inlet_pressure_pa"])
            return super().compute(fluid, values, **switches)

    monkeypatch.setattr(cases_batch, "kind_of", lambda device: ScalarOnly())
    cases = rows(30)
    res = cases_batch.screen_rows(cases)
    assert res.n_scalar == 30
    assert sorted(calls) == sorted(c.p_in_pa for c in cases)
    direct = screen_batch(cases)
    for a, b in zip(res.rows, direct.rows, strict=True):
        assert a.outcome == b.outcome
        assert a.t_screen_k == pytest.approx(b.t_screen_k, abs=0.05)
