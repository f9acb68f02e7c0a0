"""Many isenthalpic or isentropic letdowns of one feed, compiled and run in parallel (``prange``).

Each case is an inlet PT flash and an outlet PH (or PS) flash from :mod:`jtcheck.thermo.kernels`.
"""
from __future__ import annotations

import numpy as np
from numba import njit, prange

from jtcheck.thermo.kernels.flash_pt import flash_pt
from jtcheck.thermo.kernels.flash_spec import flash_spec


@njit(cache=True, parallel=True)
def letdown_batch(prm, z, p_in, t_in, p_out, spec, offset, t_skip):
    """Isenthalpic (spec 0) or isentropic (spec 1) letdowns of one feed, in parallel.

    The outlet target is the inlet value plus ``offset[k]`` (the volume-translation enthalpy
    correction, or zero); ``t_skip`` as in :func:`flash_pt`.

    Returns arrays (status_in, beta_in, h_in, s_in, status_out, T_out, beta_out, h_out, s_out,
    iterations, residual)."""
    N = p_in.size
    n = z.size
    st_in = np.empty(N, np.int64)
    b_in = np.empty(N)
    h_in = np.empty(N)
    s_in = np.empty(N)
    st_out = np.empty(N, np.int64)
    T_out = np.empty(N)
    b_out = np.empty(N)
    h_out = np.empty(N)
    s_out = np.empty(N)
    iters = np.empty(N, np.int64)
    resid = np.empty(N)
    for k in prange(N):
        x = np.empty(n)
        y = np.empty(n)
        st, b, h, s, tpd, its = flash_pt(prm, t_in[k], p_in[k], z, x, y, t_skip)
        st_in[k] = st
        b_in[k] = b
        h_in[k] = h
        s_in[k] = s
        target = (h if spec == 0 else s) + offset[k]
        st2, T2, b2, h2, s2, its2, r2, tpd2 = flash_spec(prm, p_out[k], target, z, t_in[k], spec, x, y, t_skip)
        st_out[k] = st2
        T_out[k] = T2
        b_out[k] = b2
        h_out[k] = h2
        s_out[k] = s2
        iters[k] = its2
        resid[k] = r2
    return st_in, b_in, h_in, s_in, st_out, T_out, b_out, h_out, s_out, iters, resid
