"""Coldest letdown over ranges of inlet pressure, inlet temperature and outlet pressure.

Method:

1. Grid search.  Each range (low, high) with low < high varies over ``n`` points (log-spaced for the
   pressures, linear for the temperature; both ends included); a range with low == high is a fixed value.
   Combinations with p_out > p_in are not letdowns: they are skipped and counted.  The rest are solved with
   one batch letdown (:func:`jtcheck.letdown.throttle.letdown`).  Grid points that do not converge are listed,
   and the sweep is then reported incomplete.
2. Local refinement.  From the coldest converged grid point, the outlet temperature is minimised over the
   varying dimensions by cyclic coordinate descent, each step a bounded Brent minimisation (R. P. Brent,
   *Algorithms for Minimization without Derivatives*, 1973, ch. 5; :func:`scipy.optimize.minimize_scalar`
   with ``method="bounded"``) over one grid interval either side of the current value, with the range ends
   themselves also tried (a bounded Brent search never returns its end points) and p_out <= p_in kept by
   the bounds.  Steps are accepted only when they make the outlet colder.

The coldest point need not be a corner of the ranges: above the Joule-Thomson inversion pressure a higher
inlet pressure gives a warmer outlet, so over an inlet-pressure range spanning it the coldest outlet comes
from the inlet pressure where (dH/dP)_T = 0 at the inlet temperature, i.e. where the inlet Joule-Thomson
coefficient changes sign.  The outlet temperature always rises with the inlet temperature (dT_out/dT_in =
cp_in/cp_out > 0), so the coldest point is at the lowest inlet temperature.
"""
from __future__ import annotations

import itertools
import math
from dataclasses import dataclass, field

import numpy as np
from scipy.optimize import minimize_scalar

from jtcheck.errors import InputError
from jtcheck.letdown.checks import T_MAX_K, check_fluid
from jtcheck.letdown.plain import PlainResult
from jtcheck.letdown.plain import plain as _plain
from jtcheck.letdown.throttle import letdown
from jtcheck.thermo.fluid import Fluid

#: Names of the three dimensions, in grid order.
DIMENSIONS = ("p_in_pa", "t_in_k", "p_out_pa")

#: Allowed number of grid points per varying dimension.
N_MIN, N_MAX = 2, 51

#: Most coordinate-descent cycles of the refinement, and the improvement [K] below which a cycle ends it.
MAX_CYCLES = 12
CYCLE_TOL_K = 1e-7

#: Absolute tolerances of the bounded Brent steps: pressures [Pa], temperature [K].
XATOL = {"p_in_pa": 1.0, "t_in_k": 1e-5, "p_out_pa": 1.0}


@dataclass(frozen=True)
class SweepPoint:
    """One letdown of the sweep (a corner, or a point that did not converge).

    Attributes
    ----------
    p_in_pa, t_in_k, p_out_pa : float
        Inlet pressure [Pa], inlet temperature [K], outlet pressure [Pa].
    t_out_k : float
        Outlet temperature [K]; NaN (None in JSON) when not converged or skipped.
    phase : str
        Outlet phase, "unknown" when not converged, "skipped" when p_out > p_in.
    status : str
        "converged", "not converged" or "skipped: p_out > p_in".
    """

    p_in_pa: float
    t_in_k: float
    p_out_pa: float
    t_out_k: float
    phase: str
    status: str

    def to_dict(self) -> dict:
        return _plain(self)


@dataclass(frozen=True)
class SweepTable:
    """Outlet temperature over a 2-D grid of two dimensions, the third held fixed, for display.

    Attributes
    ----------
    row_dimension, column_dimension : str
        Names of the two dimensions ("p_in_pa", "t_in_k" or "p_out_pa").
    row_values, column_values : tuple of float
        Axis values [Pa or K].
    fixed_dimension : str
        The dimension held fixed.
    fixed_value : float
        Its value [Pa or K]: the coldest grid point's value when it varies.
    t_out_k : tuple of tuple of float
        Outlet temperature [K], rows x columns; NaN (None in JSON) where not converged or skipped.
    status : tuple of tuple of str
        "converged", "not converged" or "skipped: p_out > p_in" for each cell.
    """

    row_dimension: str
    column_dimension: str
    row_values: tuple[float, ...]
    column_values: tuple[float, ...]
    fixed_dimension: str
    fixed_value: float
    t_out_k: tuple[tuple[float, ...], ...]
    status: tuple[tuple[str, ...], ...]

    def to_dict(self) -> dict:
        return _plain(self)


@dataclass(frozen=True)
class SweepResult(PlainResult):
    """Coldest letdown over ranges of inlet pressure, inlet temperature and outlet pressure.  All values SI.

    Attributes
    ----------
    p_in_range_pa, t_in_range_k, p_out_range_pa : tuple of float
        The ranges (low, high) swept [Pa, K, Pa].
    n : int
        Grid points per varying dimension.
    varying_dimensions : tuple of str
        Dimensions whose range has low < high.
    worst_p_in_pa, worst_t_in_k, worst_p_out_pa : float
        The coldest combination found (after refinement) [Pa, K, Pa]; NaN when nothing converged.
    worst_t_out_k : float
        Its outlet temperature [K] (a scalar letdown at that point).
    worst_phase : str
        Its outlet phase.
    worst_vapor_fraction : float
        Its outlet vapour mole fraction [-].
    grid_worst_t_out_k : float
        Coldest outlet temperature on the grid, before refinement [K].
    worst_is_interior : bool
        True when at least one varying dimension of the worst point lies strictly inside its range (the
        worst is not a corner).
    interior_dimensions : tuple of str
        Those dimensions.
    corners : tuple of SweepPoint
        Letdowns at every corner of the varying ranges (skipped corners have p_out > p_in).
    n_points : int
        Grid combinations in all.
    n_evaluated : int
        Combinations solved (n_points - n_skipped).
    n_skipped : int
        Combinations with p_out > p_in, not letdowns.
    n_not_converged : int
        Grid letdowns that did not converge.
    not_converged : tuple of SweepPoint
        Those letdowns.
    complete : bool
        True when every grid letdown converged; otherwise the coldest point could lie where the solver failed.
    refine_evaluations : int
        Scalar letdowns used by the refinement.
    refine_failures : int
        Of those, how many did not converge (treated as not colder).
    converged : bool
        True when a converged worst point was found.
    message : str
    table : SweepTable or None
        Outlet temperature over the two most influential dimensions, for display.
    warnings : tuple of str
        Fluid and state warnings of the worst point.
    basis : dict
        Model choices (EOS, kij set, volume translation, data versions).
    """

    p_in_range_pa: tuple[float, float]
    t_in_range_k: tuple[float, float]
    p_out_range_pa: tuple[float, float]
    n: int
    varying_dimensions: tuple[str, ...]
    worst_p_in_pa: float
    worst_t_in_k: float
    worst_p_out_pa: float
    worst_t_out_k: float
    worst_phase: str
    worst_vapor_fraction: float
    grid_worst_t_out_k: float
    worst_is_interior: bool
    interior_dimensions: tuple[str, ...]
    corners: tuple[SweepPoint, ...]
    n_points: int
    n_evaluated: int
    n_skipped: int
    n_not_converged: int
    not_converged: tuple[SweepPoint, ...]
    complete: bool
    refine_evaluations: int
    refine_failures: int
    converged: bool
    message: str
    table: SweepTable | None
    warnings: tuple[str, ...] = field(default=())
    basis: dict = field(default_factory=dict)


def _range(name: str, value, what: str, unit: str, upper: float | None = None) -> tuple[float, float]:
    """A (low, high) pair of finite positive numbers with low <= high, else InputError naming ``name``."""
    if isinstance(value, (str, bytes)) or np.ndim(value) != 1 or len(value) != 2:
        raise InputError(name, f"{what} range must be a pair (low, high) [{unit}], got {value!r}")
    try:
        lo, hi = (float(v) for v in value)
    except (TypeError, ValueError):
        raise InputError(name, f"{what} range must be two numbers (low, high) [{unit}], got {value!r}") from None
    if not (math.isfinite(lo) and math.isfinite(hi)):
        raise InputError(name, f"{what} range must be finite numbers [{unit}], got {value!r}")
    if lo <= 0.0:
        raise InputError(name, f"{what} range must be above 0 {unit} (absolute), got low = {lo:g}")
    if upper is not None and hi >= upper:
        raise InputError(name, f"{what} range must be below {upper:g} {unit}, got high = {hi:g}")
    if lo > hi:
        raise InputError(name, f"{what} range low {lo:g} {unit} is above its high {hi:g} {unit}; give (low, high) "
                               "with low <= high (equal ends fix the value)")
    return lo, hi


def _axis(dim: str, lo: float, hi: float, n: int) -> np.ndarray:
    if lo == hi:
        return np.array([lo])
    ax = np.geomspace(lo, hi, n) if dim.startswith("p_") else np.linspace(lo, hi, n)
    ax[0], ax[-1] = lo, hi
    return ax


def _span(values) -> float:
    """max - min of the finite values (0 when fewer than two)."""
    v = np.asarray(values, float)
    v = v[np.isfinite(v)]
    return float(v.max() - v.min()) if v.size >= 2 else 0.0


def operating_sweep(fluid: Fluid, p_in_range_pa, t_in_range_k, p_out_range_pa, n: int = 9) -> SweepResult:
    """Coldest outlet of an isenthalpic letdown over ranges of inlet pressure, inlet temperature and outlet pressure.

    A grid of ``n`` points per varying dimension is solved with the batch letdown, then the coldest converged
    grid point is refined by cyclic coordinate descent with bounded Brent minimisations (Brent 1973), so a
    coldest point inside the ranges (e.g. at the Joule-Thomson inversion pressure) is found, not just the
    coldest corner.

    Parameters
    ----------
    fluid : Fluid
        The flowing fluid.
    p_in_range_pa : (float, float)
        Inlet pressure range (low, high), absolute [Pa]; equal ends fix the value.
    t_in_range_k : (float, float)
        Inlet temperature range (low, high) [K].
    p_out_range_pa : (float, float)
        Outlet pressure range (low, high), absolute [Pa]; its low end must not be above the inlet range's
        high end.  Combinations with p_out > p_in are skipped and counted.
    n : int
        Grid points per varying dimension, 2 to 51.

    Returns
    -------
    SweepResult

    Raises
    ------
    jtcheck.errors.InputError
        For a range that is not a (low, high) pair of finite positive numbers with low <= high, temperatures
        at or above 2000 K, an outlet range entirely above the inlet range, or ``n`` out of range; the
        message names the field.
    """
    check_fluid(fluid)
    ranges = {
        "p_in_pa": _range("p_in_range_pa", p_in_range_pa, "inlet pressure", "Pa"),
        "t_in_k": _range("t_in_range_k", t_in_range_k, "inlet temperature", "K", T_MAX_K),
        "p_out_pa": _range("p_out_range_pa", p_out_range_pa, "outlet pressure", "Pa"),
    }
    if ranges["p_out_pa"][0] > ranges["p_in_pa"][1]:
        raise InputError("p_out_range_pa", f"outlet pressure range starts at {ranges['p_out_pa'][0]:g} Pa, above the "
                                           f"highest inlet pressure {ranges['p_in_pa'][1]:g} Pa; a letdown needs "
                                           "p_out <= p_in")
    if isinstance(n, bool) or not isinstance(n, (int, np.integer)) or not N_MIN <= n <= N_MAX:
        raise InputError("n", f"grid points per varying dimension must be a whole number from {N_MIN} to {N_MAX}, "
                              f"got {n!r}")
    n = int(n)
    varying = tuple(d for d in DIMENSIONS if ranges[d][0] < ranges[d][1])
    axes = {d: _axis(d, *ranges[d], n) for d in DIMENSIONS}

    # 1. grid
    P_in, T_in, P_out = np.meshgrid(axes["p_in_pa"], axes["t_in_k"], axes["p_out_pa"], indexing="ij")
    feasible = P_out <= P_in
    t_grid = np.full(P_in.shape, np.nan)
    conv_grid = np.zeros(P_in.shape, bool)
    phase_grid = np.where(feasible, "unknown", "skipped").astype(object)
    if feasible.any():
        batch = letdown(fluid, P_in[feasible], T_in[feasible], P_out[feasible])
        conv_grid[feasible] = batch.converged
        t_grid[feasible] = np.where(batch.converged, batch.t_out, np.nan)
        phase_grid[feasible] = batch.phase
    status = np.where(~feasible, "skipped: p_out > p_in", np.where(conv_grid, "converged", "not converged"))
    n_points = int(P_in.size)
    n_skipped = int((~feasible).sum())
    failed_mask = feasible & ~conv_grid
    not_converged = tuple(SweepPoint(float(P_in[i]), float(T_in[i]), float(P_out[i]), math.nan, "unknown",
                                     "not converged") for i in zip(*np.nonzero(failed_mask), strict=True))
    complete = not failed_mask.any()

    def grid_point(idx) -> SweepPoint:
        return SweepPoint(float(P_in[idx]), float(T_in[idx]), float(P_out[idx]), float(t_grid[idx]),
                          str(phase_grid[idx]), str(status[idx]))

    corner_idx = itertools.product(*[(0, len(axes[d]) - 1) if d in varying else (0,) for d in DIMENSIONS])
    corners = tuple(grid_point(idx) for idx in dict.fromkeys(corner_idx))
    table = _table(axes, t_grid, status, varying, conv_grid)

    common = dict(p_in_range_pa=ranges["p_in_pa"], t_in_range_k=ranges["t_in_k"], p_out_range_pa=ranges["p_out_pa"],
                  n=n, varying_dimensions=varying, corners=corners, n_points=n_points,
                  n_evaluated=n_points - n_skipped, n_skipped=n_skipped, n_not_converged=len(not_converged),
                  not_converged=not_converged, complete=complete, table=table, basis=fluid.basis())
    if not conv_grid.any():
        return SweepResult(worst_p_in_pa=math.nan, worst_t_in_k=math.nan, worst_p_out_pa=math.nan,
                           worst_t_out_k=math.nan, worst_phase="unknown", worst_vapor_fraction=math.nan,
                           grid_worst_t_out_k=math.nan, worst_is_interior=False, interior_dimensions=(),
                           refine_evaluations=0, refine_failures=0, converged=False,
                           message="no letdown of the grid converged; the coldest point is unknown",
                           warnings=tuple(fluid.warnings), **common)

    # 2. refinement from the coldest converged grid point
    k0 = np.unravel_index(np.argmin(np.where(conv_grid, t_grid, np.inf)), t_grid.shape)
    grid_worst = float(t_grid[k0])
    start = {"p_in_pa": float(P_in[k0]), "t_in_k": float(T_in[k0]), "p_out_pa": float(P_out[k0])}
    best, best_r, evals, fails = _refine(fluid, start, ranges, axes, varying)
    if best_r is None:
        return SweepResult(worst_p_in_pa=start["p_in_pa"], worst_t_in_k=start["t_in_k"],
                           worst_p_out_pa=start["p_out_pa"], worst_t_out_k=math.nan, worst_phase="unknown",
                           worst_vapor_fraction=math.nan, grid_worst_t_out_k=grid_worst, worst_is_interior=False,
                           interior_dimensions=(), refine_evaluations=evals, refine_failures=fails, converged=False,
                           message="the scalar letdown at the coldest grid point did not converge",
                           warnings=tuple(fluid.warnings), **common)

    interior = tuple(d for d in varying if ranges[d][0] < best[d] < ranges[d][1])
    where = (f"inside the ranges ({', '.join(interior)} strictly inside)" if interior
             else "at a corner or edge of the ranges")
    msg = (f"coldest outlet {best_r.t_out:.2f} K ({best_r.phase}) at p_in {best['p_in_pa']:.6g} Pa, "
           f"t_in {best['t_in_k']:.2f} K, p_out {best['p_out_pa']:.6g} Pa, {where}")
    if not complete:
        msg += (f"; the sweep is incomplete: {len(not_converged)} of {n_points - n_skipped} grid letdowns did not "
                "converge and the coldest point could lie there")
    if n_skipped:
        msg += f"; {n_skipped} combinations with p_out > p_in skipped"
    return SweepResult(worst_p_in_pa=best["p_in_pa"], worst_t_in_k=best["t_in_k"], worst_p_out_pa=best["p_out_pa"],
                       worst_t_out_k=best_r.t_out, worst_phase=best_r.phase,
                       worst_vapor_fraction=best_r.vapor_fraction, grid_worst_t_out_k=grid_worst,
                       worst_is_interior=bool(interior), interior_dimensions=interior, refine_evaluations=evals,
                       refine_failures=fails, converged=True, message=msg, warnings=best_r.warnings, **common)


def _refine(fluid: Fluid, start: dict, ranges: dict, axes: dict, varying: tuple[str, ...]):
    """Cyclic coordinate descent with bounded Brent steps; returns (point, LetdownResult, evaluations, failures)."""
    evals = 0
    fails = 0
    cache: dict[tuple[float, float, float], object] = {}

    def solve(pt: dict):
        nonlocal evals, fails
        key = (pt["p_in_pa"], pt["t_in_k"], pt["p_out_pa"])
        if key not in cache:
            evals += 1
            r = letdown(fluid, *key)
            if not r.converged:
                fails += 1
            cache[key] = r
        return cache[key]

    best = dict(start)
    best_r = solve(best)
    if not best_r.converged:
        return best, None, evals, fails
    penalty = best_r.t_out + 1.0e3   # a failed letdown is never taken as colder

    def t_out(pt: dict) -> float:
        r = solve(pt)
        return r.t_out if r.converged else penalty

    for _ in range(MAX_CYCLES if varying else 0):
        t_cycle = best_r.t_out
        for d in varying:
            lo, hi = ranges[d]
            if d == "p_in_pa":
                lo = max(lo, best["p_out_pa"])
            elif d == "p_out_pa":
                hi = min(hi, best["p_in_pa"])
            if hi <= lo:
                continue
            # one grid interval either side of the current value
            ax = axes[d]
            x = best[d]
            if d.startswith("p_"):
                ratio = ax[1] / ax[0]
                a, b = max(lo, x / ratio), min(hi, x * ratio)
            else:
                step = ax[1] - ax[0]
                a, b = max(lo, x - step), min(hi, x + step)
            candidates = []
            if b > a:
                res = minimize_scalar(lambda v, d=d, base=best: t_out({**base, d: float(v)}), bounds=(a, b),
                                      method="bounded", options={"xatol": XATOL[d]})
                candidates.append(float(res.x))
            candidates += [v for v in (lo, hi) if a <= v <= b]   # Brent never returns the ends themselves
            for v in candidates:
                trial = {**best, d: v}
                r = solve(trial)
                if r.converged and r.t_out < best_r.t_out:
                    best, best_r = trial, r
        if t_cycle - best_r.t_out < CYCLE_TOL_K:
            break
    return best, best_r, evals, fails


def _table(axes: dict, t_grid: np.ndarray, status: np.ndarray, varying: tuple[str, ...],
           conv_grid: np.ndarray) -> SweepTable:
    """t_out over the two most influential dimensions at the coldest grid value of the third."""
    influence = {}
    for d in varying:
        ax = DIMENSIONS.index(d)
        moved = np.moveaxis(t_grid, ax, -1).reshape(-1, t_grid.shape[ax])
        influence[d] = max(_span(line) for line in moved)
    # the inlet temperature only ever shifts the outlet monotonically (coldest at its low end), so it is held
    # at the coldest value whenever both pressures vary; otherwise the varying dimensions by influence
    ranked = sorted(varying, key=lambda d: (d == "t_in_k", -influence[d]))
    # fill up with fixed dimensions, pressures first
    for d in ("p_in_pa", "p_out_pa", "t_in_k"):
        if d not in ranked:
            ranked.append(d)
    rows, cols = sorted(ranked[:2], key=DIMENSIONS.index)
    fixed = next(d for d in DIMENSIONS if d not in (rows, cols))
    if conv_grid.any():
        k0 = np.unravel_index(np.argmin(np.where(conv_grid, t_grid, np.inf)), t_grid.shape)
    else:
        k0 = (0, 0, 0)
    i_fixed = k0[DIMENSIONS.index(fixed)]
    t2 = np.take(t_grid, i_fixed, axis=DIMENSIONS.index(fixed))
    s2 = np.take(status, i_fixed, axis=DIMENSIONS.index(fixed))
    return SweepTable(row_dimension=rows, column_dimension=cols, row_values=tuple(map(float, axes[rows])),
                      column_values=tuple(map(float, axes[cols])), fixed_dimension=fixed,
                      fixed_value=float(axes[fixed][i_fixed]),
                      t_out_k=tuple(tuple(map(float, row)) for row in t2),
                      status=tuple(tuple(map(str, row)) for row in s2))
