"""Speed of the hydrate temperature (van der Waals-Platteeuw, jtcheck.hydrate_temperature).

Run:  .venv/bin/python benchmarks/bench_hydrate.py

Prints a table (not a test).  A 10-component natural gas (invented composition): the hydrate temperature at
one pressure, and the 40-point curve from 1 to 200 bar, each on a fresh Fluid object (nothing kept from an
earlier call), best and median of several runs, after a warm-up that loads the compiled kernels.  No
reference library on the package registry implements van der Waals-Platteeuw, so none is timed; the Katz
gas-gravity fit (the former screening method, now a cross-check) is timed in the same run for scale.

Targets (issue 13): one pressure <= 5 ms; the 40-point curve <= 0.3 s.  The batch target (hydrate screening
within 2x of the same list without it) is measured by benchmarks/bench_batch.py.
"""
from __future__ import annotations

import platform
import statistics
import time
from importlib.metadata import version

import numpy as np

GAS = {"methane": 0.85, "ethane": 0.06, "propane": 0.03, "isobutane": 0.005, "n-butane": 0.008,
       "n-pentane": 0.003, "n-hexane": 0.003, "nitrogen": 0.02, "carbon dioxide": 0.02, "hydrogen sulfide": 0.001}
RUNS = 15


def _time(fn) -> list[float]:
    out = []
    for _ in range(RUNS):
        t0 = time.perf_counter()
        fn()
        out.append(time.perf_counter() - t0)
    return out


def main() -> None:
    import jtcheck
    from jtcheck.screening.hydrates import gas_specific_gravity, hydrate_temperature_k

    t0 = time.perf_counter()
    jtcheck.hydrate_temperature(jtcheck.Fluid(GAS), np.geomspace(1e5, 200e5, 4))
    warm = time.perf_counter() - t0
    curve_p = np.geomspace(1e5, 200e5, 40)
    one = _time(lambda: jtcheck.hydrate_temperature(jtcheck.Fluid(GAS), 50e5))
    fluid_only = _time(lambda: jtcheck.Fluid(GAS))
    curve = _time(lambda: jtcheck.hydrate_temperature(jtcheck.Fluid(GAS), curve_p))
    g = gas_specific_gravity(jtcheck.Fluid(GAS))
    katz = _time(lambda: hydrate_temperature_k(50e5, g))
    res = jtcheck.hydrate_temperature(jtcheck.Fluid(GAS), curve_p)

    print(f"jtcheck {version('jtcheck')} | numpy {np.__version__} | numba {version('numba')} | "
          f"Python {platform.python_version()} | {platform.machine()}")
    print(f"warm-up (loads the compiled kernels): {warm:.2f} s; {RUNS} runs each, fresh Fluid every run\n")
    print(f"{'case':62s} {'best':>9s} {'median':>9s} {'target':>9s}")
    rows = [
        ("hydrate T at 50 bar, 10-component gas (incl. making the Fluid)", one, 5e-3),
        ("  of which making the Fluid", fluid_only, None),
        ("40-point hydrate curve 1-200 bar (incl. making the Fluid)", curve, 0.3),
        ("Katz gas-gravity fit at 50 bar (former method, cross-check)", katz, None),
    ]
    for label, times, target in rows:
        best, med = min(times), statistics.median(times)
        tgt = "-" if target is None else f"{target * 1e3:g} ms"
        print(f"{label:62s} {best * 1e3:8.3f}ms {med * 1e3:8.3f}ms {tgt:>9s}"
              + ("" if target is None else ("  met" if med <= target else "  NOT met")))
    print(f"\ncurve: {int(np.sum(res.screened))} of 40 points screened (the rest below 245 K or above 300 bar); "
          f"structure at 50 bar {jtcheck.hydrate_temperature(jtcheck.Fluid(GAS), 50e5).structure}")


if __name__ == "__main__":
    main()
