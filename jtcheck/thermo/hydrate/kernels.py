"""Compiled van der Waals-Platteeuw hydrate equilibrium: the hydrate temperature at a given pressure.

Model (van der Waals and Platteeuw, Adv. Chem. Phys. 2 (1959) 1-57; in the engineering form of
Parrish and Prausnitz, Ind. Eng. Chem. Process Des. Dev. 11 (1972) 26-35, with the parameters of
Munck, Skjold-Jorgensen and Rasmussen, Chem. Eng. Sci. 43 (1988) 2661-2672)::

    hydrate side   dmu_H / RT = sum_m nu_m ln(1 + sum_j C_mj f_j),   C_mj = (A_mj / T) exp(B_mj / T)
    water side     dmu_W / RT = dmu0 / (R T0) - int_T0^T dh / (R T^2) dT + dv P / (R T) - ln a_w

with dh = dh0 + dcp (T - T0) against liquid water and dh = dh0 (dcp = 0) against ice.  The water
phase is whichever of ice and the (possibly inhibited) liquid has the lower chemical potential, i.e.
the larger dmu_W: ice below the melting point of the water phase, liquid above; for pure water that
is 273.15 K, lowered slightly by pressure (through the larger dv against the liquid), and an
inhibitor (a_w < 1) lowers it further.  A structure is stable where dmu_H >= dmu_W; the hydrate
temperature is the highest temperature at which either structure is stable, and the structure that
is stable there forms first.

Guest fugacities f_j [atm] come from the case's own equation of state through
:mod:`jtcheck.thermo.models.interface` (an isothermal flash of the water-free fluid, then ln phi of
one of its phases: equal fugacities in both when two phases are present), so any model family wired
in there serves here unchanged.
"""
from __future__ import annotations

import math

import numpy as np
from numba import njit, prange

from jtcheck.thermo.kernels.constants import ST_TWO
from jtcheck.thermo.kernels.flash_pt import flash_pt
from jtcheck.thermo.models.interface import GIBBS, R, ln_phi

_jit = njit(cache=True, nogil=True)

_T0 = 273.15
_ATM = 101325.0

#: Status codes of :func:`hydrate_t`.
HY_OK = 0              # hydrate temperature found
HY_NONE = 1            # no hydrate between the window's ends (no former, or too low a pressure)
HY_ABOVE = 2           # hydrate still stable at the window's top
HY_FAIL_FLASH = 10     # the flash of the water-free fluid failed
HY_FAIL_ITER = 11      # the temperature iteration did not converge
HY_FAIL_INPUT = 12     # pressure not finite or not positive


@_jit
def water_side(T, P, s, ln_aw, ref):
    """dmu_W / RT of structure ``s`` against the stable water phase (ice or liquid) [-]; sets the phase.

    ``ref`` = (dmu0, dh_ice, dv_ice, dh_liq, dv_liq, dcp_liq), each of shape (2,), Munck et al. (1988) Table 2.
    Returns (value, 1 if ice else 0)."""
    dmu0, dh_ice, dv_ice, dh_liq, dv_liq, dcp_liq = ref
    common = dmu0[s] / (R * _T0)
    inv = 1.0 / _T0 - 1.0 / T
    ice = common - dh_ice[s] / R * inv + dv_ice[s] * P / (R * T)
    liq = (common - dh_liq[s] / R * inv - dcp_liq[s] / R * (math.log(T / _T0) + _T0 / T - 1.0)
           + dv_liq[s] * P / (R * T) - ln_aw)
    if ice > liq:
        return ice, 1
    return liq, 0


@_jit
def hydrate_side(T, f_atm, s, A, B, nu):
    """dmu_H / RT of structure ``s`` (van der Waals and Platteeuw 1959) for guest fugacities f [atm]."""
    total = 0.0
    n = f_atm.size
    for m in range(2):
        acc = 0.0
        for j in range(n):
            a = A[s, m, j]
            if a > 0.0:
                acc += a / T * math.exp(B[s, m, j] / T) * f_atm[j]
        total += nu[s, m] * math.log1p(acc)
    return total


@_jit
def guest_fugacities(prm, T, P, z, t_skip, x, y, lnphi, f_atm):
    """Fugacities [atm] of the water-free fluid's components at T, P (isothermal flash); returns the flash status."""
    status, beta, h, s, tpd, its = flash_pt(prm, T, P, z, x, y, t_skip)
    if status >= 10:
        return status
    comp = y if status == ST_TWO else z
    ln_phi(prm, T, P, comp, GIBBS, lnphi)
    for i in range(z.size):
        f_atm[i] = comp[i] * math.exp(lnphi[i]) * P / _ATM
    return status


@_jit
def dissolved_gas(T, f_atm, hA, hB):
    """Mole fraction of dissolved gas in the water [-], sum_j f_j / H_j(T), ln H_j [atm] = hA_j + hB_j / T."""
    xs = 0.0
    for j in range(f_atm.size):
        if hA[j] > -1e300:
            xs += f_atm[j] / math.exp(hA[j] + hB[j] / T)
    return min(xs, 0.5)


@_jit
def stability_margin(prm, T, P, z, t_skip, ln_aw, A, B, nu, ref, hA, hB, work):
    """min over structures of (dmu_W - dmu_H)/RT [-] (negative: a hydrate is stable), the structure
    (0 sI, 1 sII) that attains it, whether the water phase is ice, and the flash status.

    ``ln_aw`` is ln of the water activity of the aqueous phase without dissolved gas (inhibitor only);
    the dissolved gas (Henry's law, coefficients hA, hB) lowers it further by ln(1 - x_gas)."""
    x, y, lnphi, f = work[0], work[1], work[2], work[3]
    st = guest_fugacities(prm, T, P, z, t_skip, x, y, lnphi, f)
    if st >= 10:
        return math.nan, -1, 0, st
    ln_aw = ln_aw + math.log(1.0 - dissolved_gas(T, f, hA, hB))
    best = math.inf
    best_s = -1
    best_ice = 0
    for s in range(2):
        w, ice = water_side(T, P, s, ln_aw, ref)
        g = w - hydrate_side(T, f, s, A, B, nu)
        if g < best:
            best, best_s, best_ice = g, s, ice
    return best, best_s, best_ice, st


@_jit
def hydrate_t(prm, P, z, t_skip, ln_aw, A, B, nu, ref, hA, hB, t_lo, t_hi, t_start, tol):
    """Hydrate temperature [K] at pressure P [Pa]: the highest T in [t_lo, t_hi] where a structure is stable.

    Bracketing from ``t_start`` in steps of 5 K, then the Illinois false-position iteration to ``tol`` [K].
    Returns (status, T [K], structure (0 sI, 1 sII, -1 none), ice (1/0), evaluations)."""
    n = z.size
    if not (math.isfinite(P) and P > 0.0):
        return HY_FAIL_INPUT, math.nan, -1, 0, 0
    work = np.empty((4, n))
    evals = 0
    ta = min(max(t_start, t_lo), t_hi)
    ga, sa, ia, st = stability_margin(prm, ta, P, z, t_skip, ln_aw, A, B, nu, ref, hA, hB, work)
    evals += 1
    if st >= 10:
        return HY_FAIL_FLASH, math.nan, -1, 0, evals
    step = 5.0
    if ga < 0.0:
        # hydrate stable at ta: step up to where it is not
        tb = ta
        gb = ga
        while gb < 0.0:
            ta, ga = tb, gb
            if tb >= t_hi:
                return HY_ABOVE, t_hi, sa, ia, evals
            tb = min(tb + step, t_hi)
            gb, sb, ib, st = stability_margin(prm, tb, P, z, t_skip, ln_aw, A, B, nu, ref, hA, hB, work)
            evals += 1
            if st >= 10:
                return HY_FAIL_FLASH, math.nan, -1, 0, evals
    else:
        tb, gb = ta, ga
        while gb >= 0.0:
            ta, ga = tb, gb
            if tb <= t_lo:
                return HY_NONE, math.nan, -1, 0, evals
            tb = max(tb - step, t_lo)
            gb, sb, ib, st = stability_margin(prm, tb, P, z, t_skip, ln_aw, A, B, nu, ref, hA, hB, work)
            evals += 1
            if st >= 10:
                return HY_FAIL_FLASH, math.nan, -1, 0, evals
        # now ta: not stable (g >= 0), tb: stable (g < 0); swap so that ta is the stable end
        ta, tb, ga, gb = tb, ta, gb, ga
    # ta stable (ga < 0), tb not (gb >= 0), ta < tb
    side = 0
    for _ in range(100):
        if tb - ta < tol:
            g, s, ice, st = stability_margin(prm, ta, P, z, t_skip, ln_aw, A, B, nu, ref, hA, hB, work)
            evals += 1
            return HY_OK, 0.5 * (ta + tb), s, ice, evals
        tc = (ta * gb - tb * ga) / (gb - ga)
        if not (ta < tc < tb):
            tc = 0.5 * (ta + tb)
        # keep each step away from the ends by a fraction of the tolerance
        tc = min(max(tc, ta + 0.25 * tol), tb - 0.25 * tol)
        gc, sc, ic, st = stability_margin(prm, tc, P, z, t_skip, ln_aw, A, B, nu, ref, hA, hB, work)
        evals += 1
        if st >= 10:
            return HY_FAIL_FLASH, math.nan, -1, 0, evals
        if gc < 0.0:
            ta, ga = tc, gc
            if side == -1:
                gb *= 0.5
            side = -1
        else:
            tb, gb = tc, gc
            if side == 1:
                ga *= 0.5
            side = 1
    return HY_FAIL_ITER, math.nan, -1, 0, evals


@njit(cache=True, parallel=True)
def hydrate_t_many(prm, ps, z, t_skip, ln_aw, A, B, nu, ref, hA, hB, t_lo, t_hi, t_start, tol):
    """:func:`hydrate_t` at every pressure of ``ps`` [Pa], in parallel; each point exactly as a single call.

    Returns arrays (status, T [K], structure, ice)."""
    m = ps.size
    status = np.empty(m, dtype=np.int64)
    temps = np.empty(m)
    struct = np.empty(m, dtype=np.int64)
    ice = np.empty(m, dtype=np.int64)
    for k in prange(m):
        st, t, s, i, _ = hydrate_t(prm, ps[k], z, t_skip, ln_aw, A, B, nu, ref, hA, hB, t_lo, t_hi, t_start, tol)
        status[k] = st
        temps[k] = t
        struct[k] = s
        ice[k] = i
    return status, temps, struct, ice
