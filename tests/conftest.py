"""Shared fixtures."""
from __future__ import annotations

import pytest

#: The six-component natural gas of the issue's public-interface example (mole fractions).
LEAN_GAS = {"methane": 0.85, "ethane": 0.07, "propane": 0.03, "n-butane": 0.01, "nitrogen": 0.02,
            "carbon dioxide": 0.02}

#: A richer gas whose letdown ends two-phase.
RICH_GAS = {"methane": 0.70, "ethane": 0.10, "propane": 0.08, "n-butane": 0.04, "n-pentane": 0.02,
            "n-hexane": 0.02, "nitrogen": 0.02, "carbon dioxide": 0.02}


@pytest.fixture(scope="session")
def lean_gas():
    from jtcheck import Fluid

    return Fluid(LEAN_GAS, eos="PR", kij=0)


@pytest.fixture(scope="session")
def rich_gas():
    from jtcheck import Fluid

    return Fluid(RICH_GAS, eos="PR", kij=0)
