"""Phase labels of a single phase: a gas far above its critical temperature is never "liquid".

Critical constants are those of jtcheck's component table (themselves from the published data it cites);
the pure fluids' states below are chosen far from the critical point, so the label does not depend on the
model: a pure fluid above its critical temperature cannot be liquefied by compression (textbook fact), and
propane at 300 K, 20 bar lies above its vapour pressure at 300 K (about 10 bar, NIST Webbook, from memory),
a compressed liquid.
"""
from __future__ import annotations

import numpy as np
import pytest

from jtcheck import Fluid, letdown

MODELS = ["PR", "SRK", "RK", "VDW", "GERG2008"]

# (component, T [K], P [Pa], expected label)
SUPERCRITICAL_GASES = [
    ("hydrogen", 300.0, 1e5, "vapour"),
    ("hydrogen", 300.0, 10e5, "vapour"),         # below Pc (12.96 bar): a gas
    ("hydrogen", 300.0, 100e5, "supercritical"),
    ("helium", 300.0, 1e5, "vapour"),            # Pc of helium 2.27 bar
    ("helium", 300.0, 10e5, "supercritical"),
    ("nitrogen", 300.0, 10e5, "vapour"),
    ("nitrogen", 300.0, 200e5, "supercritical"),
    ("methane", 300.0, 20e5, "vapour"),
    ("methane", 300.0, 100e5, "supercritical"),
]


@pytest.mark.parametrize("eos", MODELS)
@pytest.mark.parametrize("comp, t_k, p_pa, label", SUPERCRITICAL_GASES,
                         ids=[f"{c}-{t:.0f}K-{p / 1e5:g}bar" for c, t, p, _ in SUPERCRITICAL_GASES])
def test_a_pure_gas_above_its_critical_temperature_is_never_liquid(eos, comp, t_k, p_pa, label):
    res = Fluid({comp: 1.0}, eos=eos).flash_pt(t_k, p_pa)
    assert res.converged
    assert res.phase == label and res.beta == 1.0


@pytest.mark.parametrize("eos", MODELS)
@pytest.mark.parametrize("p_pa", [20e5, 60e5])
def test_propane_at_300_k_above_its_vapour_pressure_is_still_a_liquid(eos, p_pa):
    # 60 bar is above the critical pressure (42.5 bar) but below the critical temperature (369.8 K): a
    # compressed liquid, not "supercritical"
    res = Fluid({"propane": 1.0}, eos=eos).flash_pt(300.0, p_pa)
    assert res.converged and res.phase == "liquid" and res.beta == 0.0


@pytest.mark.parametrize("eos", MODELS)
def test_a_hydrogen_blend_at_room_temperature_is_a_gas(eos):
    res = Fluid({"hydrogen": 0.8, "methane": 0.2}, eos=eos).flash_pt(300.0, 10e5)
    assert res.converged and res.phase == "vapour"


@pytest.mark.parametrize("eos", MODELS)
def test_an_lpg_mixture_below_its_pseudo_critical_temperature_is_a_liquid(eos):
    res = Fluid({"propane": 0.6, "n-butane": 0.4}, eos=eos).flash_pt(300.0, 20e5)
    assert res.converged and res.phase == "liquid"


@pytest.mark.parametrize("eos", ["SRK", "PR"])
def test_the_issue_example_hydrogen_letdown_is_a_gas_at_the_outlet(eos):
    # issue 15: hydrogen 100 -> 10 bara from 27 degC on SRK was labelled "liquid" (vapour fraction 0)
    r = letdown(Fluid({"hydrogen": 1.0}, eos=eos), p_in=100e5, t_in=300.15, p_out=10e5)
    assert r.converged and r.phase == "vapour" and r.vapor_fraction == 1.0


@pytest.mark.parametrize("eos", ["SRK", "PR"])
def test_a_batch_of_helium_letdowns_is_labelled_gas(eos):
    fl = Fluid({"helium": 1.0}, eos=eos)
    r = letdown(fl, p_in=np.array([10e5, 10e5]), t_in=np.array([300.0, 290.0]), p_out=np.array([1e5, 1.5e5]))
    assert list(r.phase) == ["vapour", "vapour"] and np.all(r.vapor_fraction == 1.0)
