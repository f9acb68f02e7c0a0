"""Compiled isentropic nozzle: the greatest mass flux of a real fluid along its isentrope.

From a stagnation state (P0, h0, s0) the fluid expands isentropically; at throat pressure P the mass
flux is G(P) = rho(P) sqrt(2 (h0 - h(P)) / M) [kg/(m^2 s)] (the direct integration of the isentropic
nozzle equation, API Standard 520 Part I, 10th ed. (2020), Annex B; homogeneous equilibrium when the
isentrope is two-phase).  G rises from zero at P0 to a maximum at the critical (choked) pressure and
falls; the throat sits at the critical pressure when the back pressure is below it, else at the back
pressure.  The maximum is found by golden-section search on ln P (G is unimodal on the isentrope); each
point is a PS flash of :mod:`jtcheck.thermo.kernels.flash_spec`.  The same physics, with a scan and
scipy's bounded search, is :func:`jtcheck.letdown.relief.nozzle_flow`; this kernel is for the many
calls of a transient (a vessel blowdown).
"""
from __future__ import annotations

import math

import numpy as np
from numba import njit

from jtcheck.thermo.kernels.constants import ST_PURE_SAT, ST_TWO
from jtcheck.thermo.kernels.flash_spec import flash_spec
from jtcheck.thermo.models.interface import GIBBS, LIQUID, VAPOUR, props

_jit = njit(cache=True, nogil=True)

#: Golden ratio conjugate.
_GR = 0.5 * (math.sqrt(5.0) - 1.0)
#: Lowest throat pressure searched for the maximum, as a fraction of P0 [-].
LOW_FRACTION = 0.01
#: Tolerance of the critical pressure in ln P [-].
LNP_TOL = 1e-6


@_jit
def _point(prm, P, h0, s0, z, T_guess, M, c_shift, x, y, t_skip):
    """(ok, G [kg/(m^2 s)], T [K], beta [-], mixture density [kg/m^3]) at pressure P on the isentrope."""
    st, T, beta, h, s, its, r, tpd = flash_spec(prm, P, s0, z, T_guess, 1, x, y, t_skip)
    if st >= 10:
        return False, np.nan, T, np.nan, np.nan
    if st == ST_TWO:
        v = beta * props(prm, T, P, y, GIBBS)[1] + (1.0 - beta) * props(prm, T, P, x, GIBBS)[1]
    elif st == ST_PURE_SAT:
        v = beta * props(prm, T, P, z, VAPOUR)[1] + (1.0 - beta) * props(prm, T, P, z, LIQUID)[1]
    else:
        v = props(prm, T, P, z, GIBBS)[1]
    v -= c_shift
    dh = h0 - (h - P * c_shift)
    if not (v > 0.0):
        return False, np.nan, T, beta, np.nan
    rho = M / v
    return True, rho * math.sqrt(2.0 * max(dh, 0.0) / M), T, beta, rho


@_jit
def throat(prm, P0, T0, h0, s0, z, Pb, M, c_shift, t_skip):
    """Throat of the isentropic nozzle from stagnation (P0 [Pa], T0 [K], h0 [J/mol], s0 [J/(mol K)]) to the
    back pressure Pb [Pa].

    ``M`` is the molar mass [kg/mol], ``c_shift`` the volume translation sum z_i c_i [m^3/mol] (0 without;
    h0 then carries the shift -P0 c_shift).  Returns (ok, choked, G [kg/(m^2 s)], P_throat [Pa],
    T_throat [K], beta_throat [-], flashes): ok False when a PS flash failed."""
    n = z.size
    x = np.empty(n)
    y = np.empty(n)
    flashes = 0
    if not (Pb < P0):
        return True, False, 0.0, P0, T0, np.nan, 0
    a = math.log(max(Pb, LOW_FRACTION * P0))
    b = math.log(P0)
    # golden section on ln P for the maximum of G
    c = b - _GR * (b - a)
    d = a + _GR * (b - a)
    ok, Gc, Tc, bc, rc = _point(prm, math.exp(c), h0, s0, z, T0 * math.exp(0.25 * (c - b)), M, c_shift, x, y, t_skip)
    flashes += 1
    if not ok:
        return False, False, np.nan, math.exp(c), Tc, np.nan, flashes
    ok, Gd, Td, bd, rd = _point(prm, math.exp(d), h0, s0, z, T0 * math.exp(0.25 * (d - b)), M, c_shift, x, y, t_skip)
    flashes += 1
    if not ok:
        return False, False, np.nan, math.exp(d), Td, np.nan, flashes
    while b - a > LNP_TOL:
        if Gc > Gd:
            b = d
            d = c
            Gd, Td, bd = Gc, Tc, bc
            c = b - _GR * (b - a)
            ok, Gc, Tc, bc, rc = _point(prm, math.exp(c), h0, s0, z, Td, M, c_shift, x, y, t_skip)
            flashes += 1
            if not ok:
                return False, False, np.nan, math.exp(c), Tc, np.nan, flashes
        else:
            a = c
            c = d
            Gc, Tc, bc = Gd, Td, bd
            d = a + _GR * (b - a)
            ok, Gd, Td, bd, rd = _point(prm, math.exp(d), h0, s0, z, Tc, M, c_shift, x, y, t_skip)
            flashes += 1
            if not ok:
                return False, False, np.nan, math.exp(d), Td, np.nan, flashes
    lnp_star = 0.5 * (a + b)
    if lnp_star - math.log(Pb) > 2.0 * LNP_TOL:
        # the maximum lies above the back pressure: choked at the critical pressure
        P = math.exp(lnp_star)
        ok, G, T, beta, rho = _point(prm, P, h0, s0, z, Tc, M, c_shift, x, y, t_skip)
        return ok, True, G, P, T, beta, flashes + 1
    if Pb < LOW_FRACTION * P0:
        # G still rising at the lowest pressure searched: report failure (a back pressure this low is choked
        # for any real fluid; the maximum was not found)
        return False, False, np.nan, math.exp(a), Tc, np.nan, flashes
    ok, G, T, beta, rho = _point(prm, Pb, h0, s0, z, Tc, M, c_shift, x, y, t_skip)
    return ok, False, G, Pb, T, beta, flashes + 1
