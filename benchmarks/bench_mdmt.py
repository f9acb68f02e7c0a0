"""Speed of the MDMT from the exemption curves (jtcheck.material_mdmt) and of the screening of a (P, T) path.

Run:  .venv/bin/python benchmarks/bench_mdmt.py [--n 2000]

Prints a table (not a test): microseconds per call of ``material_mdmt`` (curve B, random thickness 3-100 mm and
stress ratio 0.2-1.2, seeded), and milliseconds for ``screen_pressure_path`` over a path of n points (a
depressurisation-like path from 100 bar to atmospheric, invented), with the stress ratio from the pressure.
"""
from __future__ import annotations

import argparse
import time

import numpy as np

from jtcheck import material_mdmt
from jtcheck.screening.mdmt import MaterialColdSpec, screen_pressure_path, shipped_curve_table


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--n", type=int, default=2000)
    n = parser.parse_args().n
    rng = np.random.default_rng(17)
    shipped_curve_table()   # read the table once, untimed
    ts = rng.uniform(0.003, 0.1, n)
    rs = rng.uniform(0.2, 1.2, n)
    t0 = time.perf_counter()
    for t, r in zip(ts, rs, strict=True):
        material_mdmt("B", float(t), float(r))
    per_call = (time.perf_counter() - t0) / n
    spec = MaterialColdSpec(name="bench", curve="B", thickness_m=0.0254, allowable_stress_pa=138e6,
                            outside_diameter_m=0.61)
    ps = np.linspace(100e5, 1.2e5, n)
    temps = np.linspace(290.0, 200.0, n)
    t0 = time.perf_counter()
    s = screen_pressure_path(ps, temps, spec, p_atm_pa=101325.0, margin_k=5.0)
    path_s = time.perf_counter() - t0
    print(f"{'what':<48}{'n':>8}{'time':>16}")
    print(f"{'material_mdmt, one call':<48}{n:>8}{per_call * 1e6:>13.1f} us")
    print(f"{'screen_pressure_path, whole path':<48}{n:>8}{path_s * 1e3:>13.1f} ms")
    print(f"path outcome: {s.outcome.value} (worst point {s.worst_index})")


if __name__ == "__main__":
    main()
