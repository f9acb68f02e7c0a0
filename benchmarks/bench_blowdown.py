"""Speed of a vessel depressurisation (jtcheck.depressure), equilibrium and two-zone models.

Run:  .venv/bin/python benchmarks/bench_blowdown.py

Prints a table (not a test).  Case: a 6-component lean natural gas (the LEAN gas of bench_flash.py) in a
vertical vessel 2 m inside diameter x 6 m, 30 mm carbon steel wall with 4 cells, from 100 bar abs and 30 degC
through a 40 mm blowdown valve (Cd 0.85) to 1.5 bar abs, still air outside at 15 degC, 15 minutes.  Each run is
timed warm (the compiled kernels loaded and the fluid's phase envelope computed by a first, untimed run); the
table says how many UV flashes (one per Runge-Kutta stage) and PS flashes (nozzle searches) each run made.
Also a pure-propane vessel with liquid (the same model with two phases), for the flash counts, and the first-film
case of issue 16 (invented: a 36 m^3 horizontal vessel 2.4 m x 8 m, 40 mm wall, a 6-component lean gas at 71 bar
abs and 300 K, 40 mm orifice to 1.5 bar abs, no heat input, 15 minutes), where a first liquid film condenses.
Before the implicit wall coefficient (commit 27b1024, this script run against that code) that case took 6 074
steps, 86 693 flashes and 15.4 s warm (32.8 s for a first, cold run) on this machine: the 3 K wall limit cut the
step to ~0.1 s while the film's boiling coefficient was held.  After: 263 steps, 6 434 flashes, about 1 s.  Its
step count is bounded by tests/blowdown/test_step_collapse.py.

Two-zone model (gas and liquid zones at their own temperatures): the propane vessel with liquid and an invented
6-component hydrocarbon liquid (methane to n-hexane) at 15 bar abs and 300 K in a horizontal vessel 2 m x 6 m,
20 mm wall, liquid level 0.8 m, 30 mm orifice to 1.2 bar abs, still air at 15 degC, 15 minutes; and the
6-component gas case, which the two-zone model runs as the equilibrium model until a liquid forms.

Targets (issue 16): the 15-minute 6-component gas blowdown with wall conduction, equilibrium model, <= 3 s; a
15-minute blowdown with liquid on the two-zone model <= 15 s.
The reference library is not timed here: no general-purpose library on the package registry offers a vessel
blowdown to compare against (CoolProp, thermo and chemicals give properties and flashes only); the single-flash
comparison is bench_flash.py's.
"""
from __future__ import annotations

import platform
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))

from bench_flash import LEAN  # noqa: E402

TARGET_S = 3.0
TARGET_TWO_ZONE_S = 15.0


def gas_case():
    from jtcheck import Fluid
    from jtcheck.blowdown import HeatInput, Orifice, Vessel

    fluid = Fluid(LEAN, eos="PR")
    kwargs = dict(p0_pa=100e5, t0_k=303.15, vessel=Vessel("vertical", 2.0, 6.0, 0.03),
                  orifices=Orifice(0.04, 0.85, 1.5e5), heat_input=HeatInput("ambient", 288.15), end_time_s=900.0,
                  wall_nodes=4)
    return fluid, kwargs


def liquid_case():
    from jtcheck import Fluid
    from jtcheck.blowdown import HeatInput, Orifice, Vessel

    fluid = Fluid({"propane": 1.0}, eos="PR")
    kwargs = dict(p0_pa=9.5e5, t0_k=298.15, vessel=Vessel("horizontal", 2.0, 6.0, 0.02),
                  orifices=Orifice(0.03, 0.85, 1.2e5), heat_input=HeatInput("ambient", 288.15), end_time_s=900.0,
                  liquid_level_m=0.8, wall_nodes=4)
    return fluid, kwargs


def mixture_liquid_case():
    from jtcheck import Fluid
    from jtcheck.blowdown import HeatInput, Orifice, Vessel

    fluid = Fluid({"methane": 0.30, "ethane": 0.10, "propane": 0.25, "n-butane": 0.20, "n-pentane": 0.10,
                   "n-hexane": 0.05}, eos="PR")
    kwargs = dict(p0_pa=15e5, t0_k=300.0, vessel=Vessel("horizontal", 2.0, 6.0, 0.02),
                  orifices=Orifice(0.03, 0.85, 1.2e5), heat_input=HeatInput("ambient", 288.15), end_time_s=900.0,
                  liquid_level_m=0.8, wall_nodes=4)
    return fluid, kwargs


def two_zone(make):
    def made():
        fluid, kwargs = make()
        return fluid, {**kwargs, "model": "two-zone"}
    return made


def film_case():
    from jtcheck import Fluid
    from jtcheck.blowdown import Orifice, Vessel

    gas = {"methane": 0.88, "ethane": 0.06, "propane": 0.03, "isobutane": 0.01, "n-butane": 0.01, "nitrogen": 0.01}
    fluid = Fluid(gas, eos="PR")
    kwargs = dict(p0_pa=71e5, t0_k=300.0, vessel=Vessel("horizontal", 2.4, 8.0, 0.04),
                  orifices=Orifice(0.04, 0.85, 1.5e5), heat_input="none", end_time_s=900.0, wall_nodes=4)
    return fluid, kwargs


def demo_case():
    """The demo site's BDV-2102 (invented, Kestrel Ridge; jtcheck/records/demo.py): inlet separator V-2100."""
    from jtcheck import Fluid
    from jtcheck.blowdown import Orifice, Vessel
    from jtcheck.records.demo import FLUIDS

    comp = next(f["composition"] for f in FLUIDS if f["name"] == "Kestrel separator gas")
    bar, patm = 1e5, 101325.0
    kwargs = dict(p0_pa=70 * bar + patm, t0_k=298.15, vessel=Vessel("vertical", 1.8, 5.0, 0.035),
                  orifices=Orifice(0.035, 0.85, 2 * bar + patm), heat_input="none", end_time_s=900.0)
    return Fluid(comp), kwargs


def haque_case():
    """The non-condensable gas test of Haque et al. 1992 Part II (inputs as tests/blowdown/test_haque_experiment.py)."""
    import math

    from jtcheck import Fluid
    from jtcheck.blowdown import HeatInput, Orifice, Vessel

    d, l_cyl, atm = 1.13, 2.25, 101325.0
    length = l_cyl + 2 * 0.0809 * d ** 3 / (0.25 * math.pi * d * d)
    kwargs = dict(p0_pa=120 * atm, t0_k=303.0, vessel=Vessel("horizontal", d, length, 0.059),
                  orifices=Orifice(0.00635, 0.85, 1.01e5), heat_input=HeatInput("ambient", 293.0), end_time_s=2000.0,
                  valve_points=5)
    return Fluid({"methane": 0.91, "ethane": 0.09}), kwargs


def timed(make, repeats: int = 3):
    from jtcheck import depressure

    fluid, kwargs = make()
    depressure(fluid, **kwargs)          # warm: kernels loaded, envelope computed
    best = float("inf")
    res = None
    for _ in range(repeats):
        t0 = time.perf_counter()
        res = depressure(fluid, **kwargs)
        best = min(best, time.perf_counter() - t0)
    return best, res


def main() -> None:
    import numba
    import numpy as np

    print(f"python {platform.python_version()}, numpy {np.__version__}, numba {numba.__version__}, "
          f"{platform.machine()}")
    print(f"{'case':44s} {'time s':>8s} {'steps':>6s} {'rejected':>8s} {'flashes':>8s} {'converged':>9s} "
          f"{'t_end s':>8s} {'P_end bar':>9s} {'Tmin K':>7s} {'Twall K':>7s}")
    for name, make in (("6-component gas, 15 min, wall 4 cells", gas_case),
                       ("propane with liquid, 15 min, wall 4 cells", liquid_case),
                       ("first liquid film, 36 m3, 71 bar, 15 min", film_case),
                       ("demo BDV-2102 (invented), 15 min", demo_case),
                       ("Haque et al. 1992 II gas test, 2000 s", haque_case),
                       ("two-zone: 6-component gas, 15 min", two_zone(gas_case)),
                       ("two-zone: propane with liquid, 15 min", two_zone(liquid_case)),
                       ("equilibrium: 6-comp. liquid, 15 min", mixture_liquid_case),
                       ("two-zone: 6-comp. liquid, 15 min", two_zone(mixture_liquid_case)),
                       ("two-zone: first liquid film, 15 min", two_zone(film_case))):
        best, r = timed(make)
        walls = [v for v in (r.min_wall_gas_t.value, r.min_wall_liquid_t.value) if np.isfinite(v)]
        print(f"{name:44s} {best:8.3f} {r.steps:6d} {r.rejected_steps:8d} {r.flashes:8d} {str(r.converged):>9s} "
              f"{r.time[-1]:8.1f} {r.pressure[-1] / 1e5:9.3f} {r.min_fluid_t.value:7.2f} {min(walls):7.2f}")
        if name.startswith("6-component"):
            verdict = "meets" if best <= TARGET_S else "MISSES"
            print(f"  target <= {TARGET_S:g} s: {verdict}")
        if name.startswith("two-zone") and "liquid" in name:
            verdict = "meets" if best <= TARGET_TWO_ZONE_S else "MISSES"
            print(f"  two-zone with liquid, target <= {TARGET_TWO_ZONE_S:g} s: {verdict}")
    print("flashes: UV flashes (one per Runge-Kutta stage) plus the PS flashes of the nozzle searches; two-zone: one "
          "gas-zone UV flash per pressure-balance iterate, plus the PT flashes of a boiling mixture pool")


if __name__ == "__main__":
    main()
