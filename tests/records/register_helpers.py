"""Helpers shared by the case-register tests."""
from __future__ import annotations

import itertools

from sqlalchemy import func, select

#: A lean natural gas (mole fractions), the same as the shared test fixture's.
LEAN_GAS = {"methane": 0.85, "ethane": 0.07, "propane": 0.03, "n-butane": 0.01, "nitrogen": 0.02,
            "carbon dioxide": 0.02}
T0 = 273.15     # 0 degC [K]
BAR = 1.0e5     # [Pa]

_counter = itertools.count(1)


def unique(prefix: str) -> str:
    """A name not used before in this test run."""
    return f"{prefix}-{next(_counter)}"


def count(session, model) -> int:
    """Rows of ``model`` in the database, as seen by ``session``."""
    return session.scalar(select(func.count()).select_from(model))
