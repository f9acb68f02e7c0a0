"""Same model, independent implementation: jtcheck's letdowns against the thermo library's PT and
PH flashes, given identical Tc, Pc, omega, kij and ideal-gas heat capacities (reference_thermo.py).

With the same constants both solve the same equations, so the outlet temperatures must agree to
solver tolerance; we require 0.01 K and 0.001 in vapour fraction (the issue's bar is 0.1 K).
"""
from __future__ import annotations

import pytest
from conftest import LEAN_GAS, RICH_GAS
from reference_thermo import THERMO_VERSION, make_flasher, thermo_letdown

from jtcheck import Fluid, letdown

# (label, composition, eos, p_in [Pa], t_in [K], p_out [Pa])
CASES = [
    ("N2 gas", {"nitrogen": 1.0}, "PR", 100e5, 300.0, 10e5),
    ("N2 cold gas", {"nitrogen": 1.0}, "SRK", 150e5, 200.0, 20e5),
    ("CH4 gas", {"methane": 1.0}, "PR", 100e5, 300.0, 5e5),
    ("CH4 cold into two-phase", {"methane": 1.0}, "PR", 60e5, 200.0, 5e5),
    ("C2H6 gas", {"ethane": 1.0}, "PR", 40e5, 330.0, 10e5),
    ("C2H6 liquid flashing", {"ethane": 1.0}, "PR", 60e5, 270.0, 10e5),
    ("C3H8 liquid flashing", {"propane": 1.0}, "PR", 20e5, 300.0, 2e5),
    ("C3H8 liquid flashing SRK", {"propane": 1.0}, "SRK", 20e5, 300.0, 2e5),
    ("CO2 gas", {"carbon dioxide": 1.0}, "PR", 30e5, 350.0, 6e5),
    ("CO2 liquid flashing", {"carbon dioxide": 1.0}, "PR", 60e5, 280.0, 10e5),
    ("CO2 dense phase", {"carbon dioxide": 1.0}, "PR", 150e5, 320.0, 60e5),
    ("CO2 dense phase SRK", {"carbon dioxide": 1.0}, "SRK", 150e5, 320.0, 60e5),
    ("lean gas 100->30 bar", LEAN_GAS, "PR", 100e5, 313.15, 30e5),
    ("lean gas 100->10 bar", LEAN_GAS, "PR", 100e5, 313.15, 10e5),
    ("lean gas SRK 100->10 bar", LEAN_GAS, "SRK", 100e5, 313.15, 10e5),
    ("lean gas cold into two-phase", LEAN_GAS, "PR", 120e5, 255.0, 40e5),
    ("rich gas two-phase outlet 30 bar", RICH_GAS, "PR", 100e5, 300.0, 30e5),
    ("rich gas two-phase outlet 10 bar", RICH_GAS, "PR", 100e5, 300.0, 10e5),
    ("rich gas SRK two-phase", RICH_GAS, "SRK", 100e5, 300.0, 20e5),
    ("CO2-rich with methane", {"carbon dioxide": 0.95, "methane": 0.05}, "PR", 100e5, 310.0, 30e5),
]


@pytest.mark.parametrize("label, comp, eos, p_in, t_in, p_out", CASES, ids=[f"{c[0]} (thermo {THERMO_VERSION})"
                                                                           for c in CASES])
def test_outlet_agrees_with_thermo(label, comp, eos, p_in, t_in, p_out):
    fluid = Fluid(comp, eos=eos, kij=0)
    ours = letdown(fluid, p_in=p_in, t_in=t_in, p_out=p_out)
    assert ours.converged, ours.message
    t_ref, vf_ref = thermo_letdown(make_flasher(fluid), fluid.zs, p_in, t_in, p_out)
    assert ours.t_out == pytest.approx(t_ref, abs=0.01)
    assert ours.vapor_fraction == pytest.approx(vf_ref, abs=1e-3)
