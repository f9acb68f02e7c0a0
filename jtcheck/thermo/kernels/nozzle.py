"""Compiled isentropic nozzle: the greatest mass flux of a real fluid along its isentrope.

From a stagnation state (P0, h0, s0) the fluid expands isentropically; at throat pressure P the mass
flux is G(P) = rho(P) sqrt(2 (h0 - h(P)) / M) [kg/(m^2 s)] (the direct integration of the isentropic
nozzle equation, API Standard 520 Part I, 10th ed. (2020), Annex B; homogeneous equilibrium when the
isentrope is two-phase).  G rises from zero at P0 to a maximum at the critical (choked) pressure and
falls; the throat sits at the critical pressure when the back pressure is below it, else at the back
pressure.  The maximum is found by Brent's method on ln P (G is unimodal on the isentrope); each
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

#: Golden section fraction (3 - sqrt 5) / 2.
_GR2 = 0.5 * (3.0 - math.sqrt(5.0))
#: Lowest throat pressure searched for the maximum, as a fraction of P0 [-].
LOW_FRACTION = 0.01
#: Tolerance of the critical pressure in ln P [-] (G is flat at its maximum: the error in G is of the order of
#: the square of this).
LNP_TOL = 1e-4
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
    """Maximum of G on ln P in [a, b] by Brent's method (golden section with parabolic steps; Brent, Algorithms
    for Minimization without Derivatives, 1973, ch. 5).

    Returns (ok, ln P at the maximum, T there, flashes)."""
    flashes = 0
    xm = a + _GR2 * (b - a)
    ok, G, T, bb, rr = _point(prm, math.exp(xm), h0, s0, z, T0 * math.exp(0.25 * (xm - lnP0)), M, c_shift, x, y,
                              t_skip)
    flashes += 1
    if not ok:
        return False, xm, T, flashes
    w = v = xm
    fx = fw = fv = -G
    Tx = T
    d = 0.0
    e = 0.0
    for _it in range(100):
        mid = 0.5 * (a + b)
        tol1 = LNP_TOL * 0.5
        tol2 = 2.0 * tol1
        if abs(xm - mid) <= tol2 - 0.5 * (b - a):
            break
        para = False
        if abs(e) > tol1:
            r = (xm - w) * (fx - fv)
            q = (xm - v) * (fx - fw)
            p = (xm - v) * q - (xm - w) * r
            q = 2.0 * (q - r)
            if q > 0.0:
                p = -p
            q = abs(q)
            if abs(p) < abs(0.5 * q * e) and p > q * (a - xm) and p < q * (b - xm):
                e = d
                d = p / q
                u = xm + d
                if u - a < tol2 or b - u < tol2:
                    d = tol1 if mid >= xm else -tol1
                para = True
        if not para:
            e = (a - xm) if xm >= mid else (b - xm)
            d = _GR2 * e
        u = xm + (d if abs(d) >= tol1 else (tol1 if d > 0.0 else -tol1))
        ok, G, T, bb, rr = _point(prm, math.exp(u), h0, s0, z, Tx, M, c_shift, x, y, t_skip)
        flashes += 1
        if not ok:
            return False, u, T, flashes
        fu = -G
        if fu <= fx:
            if u >= xm:
                a = xm
            else:
                b = xm
            v, fv = w, fw
            w, fw = xm, fx
            xm, fx, Tx = u, fu, T
        else:
            if u < xm:
                a = u
            else:
                b = u
            if fu <= fw or w == xm:
                v, fv = w, fw
                w, fw = u, fu
            elif fu <= fv or v == xm or v == w:
                v, fv = u, fu
    return True, xm, Tx, flashes


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
