"""An independent implementation of the same cubic EOS, for checks: the thermo library (Caleb Bell,
ChEDL), given jtcheck's Tc, Pc, omega, kij and ideal-gas heat capacities, so that the two must agree
to solver tolerance.  thermo's version is recorded in the test ids through ``THERMO_VERSION``."""
from __future__ import annotations

from importlib.metadata import version

import numpy as np

THERMO_VERSION = version("thermo")


def make_flasher(fluid):
    """thermo FlashVL / FlashPureVLS built from a jtcheck Fluid's own constants."""
    from thermo import (
        PR78MIX,
        RKMIX,
        SRKMIX,
        VDWMIX,
        CEOSGas,
        CEOSLiquid,
        ChemicalConstantsPackage,
        FlashPureVLS,
        FlashVL,
        HeatCapacityGas,
        PropertyCorrelationsPackage,
    )

    from jtcheck.thermo import idealgas

    mix = fluid.mixture
    n = mix.n
    hcs = []
    for i in range(n):
        cf = tuple(float(c[i]) for c in mix.cp_abcde)
        hc = HeatCapacityGas()

        def f(T, cf=cf):
            return float(idealgas.cp_ig(T, *map(np.atleast_1d, cf))[0])

        def f_int(T1, T2, cf=cf):
            a = tuple(map(np.atleast_1d, cf))
            return float(idealgas.h_ig(T2, *a)[0] - idealgas.h_ig(T1, *a)[0])

        def f_int_over_T(T1, T2, cf=cf):
            a = tuple(map(np.atleast_1d, cf))
            return float(idealgas.s_ig(T2, *a)[0] - idealgas.s_ig(T1, *a)[0])

        hc.add_method(f, Tmin=1.0, Tmax=6000.0, f_int=f_int, f_int_over_T=f_int_over_T, name="JTCHECK")
        hc.method = "JTCHECK"
        hcs.append(hc)
    consts = ChemicalConstantsPackage(Tcs=mix.tcs.tolist(), Pcs=mix.pcs.tolist(), omegas=mix.omegas.tolist(),
                                      MWs=(mix.mws * 1000).tolist(), CASs=[c.cas for c in fluid.components])
    props = PropertyCorrelationsPackage(constants=consts, HeatCapacityGases=hcs, skip_missing=True)
    eos_cls = {"PR": PR78MIX, "SRK": SRKMIX, "RK": RKMIX, "VDW": VDWMIX}[fluid.eos.value]
    kw = dict(Tcs=mix.tcs.tolist(), Pcs=mix.pcs.tolist(), omegas=mix.omegas.tolist(), kijs=mix.kij.tolist())
    if fluid.eos.value in ("RK", "VDW"):
        kw.pop("omegas")
    gas = CEOSGas(eos_cls, kw, HeatCapacityGases=hcs)
    liq = CEOSLiquid(eos_cls, kw, HeatCapacityGases=hcs)
    if n == 1:
        return FlashPureVLS(consts, props, liquids=[liq], gas=gas, solids=[])
    return FlashVL(consts, props, liquid=liq, gas=gas)


def thermo_letdown(flasher, zs, p_in, t_in, p_out):
    """(T_out [K], vapour fraction [-]) of thermo's PT then PH flash."""
    zs = list(map(float, zs))
    st = flasher.flash(T=t_in, P=p_in, zs=zs)
    out = flasher.flash(P=p_out, H=st.H(), zs=zs)
    return out.T, out.VF
