"""Speed of jtcheck's flashes against the thermo library, timed in the same run on the same inputs.

Run:  make bench   (or .venv/bin/python benchmarks/bench_flash.py [--quick])

Prints a table.  thermo is used the way its users normally set it up (ChemicalConstantsPackage.from_IDs,
PRMIX gas and liquid, FlashVL, kij = 0); jtcheck uses its own constants with kij = 0.  The targets are
those of issue 2: PH flash >= 100x (single-phase outlet) and >= 50x (two-phase outlet) faster than
thermo's, and a batch of 10,000 letdowns at >= 1000x less time per case than one thermo PH flash.
"""
from __future__ import annotations

import argparse
import platform
import time
from importlib.metadata import version

import numpy as np

LEAN = {"methane": 0.85, "ethane": 0.07, "propane": 0.03, "n-butane": 0.01, "nitrogen": 0.02,
        "carbon dioxide": 0.02}
RICH = {"methane": 0.70, "ethane": 0.10, "propane": 0.08, "n-butane": 0.04, "n-pentane": 0.02,
        "n-hexane": 0.02, "nitrogen": 0.02, "carbon dioxide": 0.02}


def thermo_flasher(names):
    from thermo import PRMIX, CEOSGas, CEOSLiquid, ChemicalConstantsPackage, FlashVL

    consts, props = ChemicalConstantsPackage.from_IDs(names)
    kw = dict(Tcs=consts.Tcs, Pcs=consts.Pcs, omegas=consts.omegas, kijs=[[0.0] * len(names) for _ in names])
    gas = CEOSGas(PRMIX, kw, HeatCapacityGases=props.HeatCapacityGases)
    liq = CEOSLiquid(PRMIX, kw, HeatCapacityGases=props.HeatCapacityGases)
    return FlashVL(consts, props, liquid=liq, gas=gas)


def best_time(fn, repeat, number):
    """Best mean time per call [s] over ``repeat`` rounds of ``number`` calls."""
    best = np.inf
    for _ in range(repeat):
        t0 = time.perf_counter()
        for _ in range(number):
            fn()
        best = min(best, (time.perf_counter() - t0) / number)
    return best


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--quick", action="store_true", help="fewer repetitions")
    args = ap.parse_args()
    rep = 2 if args.quick else 5

    from jtcheck import Fluid, letdown

    rows = []
    t0 = time.perf_counter()
    lean = Fluid(LEAN, kij=0)
    letdown(lean, 100e5, 313.15, 30e5)
    first_call = time.perf_counter() - t0
    rich = Fluid(RICH, kij=0)

    for label, comp, fluid, p_in, t_in, p_out, target in [
        ("PH flash, lean gas 100 bar 40 degC -> 30 bar (single phase)", LEAN, lean, 100e5, 313.15, 30e5, 100),
        ("PH flash, rich gas 100 bar 27 degC -> 30 bar (two-phase)", RICH, rich, 100e5, 300.0, 30e5, 50),
        ("PH flash, rich gas 100 bar 27 degC -> 10 bar (two-phase)", RICH, rich, 100e5, 300.0, 10e5, 50),
    ]:
        names = list(comp)
        fl = thermo_flasher(names)
        zs = list(comp.values())
        h_th = fl.flash(T=t_in, P=p_in, zs=zs).H()
        t_th = best_time(lambda fl=fl, h=h_th, zs=zs, p=p_out: fl.flash(P=p, H=h, zs=zs), rep, 5)
        r_th = fl.flash(P=p_out, H=h_th, zs=zs)
        h_ours = fluid.flash_pt(t_in, p_in).h
        t_ours = best_time(lambda f=fluid, h=h_ours, p=p_out, t=t_in: f.flash_ph(p, h, t), rep, 200)
        r_ours = fluid.flash_ph(p_out, h_ours, t_in)
        rows.append((label, t_ours, t_th, target, r_ours.T, r_th.T, r_ours.beta, r_th.VF))

    # full letdown (inlet PT flash + outlet PH flash) on both sides
    fl = thermo_flasher(list(LEAN))
    zs = list(LEAN.values())

    def th_letdown():
        st = fl.flash(T=313.15, P=100e5, zs=zs)
        return fl.flash(P=30e5, H=st.H(), zs=zs)

    t_th_ld = best_time(th_letdown, rep, 3)
    t_ours_ld = best_time(lambda: letdown(lean, 100e5, 313.15, 30e5), rep, 200)

    # batch of 10,000 random letdowns of the lean gas
    rng = np.random.default_rng(20261201)
    N = 10_000
    p_in = rng.uniform(20e5, 150e5, N)
    t_in = rng.uniform(250.0, 350.0, N)
    p_out = p_in * rng.uniform(0.01, 0.90, N)
    t0 = time.perf_counter()
    letdown(lean, p_in[:500], t_in[:500], p_out[:500])  # loads compiled code, computes the envelope once
    t_batch_first = time.perf_counter() - t0
    t_batch = best_time(lambda: letdown(lean, p_in, t_in, p_out), max(2, rep // 2), 1)
    res = letdown(lean, p_in, t_in, p_out)
    idx = rng.choice(N, 12, replace=False)
    t_th_case = []
    for k in idx:
        h = fl.flash(T=t_in[k], P=p_in[k], zs=zs).H()
        t1 = time.perf_counter()
        fl.flash(P=p_out[k], H=h, zs=zs)
        t_th_case.append(time.perf_counter() - t1)
    t_th_case = float(np.mean(t_th_case))

    print(f"jtcheck {version('jtcheck')} vs thermo {version('thermo')} | numpy {np.__version__} | "
          f"numba {version('numba')} | Python {platform.python_version()} | {platform.machine()}")
    print(f"first call (loads the compiled kernels from cache): {first_call:.2f} s\n")
    print(f"{'case':64s} {'jtcheck':>10s} {'thermo':>10s} {'speed-up':>9s} {'target':>7s}  "
          f"{'T_out jtcheck/thermo [K]':>25s} {'VF jtcheck/thermo':>18s}")
    for label, t_o, t_t, target, T_o, T_t, b_o, b_t in rows:
        print(f"{label:64s} {t_o * 1e3:8.3f}ms {t_t * 1e3:8.2f}ms {t_t / t_o:8.0f}x {target:6d}x  "
              f"{T_o:12.3f}/{T_t:<12.3f} {b_o:8.4f}/{b_t:<8.4f}")
    print(f"{'letdown(): inlet PT + outlet PH, lean gas':64s} {t_ours_ld * 1e3:8.3f}ms {t_th_ld * 1e3:8.2f}ms "
          f"{t_th_ld / t_ours_ld:8.0f}x {'-':>6s}")
    per_case = t_batch / N
    print(f"{'batch of 10,000 letdowns (lean gas), time per case':64s} {per_case * 1e6:7.1f}us "
          f"{t_th_case * 1e3:8.2f}ms {t_th_case / per_case:8.0f}x {1000:6d}x")
    print(f"\nbatch: {N} cases in {t_batch:.3f} s; converged {int(res.converged.sum())}/{N}; "
          f"two-phase outlets {int(np.sum(res.phase == 'two-phase'))}; first batch call of this fluid "
          f"(500 cases, includes its phase envelope) {t_batch_first:.2f} s")
    print("thermo per-case time: mean of one PH flash over 12 of the batch's cases")


if __name__ == "__main__":
    main()
