"""Lowest outlet pressure a letdown may reach before its outlet falls below a temperature limit.

Method: along the isenthalp of the inlet state the outlet temperature is not always monotonic in the outlet
pressure: above the Joule-Thomson inversion pressure the fluid warms as it is let down, and the slope changes
where the path crosses the dew line.  So the outlet temperature is first scanned on a grid of
:data:`SCAN_POINTS` log-spaced outlet pressures from the inlet pressure down to a floor (one batch letdown,
:func:`jtcheck.letdown.throttle.letdown`); the first grid interval where it crosses below the limit, coming down
from the inlet pressure, is then refined with Brent's root finder (R. P. Brent, *Algorithms for Minimization
without Derivatives*, 1973, ch. 4; :func:`scipy.optimize.brentq`) on the scalar letdown, to about 1 Pa.

Every outlet pressure from the reported minimum up to the inlet pressure keeps the outlet at or above the
limit, to the resolution of the scan: a dip below the limit narrower than one grid interval (a ratio of
(p_in / p_floor)^(1 / (SCAN_POINTS - 1))) could be missed.
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from scipy.optimize import brentq

from jtcheck.errors import InputError
from jtcheck.letdown.checks import T_MAX_K, check_fluid, positive
from jtcheck.letdown.plain import PlainResult
from jtcheck.letdown.throttle import letdown
from jtcheck.thermo.fluid import Fluid

#: Number of outlet pressures scanned from the inlet pressure down to the floor (log-spaced, both ends included).
SCAN_POINTS = 80

#: Absolute tolerance of the root refinement [Pa].
XTOL_PA = 1.0

#: Relative size of the "tiny letdown" used to judge an inlet at the limit [-].
TINY_LETDOWN = 1e-6


@dataclass(frozen=True)
class OutletPressureLimit(PlainResult):
    """Lowest outlet pressure that keeps a letdown's outlet at or above a temperature limit.  All values SI.

    Attributes
    ----------
    p_out_min_pa : float or None
        Lowest outlet pressure [Pa] such that every outlet pressure from it up to ``p_in_pa`` gives an
        outlet at or above ``t_limit_k``.  None when the outlet stays above the limit down to the floor
        (``limited`` False), when the inlet is already too cold, or when not converged.
    t_out_at_limit_k : float or None
        Outlet temperature at ``p_out_min_pa`` [K] (equal to the limit within the tolerance, never below it).
    limited : bool
        True when the limit restricts the letdown (a minimum pressure above the floor exists, or the inlet
        is too cold for any letdown).
    inlet_too_cold : bool
        True when even a tiny letdown ends below the limit: the inlet itself is at or below it.
    converged : bool
        False when a letdown on the way down from the inlet pressure failed; then the limit is unknown.
    message : str
    p_in_pa, t_in_k, t_limit_k, p_floor_pa : float
        The inputs: inlet pressure [Pa], inlet temperature [K], temperature limit [K], lowest outlet
        pressure considered [Pa].
    t_out_at_floor_k : float or None
        Outlet temperature of a letdown to the floor [K] (None if that letdown did not converge).
    scan_p_out_pa, scan_t_out_k : tuple of float
        The scan: outlet pressures from p_in down to the floor [Pa] and their outlet temperatures [K]
        (NaN where not converged).
    warnings : tuple of str
        Fluid warnings and the state warnings at the reported pressure.
    basis : dict
        Model choices (EOS, kij set, volume translation, data versions).
    """

    p_out_min_pa: float | None
    t_out_at_limit_k: float | None
    limited: bool
    inlet_too_cold: bool
    converged: bool
    message: str
    p_in_pa: float
    t_in_k: float
    t_limit_k: float
    p_floor_pa: float
    t_out_at_floor_k: float | None
    scan_p_out_pa: tuple[float, ...] = field(default=())
    scan_t_out_k: tuple[float, ...] = field(default=())
    warnings: tuple[str, ...] = field(default=())
    basis: dict = field(default_factory=dict)


def outlet_pressure_limit(fluid: Fluid, p_in_pa: float, t_in_k: float, t_limit_k: float,
                          p_floor_pa: float = 101325.0) -> OutletPressureLimit:
    """Lowest outlet pressure for which every letdown from it up to ``p_in_pa`` stays at or above ``t_limit_k``.

    The outlet temperature is scanned on :data:`SCAN_POINTS` log-spaced outlet pressures from ``p_in_pa`` down
    to ``p_floor_pa`` (batch letdown), and the first crossing below the limit coming down from the inlet
    pressure is refined with Brent's method (Brent 1973) on the scalar letdown to about 1 Pa.  The pressure
    reported is on the safe side of the crossing: its outlet is at or above the limit.

    Parameters
    ----------
    fluid : Fluid
        The flowing fluid.
    p_in_pa : float
        Inlet pressure, absolute [Pa].
    t_in_k : float
        Inlet temperature [K].
    t_limit_k : float
        Lowest acceptable outlet temperature (a set-point limit, e.g. a material's minimum design
        metal temperature) [K].
    p_floor_pa : float
        Lowest outlet pressure considered, absolute [Pa]; below ``p_in_pa``.  Default one atmosphere.

    Returns
    -------
    OutletPressureLimit

    Raises
    ------
    jtcheck.errors.InputError
        For non-finite or non-positive inputs, temperatures at or above 2000 K, or p_floor_pa >= p_in_pa;
        the message names the field.
    """
    check_fluid(fluid)
    p_in = positive("p_in_pa", p_in_pa, "inlet pressure", "Pa")
    t_in = positive("t_in_k", t_in_k, "inlet temperature", "K", T_MAX_K)
    t_lim = positive("t_limit_k", t_limit_k, "outlet temperature limit", "K", T_MAX_K)
    p_floor = positive("p_floor_pa", p_floor_pa, "lowest outlet pressure", "Pa")
    if p_floor >= p_in:
        raise InputError("p_floor_pa", f"the lowest outlet pressure {p_floor:g} Pa must be below the inlet pressure "
                                       f"{p_in:g} Pa")
    basis = fluid.basis()
    base = dict(p_in_pa=p_in, t_in_k=t_in, t_limit_k=t_lim, p_floor_pa=p_floor)

    grid = np.geomspace(p_in, p_floor, SCAN_POINTS)
    grid[0], grid[-1] = p_in, p_floor
    batch = letdown(fluid, np.full_like(grid, p_in), np.full_like(grid, t_in), grid)
    t_scan = np.where(batch.converged, batch.t_out, np.nan)
    conv = np.asarray(batch.converged, bool).copy()
    # a point the batch could not solve gets a second chance on the scalar path
    for k in np.flatnonzero(~conv):
        r = letdown(fluid, p_in, t_in, float(grid[k]))
        if r.converged:
            t_scan[k], conv[k] = r.t_out, True
    scan = dict(scan_p_out_pa=tuple(map(float, grid)), scan_t_out_k=tuple(map(float, t_scan)),
                t_out_at_floor_k=float(t_scan[-1]) if conv[-1] else None)

    def result(**values) -> OutletPressureLimit:
        values.setdefault("warnings", tuple(fluid.warnings))
        return OutletPressureLimit(**base, **scan, basis=basis, **values)

    tiny = letdown(fluid, p_in, t_in, p_in * (1.0 - TINY_LETDOWN))
    if t_in < t_lim or (t_in == t_lim and tiny.converged and tiny.t_out < t_lim):
        return result(p_out_min_pa=None, t_out_at_limit_k=None, limited=True, inlet_too_cold=True, converged=True,
                      message=f"the inlet ({t_in:.2f} K) is at or below the limit {t_lim:.2f} K: no letdown keeps the "
                              "outlet at or above it; heat the inlet first")

    below = conv & (t_scan < t_lim)
    failed = ~conv
    k_cross = int(np.argmax(below)) if below.any() else SCAN_POINTS
    if failed[:k_cross].any():
        k_bad = int(np.argmax(failed))
        return result(p_out_min_pa=None, t_out_at_limit_k=None, limited=False, inlet_too_cold=False,
                      converged=False, message=f"the letdown to {grid[k_bad]:g} Pa did not converge before any "
                                               "crossing of the limit was found; the lowest outlet pressure is "
                                               "unknown")
    if k_cross == SCAN_POINTS:
        return result(p_out_min_pa=None, t_out_at_limit_k=None, limited=False, inlet_too_cold=False, converged=True,
                      message=f"not limited: the outlet stays at or above {t_lim:.2f} K for every outlet pressure "
                              f"down to the floor {p_floor:g} Pa ({t_scan[-1]:.2f} K there)")

    def excess(p: float) -> float:
        r = letdown(fluid, p_in, t_in, min(p, p_in))
        if not r.converged:
            raise _LetdownFailedError(p, r.message)
        return r.t_out - t_lim

    # bracket on the scalar path: hi is above the limit, lo below (the first crossing coming down)
    k_hi, k_lo = k_cross - 1, k_cross
    try:
        f_hi, f_lo = excess(float(grid[k_hi])), excess(float(grid[k_lo]))
        while f_hi < 0.0 and k_hi > 0:        # the batch and scalar paths disagree right at the limit
            k_hi, k_lo, f_lo = k_hi - 1, k_hi, f_hi
            f_hi = excess(float(grid[k_hi]))
        if f_hi < 0.0:
            return result(p_out_min_pa=None, t_out_at_limit_k=None, limited=True, inlet_too_cold=True,
                          converged=True, message=f"even a tiny letdown ends below the limit {t_lim:.2f} K")
        if f_lo >= 0.0:                        # touches the limit at a grid point
            p_root = float(grid[k_lo])
        else:
            p_root = brentq(excess, float(grid[k_lo]), float(grid[k_hi]), xtol=XTOL_PA, rtol=1e-12, maxiter=200)
        # report the safe side of the root: an outlet at or above the limit
        p_safe = p_root
        r = letdown(fluid, p_in, t_in, p_safe)
        for _ in range(20):
            if r.converged and r.t_out >= t_lim:
                break
            p_safe = min(p_safe + XTOL_PA, float(grid[k_hi]))
            r = letdown(fluid, p_in, t_in, p_safe)
        if not r.converged or r.t_out < t_lim:
            reason = r.message if not r.converged else "no pressure on the safe side was found"
            raise _LetdownFailedError(p_safe, reason)
    except _LetdownFailedError as exc:
        return result(p_out_min_pa=None, t_out_at_limit_k=None, limited=True, inlet_too_cold=False, converged=False,
                      message=f"refining the crossing of the limit failed at {exc.p_pa:g} Pa: {exc.reason}")
    except (ValueError, RuntimeError) as exc:  # brentq: no sign change or no convergence
        return result(p_out_min_pa=None, t_out_at_limit_k=None, limited=True, inlet_too_cold=False, converged=False,
                      message=f"refining the crossing of the limit failed: {exc}")
    at_floor = f" ({t_scan[-1]:.2f} K at the floor {p_floor:g} Pa)" if conv[-1] else ""
    return result(p_out_min_pa=p_safe, t_out_at_limit_k=r.t_out, limited=True, inlet_too_cold=False, converged=True,
                  warnings=r.warnings, message=f"limited: let down no lower than {p_safe:.6g} Pa; below it the "
                                               f"outlet falls under {t_lim:.2f} K{at_floor}")

class _LetdownFailedError(Exception):
    def __init__(self, p_pa: float, reason: str):
        self.p_pa = p_pa
        self.reason = reason
        super().__init__(f"{p_pa:g} Pa: {reason}")
