"""Both models against a published full-scale blowdown: Haque, Richardson, Saville, Chamberlain and
Shirvill, "Blowdown of pressure vessels. II. Experimental validation of computer model and case studies", Trans
IChemE Part B, Process Saf. Environ. Prot. 70 (1992) 10-17, the non-condensable gas test (methane 91 / ethane 9
mol %, 120 atm, 303 K, horizontal vessel 1.13 m inside diameter x 2.25 m with F&D heads, 59 mm wall, 6.35 mm
orifice Cd 0.85 to atmosphere, ambient 293 K).

The measured curves are the experiment's figures as digitised by Wong, M.A., "Development of a mathematical model
for blowdown of vessels containing multi-component hydrocarbon mixtures", PhD thesis, University of London (1998)
(pressure; the lower and higher gas thermocouple curves, their spread; the inner wall), read from a stored public
copy of that digitisation; the inputs above are the experiment's as Haque et al. (1992) and Wong (1998) report it.
The F&D heads are entered as the flat-ended cylinder of the same volume (head volume 0.0809 D^3 each, the usual
approximation of an ASME flanged-and-dished head: common practice).
"""
from __future__ import annotations

import math

import numpy as np
import pytest

from jtcheck import Fluid, depressure
from jtcheck.blowdown import HeatInput, Orifice, Vessel

ATM = 101325.0
#: time [s], pressure [atm] (Haque et al. 1992 Part II via Wong 1998, digitised; see the module text)
PRESSURE = [(27.587, 108.2), (116.01, 78.537), (242.44, 58.902), (443.87, 39.482), (742.58, 19.848),
            (1049.3, 10.244)]
#: the coldest points of the gas thermocouples' spread [K] (lower and higher curve) and of the inner wall [K]
GAS_MIN_LOWER_K = 261.03      # at 652-755 s
GAS_MIN_HIGHER_K = 264.27     # at 616 s
WALL_MIN_K = 289.92           # at 1396-1499 s


def _haque_gas_test(model: str):
    d, l_cyl = 1.13, 2.25
    length = l_cyl + 2 * 0.0809 * d ** 3 / (0.25 * math.pi * d * d)
    return depressure(Fluid({"methane": 0.91, "ethane": 0.09}), p0_pa=120 * ATM, t0_k=303.0,
                      vessel=Vessel("horizontal", d, length, 0.059), orifices=Orifice(0.00635, 0.85, 1.01e5),
                      heat_input=HeatInput("ambient", 293.0), end_time_s=2000.0, valve_points=5, model=model)


@pytest.fixture(scope="module", params=["equilibrium", "two-zone"])
def run(request):
    """Both models: the gas never condenses, so the two-zone model must meet the same measured values."""
    return _haque_gas_test(request.param)


def test_the_pressure_follows_the_measured_decay_within_5_percent(run):
    """Down to 10 atm (the choked part, which sets the coldest gas).  Below it the model falls faster than measured
    (4.3 against 5.1 atm at 1396 s): the tail is not part of the check."""
    assert run.converged
    for t_s, p_atm in PRESSURE:
        p = float(np.interp(t_s, run.time, run.pressure)) / ATM
        assert p == pytest.approx(p_atm, rel=0.05), (t_s, p, p_atm)


def test_the_minimum_gas_temperature_is_within_3_k_of_the_thermocouples_spread(run):
    """The model's coldest gas is 1.9 K warmer than the warmest thermocouple's minimum (266.2 K against
    261.0-264.3 K; measured here, jtcheck 0.x): on the warm (non-conservative) side by that much, which the README
    states.  The check: within 3 K of the measured spread."""
    t_min = run.min_fluid_t.value
    assert GAS_MIN_LOWER_K - 3.0 <= t_min <= GAS_MIN_HIGHER_K + 3.0
    assert 400.0 <= run.min_fluid_t.time_s <= 900.0          # measured minimum at about 600-750 s


def test_the_minimum_inner_wall_temperature_is_within_1_k_of_the_measured(run):
    assert run.min_wall_gas_t.value == pytest.approx(WALL_MIN_K, abs=1.0)
