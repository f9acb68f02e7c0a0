"""Settle-out pressure and temperature of connected volumes after a shutdown.

When a section of plant is isolated, the volumes in it (a separator, a compressor casing, the piping
between the valves) equalise through whatever still connects them.  With no heat exchanged with the walls
or the surroundings and no work done on the rigid volumes, the combined inventory keeps its amount and its
internal energy, and ends at one uniform equilibrium state:

    n_i = V_i / v(T_i, P_i),          n = sum n_i                 (mass balance)
    U   = sum n_i u(T_i, P_i),        u = h - P v                 (energy balance)
    (T_f, P_f):  v(T_f, P_f) = V / n  and  u(T_f, P_f) = U / n,   V = sum V_i

The final state is a UV flash of the combined inventory: the equilibrium state with given molar volume and
molar internal energy (Michelsen, "State function based flash specifications", Fluid Phase Equilib. 158-160
(1999) 617-626, doi:10.1016/S0378-3812(99)00092-8).  It is solved here as two nested one-dimensional
problems over the stability-tested PT flash of :mod:`jtcheck.thermo.flash`, rather than the paper's
simultaneous Newton iteration: slower, but every step is an equilibrium state and both searches are bracketed:

* inner: at a temperature T, the pressure at which the equilibrium molar volume is V / n, by Brent's method
  on ln P (the equilibrium molar volume falls monotonically with pressure at fixed temperature);
* outer: the temperature at which the molar internal energy at that volume is U / n, by Brent's method over
  a bracket searched outward from the mole-weighted mean of the initial temperatures ((du/dT)_v = cv > 0,
  so the root is unique).

Properties: ideal-gas plus residual enthalpy and the molar volume from the fluid's cubic equation of state,
per phase (:func:`jtcheck.thermo.properties.phase_state`, the root of lowest Gibbs energy, as the PT flash
uses); a two-phase state's molar volume and enthalpy are the vapour-fraction weighted sums.  With the
fluid's Peneloux volume translation on, the volumes are translated (v - sum z_i c_i) and the enthalpy with
them (h - P sum z_i c_i), as :meth:`jtcheck.thermo.fluid.Fluid.flash_pt` reports it; the internal energy
u = h - P v at given (T, P) is then unchanged, but the amounts V / v and so the final state are not.

A pure component's equilibrium volume jumps at its saturation pressure: when the inner search closes on
that jump, the state is liquid and vapour at the saturation pressure with the vapour fraction from the
lever rule on the two roots' molar volumes.  A nearly pure fluid (other components up to 1e-4 mol/mol)
whose narrow two-phase region the PT flash does not resolve is treated the same way, with a warning; a
mixture's volume that still jumps is reported as not converged.  A volume that is continuous but changes
faster than the search resolves (a narrow two-phase region in pressure) is interpolated linearly in v across
the closing bracket (ln P within 1e-13).
"""
from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from scipy.optimize import brentq

from jtcheck import marks
from jtcheck.errors import InputError
from jtcheck.letdown.checks import T_MAX_K, check_fluid, finite, positive
from jtcheck.letdown.plain import PlainResult
from jtcheck.thermo.eos import R
from jtcheck.thermo.fluid import Fluid
from jtcheck.thermo.properties import phase_state

#: Lowest temperature searched for the settled-out state [K].
T_MIN_K = 20.0

#: Pressure window of the inner search [Pa] (absolute): 1 Pa to 10 000 bar.
P_WINDOW_PA = (1.0, 1.0e9)

#: The final state must reproduce V / n to this relative tolerance [-].
STATE_RTOL = 1e-9

#: ... and U / n to within R times this [K]: at most this much temperature, since every fluid's cv exceeds R.
#: (Normally the miss is below 1e-6 J/mol; the cubic's liquid root at pressures of a few pascals is noisier.)
U_TOL_K = 1e-3

#: The inner search accepts a pressure whose equilibrium molar volume is within this of V / n [-] (ln v).
V_RTOL = 1e-10

#: Across the closing bracket of the inner search (ln P +- 1e-13) the molar volume may change by at most this
#: [-] (ln v) to count as continuous (a steep narrow two-phase region, interpolated linearly in v).
JUMP_CONTINUOUS = 1e-6

#: A fluid whose minor components sum to at most this [mol/mol] is treated as pure where the PT flash does
#: not resolve its two-phase region: liquid and vapour of the feed composition, lever rule.
NEARLY_PURE = 1e-4


METHOD = ("adiabatic settle-out of rigid volumes: mass and energy balance, final state by a UV flash "
          "(Michelsen, Fluid Phase Equilib. 158-160 (1999) 617) solved as nested PT flashes")
ASSUMPTIONS = ("no heat exchanged with the walls or the surroundings, no work, no mass leaves; the final "
               "state is uniform and in phase equilibrium; one fluid of one composition in every volume")


@dataclass(frozen=True)
class SettleVolume(PlainResult):
    """One volume before settle-out.  All values SI.

    Attributes
    ----------
    name : str
        The volume's name as given.
    volume_m3 : float
        Volume [m^3].
    p_pa : float
        Initial pressure, absolute [Pa].
    t_k : float
        Initial temperature [K].
    n_mol : float
        Amount held, V / v(T, P) [mol]; NaN when its PT flash failed.
    u_j_per_mol : float
        Molar internal energy h - P v [J/mol] (ideal gas at 298.15 K has zero enthalpy).
    vapor_fraction : float
        Vapour mole fraction of the initial state [-].
    phase : str
        Phase of the initial state ("vapour", "liquid", "two-phase", "supercritical", "unknown").
    """

    name: str
    volume_m3: float
    p_pa: float
    t_k: float
    n_mol: float
    u_j_per_mol: float
    vapor_fraction: float
    phase: str


@dataclass(frozen=True)
class SettleOutResult(PlainResult):
    """Settled-out state of connected volumes of one fluid.  All values SI.

    Attributes
    ----------
    converged : bool
        False when a flash failed or no final state was found; then ``p_pa``, ``t_k`` and
        ``vapor_fraction`` are NaN and ``message`` says why.  Never to be read as a pass.
    message : str
        The answer in words, or why there is none.
    p_pa : float
        Settle-out pressure, absolute [Pa].
    t_k : float
        Settle-out temperature [K].
    vapor_fraction : float
        Vapour mole fraction of the settled-out inventory [-].
    n_mol : float
        Total amount, sum of the volumes' amounts [mol].
    u_j : float
        Total internal energy, conserved [J] (ideal gas at 298.15 K has zero enthalpy).
    volumes : tuple of SettleVolume
        The volumes as given, with their amounts and molar internal energies.
    warnings : tuple of str
        Fluid warnings and notes on the answer (a final state colder than every volume, liquid at
        settle-out).
    basis : dict
        Model choices (EOS, kij set, volume translation, data versions), the method and its assumptions.
    volume_m3 : float
        Total volume [m^3].
    phase : str
        Phase of the settled-out state ("vapour", "liquid", "two-phase", "supercritical", "unknown").
    """

    converged: bool
    message: str
    p_pa: float
    t_k: float
    vapor_fraction: float
    n_mol: float
    u_j: float
    volumes: tuple[SettleVolume, ...]
    warnings: tuple[str, ...] = field(default=())
    basis: dict = field(default_factory=dict)
    volume_m3: float = math.nan
    phase: str = "unknown"


@dataclass(frozen=True)
class _State:
    """Equilibrium state with its molar volume and internal energy (internal)."""

    t_k: float
    p_pa: float
    v: float
    u: float
    beta: float
    phase: str
    note: str = ""


class _UnsolvedError(Exception):
    """A flash or a search inside the settle-out failed; the text says why (internal, never escapes)."""


# ---------------------------------------------------------------------------------------------
# states
# ---------------------------------------------------------------------------------------------

def _phase_vu(fluid: Fluid, t_k: float, p_pa: float, x: np.ndarray, root: str) -> tuple[float, float]:
    """(molar volume [m^3/mol], molar internal energy [J/mol]) of one phase of composition ``x``."""
    ps = phase_state(fluid.mixture, t_k, p_pa, x, root, volume_shift=fluid.volume_translation)
    v = float(np.asarray(x) @ fluid.mixture.mws) / float(ps.density)
    return v, float(ps.h) - p_pa * v


def _state_pt(fluid: Fluid, t_k: float, p_pa: float) -> _State:
    """Equilibrium state at (T, P) by the stability-tested PT flash; _UnsolvedError if the flash failed."""
    res = fluid.flash_pt(t_k, p_pa)
    if not res.converged:
        raise _UnsolvedError(f"PT flash at {t_k:.6g} K, {p_pa:.6g} Pa did not converge: {res.message}")
    if res.phase == "two-phase":
        v_v, u_v = _phase_vu(fluid, t_k, p_pa, res.y, "gibbs")
        v_l, u_l = _phase_vu(fluid, t_k, p_pa, res.x, "gibbs")
        b = res.beta
        v, u = b * v_v + (1.0 - b) * v_l, b * u_v + (1.0 - b) * u_l
    else:
        v, u = _phase_vu(fluid, t_k, p_pa, fluid.zs, "gibbs")
    if not (math.isfinite(v) and v > 0.0 and math.isfinite(u)):
        raise _UnsolvedError(f"no molar volume or internal energy at {t_k:.6g} K, {p_pa:.6g} Pa")
    return _State(t_k, p_pa, v, u, float(res.beta), res.phase)


def _state_tv(fluid: Fluid, t_k: float, v_target: float, p_guess: float) -> _State:
    """Equilibrium state at temperature ``t_k`` [K] with molar volume ``v_target`` [m^3/mol].

    Brent's method on g(ln P) = ln v(T, P) - ln v_target, bracketed by steps doubling outward from
    ``p_guess`` [Pa] within :data:`P_WINDOW_PA`.
    """
    lo_lim, hi_lim = math.log(P_WINDOW_PA[0]), math.log(P_WINDOW_PA[1])
    cache: dict[float, _State] = {}

    def g(ln_p: float) -> float:
        if ln_p not in cache:      # remembered, so that the search sees one value per point
            cache[ln_p] = _state_pt(fluid, t_k, math.exp(ln_p))
        return math.log(cache[ln_p].v / v_target)

    x0 = min(max(math.log(p_guess), lo_lim), hi_lim)
    g0 = g(x0)
    if g0 == 0.0:
        return cache[x0]
    direction = 1.0 if g0 > 0.0 else -1.0      # too large a volume: raise the pressure
    step = 0.05
    while True:
        x1 = min(max(x0 + direction * step, lo_lim), hi_lim)
        g1 = g(x1)
        if g1 == 0.0:
            return cache[x1]
        if (g1 > 0.0) != (g0 > 0.0):
            break
        if x1 in (lo_lim, hi_lim):
            raise _UnsolvedError(f"at {t_k:.6g} K no pressure between {P_WINDOW_PA[0]:g} and {P_WINDOW_PA[1]:g} Pa "
                                 f"gives the molar volume {v_target:.6g} m3/mol")
        x0, g0 = x1, g1
        step *= 2.0
    a, b = (x0, x1) if x0 < x1 else (x1, x0)
    ln_p = _brent(g, a, b, 1e-13, f"the pressure search at {t_k:.6g} K")
    g(ln_p)
    s = cache[ln_p]
    if abs(math.log(s.v / v_target)) <= V_RTOL:
        return s
    # the states on either side of ln_p, at the resolution of the search
    eps = 1e-13
    while True:
        x_lo, x_hi = max(ln_p - eps, a), min(ln_p + eps, b)
        s_lo, s_hi = _state_pt(fluid, t_k, math.exp(x_lo)), _state_pt(fluid, t_k, math.exp(x_hi))
        if s_lo.v >= v_target >= s_hi.v or eps > 1e-9:
            break
        eps *= 2.0
    if not s_lo.v >= v_target >= s_hi.v:
        raise _UnsolvedError(f"at {t_k:.6g} K the pressure search for the molar volume {v_target:.6g} m3/mol "
                             f"closed at {s.p_pa:.6g} Pa without bracketing it")
    jump = math.log(s_lo.v / s_hi.v)
    if jump <= JUMP_CONTINUOUS:
        # steep but continuous (a narrow two-phase region): linear interpolation in v across the tiny bracket
        w = (v_target - s_hi.v) / (s_lo.v - s_hi.v) if s_lo.v > s_hi.v else 0.5
        near = s_lo if w >= 0.5 else s_hi
        return _State(t_k, math.exp(w * x_lo + (1.0 - w) * x_hi), v_target, w * s_lo.u + (1.0 - w) * s_hi.u,
                      w * s_lo.beta + (1.0 - w) * s_hi.beta, near.phase)
    # the volume jumps at ln_p: a pure fluid at its saturation pressure, liquid and vapour together
    impurity = 1.0 - float(np.max(fluid.zs))
    if impurity <= NEARLY_PURE:
        p = s.p_pa
        v_l, u_l = _phase_vu(fluid, t_k, p, fluid.zs, "liquid")
        v_v, u_v = _phase_vu(fluid, t_k, p, fluid.zs, "vapour")
        if v_l < v_target < v_v:
            beta = (v_target - v_l) / (v_v - v_l)
            note = "" if impurity <= 1e-12 else (
                f"the fluid is nearly pure (other components {impurity:.2g} mol/mol) and its narrow two-phase region "
                "was not resolved by the PT flash: the settled-out state is taken as liquid and vapour of the feed "
                "composition at the pressure where the volume jumps (lever rule, exact for a pure fluid)")
            return _State(t_k, p, v_target, beta * u_v + (1.0 - beta) * u_l, beta, "two-phase", note)
    raise _UnsolvedError(f"at {t_k:.6g} K the equilibrium molar volume jumps across {v_target:.6g} m3/mol at "
                         f"{s.p_pa:.6g} Pa ({s_lo.phase} {s_lo.v:.6g} to {s_hi.phase} {s_hi.v:.6g} m3/mol): the PT "
                         "flash missed part of the two-phase region there")


def _brent(fun, a: float, b: float, xtol: float, what: str) -> float:
    """Brent's method on a bracket [a, b]; a failure of the search becomes _UnsolvedError naming ``what``."""
    try:
        return float(brentq(fun, a, b, xtol=xtol, rtol=4.0 * np.finfo(float).eps, maxiter=200))
    except (ValueError, RuntimeError) as exc:
        raise _UnsolvedError(f"{what} failed: {exc}") from None


# ---------------------------------------------------------------------------------------------
# inputs
# ---------------------------------------------------------------------------------------------

def _check_volumes(volumes: Any) -> list[tuple[str, float, float, float]]:
    """The volumes as (name, V [m^3], P [Pa], T [K]); InputError naming the entry and field at fault."""
    if isinstance(volumes, (str, bytes)) or not isinstance(volumes, Sequence):
        raise InputError("volumes", "expected a list of (name, volume [m3], pressure [Pa abs], temperature [K]) "
                                    f"entries, got {type(volumes).__name__}")
    if len(volumes) == 0:
        raise InputError("volumes", "no volume given; at least one (name, volume [m3], pressure [Pa abs], "
                                    "temperature [K]) entry is needed")
    out = []
    names: set[str] = set()
    for k, entry in enumerate(volumes):
        where = f"volumes[{k}]"
        if isinstance(entry, (str, bytes)) or not isinstance(entry, Sequence) or len(entry) != 4:
            raise InputError(where, f"expected (name, volume [m3], pressure [Pa abs], temperature [K]), got {entry!r}")
        name, v, p, t = entry
        if not isinstance(name, str) or not name.strip():
            raise InputError(f"{where}.name", f"a volume's name must be a non-empty text, got {name!r}")
        if name in names:
            raise InputError(f"{where}.name", f"volume name {name!r} is given twice; names must be unique")
        names.add(name)
        v_m3 = positive(f"{where}.volume_m3", v, "volume", "m3")
        p_pa = positive(f"{where}.p_pa", p, "pressure", "Pa")
        t_k = finite(f"{where}.t_k", t, "temperature", "K")
        if not 0.0 < t_k < T_MAX_K:
            raise InputError(f"{where}.t_k", f"temperature must be above 0 K and below {T_MAX_K:g} K (the range of "
                                             f"the heat-capacity data), got {t_k:g}")
        out.append((name, v_m3, p_pa, t_k))
    return out


# ---------------------------------------------------------------------------------------------
# the settle-out
# ---------------------------------------------------------------------------------------------

def _bracket_t(f, t0: float, f0: float) -> tuple[float, float, float, float]:
    """A temperature bracket [a, b] of f (increasing in T) searched outward from ``t0`` within
    [T_MIN_K, T_MAX_K]; returns (a, f(a), b, f(b)).  _UnsolvedError when there is none."""
    direction = -1.0 if f0 > 0.0 else 1.0       # too much energy at t0: the answer is colder
    limit = T_MIN_K if direction < 0.0 else T_MAX_K
    t_good, f_good = t0, f0
    step = 2.0
    while True:
        t1 = t_good + direction * step
        if (t1 - limit) * direction >= 0.0:
            t1 = limit
        try:
            f1 = f(t1)
        except _UnsolvedError as exc:
            # a failure out there: close in on it from the last good temperature before giving up
            if abs(t1 - t_good) < 0.01:
                raise _UnsolvedError(f"no settle-out state between {min(t0, t_good):.6g} and {max(t0, t_good):.6g} K; "
                                     f"beyond that: {exc}") from None
            step = 0.5 * abs(t1 - t_good)
            continue
        if (f1 > 0.0) != (f_good > 0.0) or f1 == 0.0:
            return (t_good, f_good, t1, f1) if t_good < t1 else (t1, f1, t_good, f_good)
        if t1 == limit:
            raise _UnsolvedError(f"no settle-out state between {min(t0, limit):.6g} and {max(t0, limit):.6g} K: the "
                                 f"internal energy at the final molar volume stays {'above' if f1 > 0 else 'below'} "
                                 "the inventory's")
        t_good, f_good = t1, f1
        step *= 2.0


def settle_out(fluid: Fluid, volumes: Sequence[tuple[str, float, float, float]]) -> SettleOutResult:
    """Adiabatic settle-out pressure and temperature of connected volumes of one fluid.

    Each volume's amount and internal energy come from a stability-tested PT flash of the fluid at its
    initial state; the settled-out state is the equilibrium state with the total volume and the total
    internal energy (a UV flash of the combined inventory; Michelsen, Fluid Phase Equilib. 158-160 (1999)
    617-626, doi:10.1016/S0378-3812(99)00092-8), found by an outer Brent search on the temperature around an
    inner Brent search on the pressure (module docstring).

    Parameters
    ----------
    fluid : Fluid
        The fluid in every volume (one composition); its EOS, kij set and volume translation apply.
    volumes : sequence of (str, float, float, float)
        Per volume: name (unique), volume [m^3], initial pressure, absolute [Pa], initial temperature [K].
        A pure fluid's initial state at a given (P, T) is all liquid or all vapour.

    Returns
    -------
    SettleOutResult
        ``converged`` False, with the reason in ``message`` and NaN for the final state, when a flash failed
        or no final state was found between 20 K and 2000 K.

    Raises
    ------
    jtcheck.errors.InputError
        For no volumes, a malformed or duplicate entry, a non-finite value, a volume or pressure not above 0,
        or a temperature outside 0-2000 K; the message names the entry and field (``volumes[1].p_pa``).

    Examples
    --------
    >>> gas = Fluid({"methane": 1.0}, eos="PR")
    >>> r = settle_out(gas, [("separator", 10.0, 100e5, 300.0), ("flare header", 20.0, 2e5, 290.0)])
    >>> r.converged, round(r.t_k, 1), round(r.p_pa / 1e5, 1)
    (True, 270.4, 33.6)
    """
    check_fluid(fluid)
    entries = _check_volumes(volumes)
    nan = math.nan
    warnings = list(fluid.warnings)
    basis = {**fluid.basis(), "method": METHOD, "assumptions": ASSUMPTIONS}
    v_total = math.fsum(e[1] for e in entries)

    per_volume = []
    failure = ""
    for name, v_m3, p_pa, t_k in entries:
        try:
            s = _state_pt(fluid, t_k, p_pa)
        except _UnsolvedError as exc:
            failure = failure or f"volume {name!r}: {exc}"
            per_volume.append(SettleVolume(name, v_m3, p_pa, t_k, nan, nan, nan, "unknown"))
            continue
        per_volume.append(SettleVolume(name, v_m3, p_pa, t_k, v_m3 / s.v, s.u, s.beta, s.phase))
    vols = tuple(per_volume)

    def result(converged: bool, message: str, n: float, u_total: float, state: _State | None = None):
        return SettleOutResult(converged=converged, message=message, p_pa=state.p_pa if state else nan,
                               t_k=state.t_k if state else nan, vapor_fraction=state.beta if state else nan,
                               n_mol=n, u_j=u_total, volumes=vols, warnings=tuple(warnings), basis=basis,
                               volume_m3=v_total, phase=state.phase if state else "unknown")

    if failure:
        return result(False, f"initial state not found: {failure}", nan, nan)
    n = math.fsum(vol.n_mol for vol in vols)
    u_total = math.fsum(vol.n_mol * vol.u_j_per_mol for vol in vols)
    v_target = v_total / n
    u_target = u_total / n
    t0 = math.fsum(vol.n_mol * vol.t_k for vol in vols) / n
    last = {"t": t0, "p": n * R * t0 / v_total}

    def state_at(t_k: float) -> _State:
        s = _state_tv(fluid, t_k, v_target, last["p"] * t_k / last["t"])
        last["t"], last["p"] = t_k, s.p_pa
        return s

    memo: dict[float, float] = {}

    def f(t_k: float) -> float:
        if t_k not in memo:        # remembered: the warm start makes a repeat differ in the last digits
            memo[t_k] = state_at(t_k).u - u_target
        return memo[t_k]

    try:
        f0 = f(t0)
        if f0 == 0.0:
            t_f = t0
        else:
            a, fa, b, fb = _bracket_t(f, t0, f0)
            t_f = a if fa == 0.0 else b if fb == 0.0 else _brent(f, a, b, 1e-10, "the temperature search")
        final = state_at(t_f)
    except _UnsolvedError as exc:
        return result(False, f"settle-out state not found: {exc}", n, u_total)

    dv = abs(final.v / v_target - 1.0)
    du = abs(final.u - u_target)
    if dv > STATE_RTOL or du > R * U_TOL_K:
        return result(False, f"settle-out state not found: the state at {t_f:.6g} K, {final.p_pa:.6g} Pa misses the "
                             f"molar volume by {dv:.3g} (relative) and the molar internal energy by {du:.3g} J/mol "
                             f"(up to {du / R:.3g} K); the equation of state's values are not smooth enough there",
                      n, u_total)

    if final.note:
        warnings.append(final.note)
    t_min = min(vol.t_k for vol in vols)
    if final.t_k < t_min - 0.005:
        warnings.append(f"the settled-out temperature {final.t_k:.2f} K is below the coldest volume's "
                        f"{t_min:.2f} K: the inventory of the high-pressure volumes cools as it expands (Joule "
                        "expansion of gas, flashing of liquid)")
    if final.phase in ("two-phase", "liquid"):
        warnings.append(f"liquid at settle-out ({final.phase}, vapour fraction {final.beta:.4g})")
    msg = (f"settled out at {marks.T(final.t_k, 'inlet_temperature', 2)} and {marks.P(final.p_pa, 'inlet_pressure')} "
           f"({final.phase}, vapour fraction "
           f"{final.beta:.4g}) from {len(vols)} volume{'s' if len(vols) != 1 else ''}")
    return result(True, msg, n, u_total, final)
