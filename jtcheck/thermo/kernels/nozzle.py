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
#: Tolerance of the critical pressure in ln P [-] (G is flat at its maximum: the error in G is of the order of
#: the square of this).
LNP_TOL = 1e-5
#: Half-width in ln P of the search around a hinted critical pressure ratio [-].
HINT_HALF_WIDTH = 0.12


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
def _golden(prm, a, b, h0, s0, z, T0, lnP0, M, c_shift, x, y, t_skip):
    """Golden-section search for the maximum of G on ln P in [a, b].

    Returns (ok, ln P at the maximum, T there, flashes)."""
    flashes = 0
    c = b - _GR * (b - a)
    d = a + _GR * (b - a)
    ok, Gc, Tc, bc, rc = _point(prm, math.exp(c), h0, s0, z, T0 * math.exp(0.25 * (c - lnP0)), M, c_shift, x, y,
                                t_skip)
    flashes += 1
    if not ok:
        return False, c, Tc, flashes
    ok, Gd, Td, bd, rd = _point(prm, math.exp(d), h0, s0, z, T0 * math.exp(0.25 * (d - lnP0)), M, c_shift, x, y,
                                t_skip)
    flashes += 1
    if not ok:
        return False, d, Td, flashes
    while b - a > LNP_TOL:
        if Gc > Gd:
            b = d
            d = c
            Gd, Td = Gc, Tc
            c = b - _GR * (b - a)
            ok, Gc, Tc, bc, rc = _point(prm, math.exp(c), h0, s0, z, Td, M, c_shift, x, y, t_skip)
        else:
            a = c
            c = d
            Gc, Tc = Gd, Td
            d = a + _GR * (b - a)
            ok, Gd, Td, bd, rd = _point(prm, math.exp(d), h0, s0, z, Tc, M, c_shift, x, y, t_skip)
        flashes += 1
        if not ok:
            return False, 0.5 * (a + b), Tc, flashes
    return True, 0.5 * (a + b), Tc, flashes


@_jit
def throat(prm, P0, T0, h0, s0, z, Pb, M, c_shift, t_skip, ratio_hint):
    """Throat of the isentropic nozzle from stagnation (P0 [Pa], T0 [K], h0 [J/mol], s0 [J/(mol K)]) to the
    back pressure Pb [Pa].

    ``M`` is the molar mass [kg/mol], ``c_shift`` the volume translation sum z_i c_i [m^3/mol] (0 without;
    h0 then carries the shift -P0 c_shift).  ``ratio_hint`` (0 for none) is a critical pressure ratio found
    nearby (the previous time step): the search starts in a narrow window around it and falls back to the full
    range when the maximum is not inside.  Returns (ok, choked, G [kg/(m^2 s)], P_throat [Pa], T_throat [K],
    beta_throat [-], flashes): ok False when a PS flash failed."""
    n = z.size
    x = np.empty(n)
    y = np.empty(n)
    if not (Pb < P0):
        return True, False, 0.0, P0, T0, np.nan, 0
    lnP0 = math.log(P0)
    lo_full = math.log(max(Pb, LOW_FRACTION * P0))
    flashes = 0
    found = False
    lnp_star = np.nan
    Tc = T0
    if ratio_hint > 0.0:
        a = max(lnP0 + math.log(ratio_hint) - HINT_HALF_WIDTH, lo_full)
        b = min(lnP0 + math.log(ratio_hint) + HINT_HALF_WIDTH, lnP0)
        if b - a > 4.0 * LNP_TOL:
            ok, lnp_star, Tc, k = _golden(prm, a, b, h0, s0, z, T0, lnP0, M, c_shift, x, y, t_skip)
            flashes += k
            if not ok:
                return False, False, np.nan, math.exp(lnp_star), Tc, np.nan, flashes
            inside = (lnp_star - a > 4.0 * LNP_TOL or a <= lo_full) and (b - lnp_star > 4.0 * LNP_TOL or b >= lnP0)
            found = inside
    if not found:
        ok, lnp_star, Tc, k = _golden(prm, lo_full, lnP0, h0, s0, z, T0, lnP0, M, c_shift, x, y, t_skip)
        flashes += k
        if not ok:
            return False, False, np.nan, math.exp(lnp_star), Tc, np.nan, flashes
    if lnp_star - math.log(Pb) > 4.0 * LNP_TOL:
        # the maximum lies above the back pressure: choked at the critical pressure
        P = math.exp(lnp_star)
        ok, G, T, beta, rho = _point(prm, P, h0, s0, z, Tc, M, c_shift, x, y, t_skip)
        return ok, True, G, P, T, beta, flashes + 1
    if Pb < LOW_FRACTION * P0:
        # G still rising at the lowest pressure searched: the maximum was not found
        return False, False, np.nan, math.exp(lo_full), Tc, np.nan, flashes
    ok, G, T, beta, rho = _point(prm, Pb, h0, s0, z, Tc, M, c_shift, x, y, t_skip)
    return ok, False, G, Pb, T, beta, flashes + 1
