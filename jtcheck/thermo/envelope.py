"""Saturation points and the phase envelope of a mixture of fixed overall composition.

A saturation point of a feed z is a state (T, P) at which z is on the edge of splitting: an
infinitesimal amount of a second, *incipient* phase w coexists with it.  With the equilibrium ratios
taken relative to the feed, K_i = w_i / z_i, the state satisfies (Michelsen, Fluid Phase Equilib. 4
(1980) 1-10, eqs 1-3; Michelsen and Mollerup, *Thermodynamic Models: Fundamentals and Computational
Aspects*, 2nd ed., 2007, ch. 12):

    f_i = ln K_i + ln phi_i(w; T, P) - ln phi_i(z; T, P) = 0,      i = 1..n
    f_n+1 = sum_i z_i K_i - 1 = 0
    f_n+2 = X_s - S = 0

in the unknowns X = (ln K_1, .., ln K_n, ln T, ln P), one of which (X_s) is specified.  On the dew
branch the incipient phase is a liquid (the feed is the vapour, vapour fraction 1); on the bubble
branch it is a vapour (the feed is the liquid, vapour fraction 0).  The same equations hold on both
branches: at the critical point every ln K_i passes through zero and changes sign.  Each phase takes
the density root with the lower Gibbs energy, the stable one.  The model is any family of
:mod:`jtcheck.thermo.models` (a cubic or GERG-2008): ln phi and its derivatives come through the model
interface (:mod:`jtcheck.thermo.states`).

Note on K: here K_i = w_i / z_i (incipient over feed), so that on the dew branch K_i is x_i/y_i,
the inverse of the usual y/x.  Every result says which phase is incipient.

- Saturation points at given P (or T): successive substitution from Wilson K-values, with a Newton
  step on the free variable each pass, then Newton on the full system with the analytic Jacobian.
  A solution is accepted only if the feed is stable there (tangent-plane test, Michelsen, Fluid
  Phase Equilib. 9 (1982) 1-19) and the incipient phase is the denser one for a dew point, the
  lighter one for a bubble point; otherwise, or when the iteration fails, the edge of the two-phase
  region is located by stability tests along the free variable and Newton is restarted from there.
  No solution is reported as ``converged=False`` with the reason (for example "no dew point at this
  pressure: the feed is single-phase at every temperature ... (the pressure is above the
  cricondenbar)").  Liquid-liquid splits below half the lowest critical temperature are not sought.
- The envelope: Michelsen's (1980) continuation.  From a dew point at low pressure the curve is
  followed in steps of the variable with the largest sensitivity dX/dS (the tangent from the
  Jacobian: J dX/dS = e_n+2), the step length adapted to the Newton iteration count.  Close to the
  critical point the specified variable is a ln K_i, and the step is made to land at -ln K_i, on the
  other side of the critical point.  The critical point is then found by interpolating (T, P) at
  ln K_i = 0 with a cubic Hermite polynomial through the two points around it, and refined by the
  criticality conditions of Heidemann and Khalil, AIChE J. 26 (1980) 769-779
  (doi:10.1002/aic.690260510), solved by Newton in (ln T, ln V) (cubic models; for GERG-2008 the
  interpolated point is reported, and ``critical_method`` says so).
- Where the tracer stops: at ``p_start_pa`` (1 bar by default) on the bubble branch; or, with
  ``converged=False`` and the reason, when a step fails, the points run out or the curve does not
  close below 1000 bar.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from jtcheck.errors import InputError
from jtcheck.thermo.eos import R
from jtcheck.thermo.models.cubic.mixture import CubicMixture
from jtcheck.thermo.models.cubic.properties import sqrt_a
from jtcheck.thermo.stability import stability_test, wilson_k
from jtcheck.thermo.states import Mixture, fugacity_derivatives, ln_phi

#: Highest pressure the envelope is followed to [Pa]; an envelope still open there is reported as such.
P_MAX_PA = 1000e5
#: Temperature range of the saturation solvers [K].
T_MIN_K = 10.0
T_MAX_K = 3000.0
#: Convergence tolerance on the residuals of the saturation equations [-].
TOL = 1e-10
#: Tolerance for models other than the cubic (GERG-2008): its density root at (T, P), solved iteratively,
#: leaves ln phi of a liquid with a round-off of a few 1e-9 (measured here), so 1e-10 cannot be met.
TOL_MULTIPARAMETER = 1e-8
#: Largest |ln K| below which a solution is taken as the trivial one (w = z) [-].
TRIVIAL_LNK = 1e-5
#: |ln K| below which the continuation is in the critical region and steps in ln K [-].
CRITICAL_ZONE_LNK = 0.25

_SS_ITERATIONS = 12
_NEWTON_ITERATIONS = 40
_SCAN_POINTS = 60
#: Tangent-plane distance below which a state is inside the two-phase region [-].
_TPD_INSIDE = -1e-7


# ---------------------------------------------------------------------------------------------
# results
# ---------------------------------------------------------------------------------------------

@dataclass(frozen=True, eq=False)
class SaturationPoint:
    """A bubble or dew point of a feed.

    Attributes
    ----------
    t_k : float
        Temperature [K].
    p_pa : float
        Pressure [Pa].
    kind : str
        ``"bubble"`` (incipient vapour) or ``"dew"`` (incipient liquid).
    incipient : numpy.ndarray
        Mole fractions of the incipient phase [-].
    k_values : numpy.ndarray
        K_i = incipient_i / feed_i [-] (on a dew point this is x/y, the inverse of the usual y/x).
    converged : bool
        False when no saturation point was found: then the solved-for variable (``t_k`` or
        ``p_pa``), ``incipient`` and ``k_values`` are NaN, and ``message`` says why.
    iterations : int
        Successive-substitution plus Newton iterations.
    message : str
        What was found, or why it failed.
    residual : float
        Largest residual of the saturation equations at the answer [-].
    """

    t_k: float
    p_pa: float
    kind: str
    incipient: np.ndarray
    k_values: np.ndarray
    converged: bool
    iterations: int
    message: str
    residual: float = float("nan")


@dataclass(frozen=True, eq=False)
class PhaseEnvelope:
    """The vapour-liquid phase boundary of a feed in the (T, P) plane.

    Attributes
    ----------
    t_k, p_pa : numpy.ndarray
        Temperatures [K] and pressures [Pa] of the points, in the order of the continuation: up the
        dew branch from the start pressure, through the critical point, down the bubble branch.
    branch : numpy.ndarray of str
        ``"dew"`` or ``"bubble"`` per point: points on the vapour-fraction-1 side of the critical
        point are dew points, those on the vapour-fraction-0 side bubble points.
    k_values : numpy.ndarray
        (m, n) K_i = incipient_i / feed_i at each point [-].
    incipient : numpy.ndarray
        (m, n) mole fractions of the incipient phase at each point [-].
    critical : tuple of float or None
        Critical point (T [K], P [Pa]), or None when the continuation did not pass one.
    cricondentherm : tuple of float
        Point of highest temperature (T [K], P [Pa]).
    cricondenbar : tuple of float
        Point of highest pressure (T [K], P [Pa]).
    converged : bool
        False when the envelope could not be followed until it closed again at the start pressure;
        the points found so far are kept, ``message`` says why.
    message : str
        What was found, or why the continuation stopped.
    critical_method : str
        How ``critical`` was obtained.
    p_start_pa : float
        Pressure at which the envelope starts and ends [Pa].
    """

    t_k: np.ndarray
    p_pa: np.ndarray
    branch: np.ndarray
    k_values: np.ndarray
    incipient: np.ndarray
    critical: tuple[float, float] | None
    cricondentherm: tuple[float, float]
    cricondenbar: tuple[float, float]
    converged: bool
    message: str
    critical_method: str = ""
    p_start_pa: float = field(default=float("nan"))

    def __len__(self) -> int:
        return int(self.t_k.size)


# ---------------------------------------------------------------------------------------------
# input checks
# ---------------------------------------------------------------------------------------------

def _check_feed(mix: Mixture, z) -> np.ndarray:
    zs = np.asarray(z, dtype=float).ravel()
    if zs.size != mix.n:
        raise InputError("z", f"needs {mix.n} mole fractions (one per component of the mixture), "
                              f"got {zs.size}")
    if not np.all(np.isfinite(zs)) or np.any(zs < 0.0):
        raise InputError("z", "mole fractions must be finite and >= 0")
    total = float(zs.sum())
    if abs(total - 1.0) > 1e-6:
        raise InputError("z", f"mole fractions must sum to 1 (within 1e-6), got {total:.8g}")
    if int(np.count_nonzero(zs)) < 2:
        raise InputError("z", "bubble and dew points of a mixture need at least two components with "
                              "z > 0; a single component's bubble and dew points coincide on its "
                              "vapour-pressure curve")
    return np.ascontiguousarray(zs / total)


def _check_positive(name: str, value, unit: str, upper: float | None = None) -> float:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(name, f"must be a number [{unit}], got {value!r}") from None
    if not math.isfinite(v) or v <= 0.0:
        raise InputError(name, f"must be a finite number greater than 0 [{unit}], got {value!r}")
    if upper is not None and v > upper:
        raise InputError(name, f"must not exceed {upper:g} {unit}, got {v:g}")
    return v


# ---------------------------------------------------------------------------------------------
# the saturation equations
# ---------------------------------------------------------------------------------------------

def _equations(mix: Mixture, z: np.ndarray, X: np.ndarray):
    """Residuals f (n+1), Jacobian (n+1, n+2) in X = (ln K, ln T, ln P), incipient composition."""
    n = z.size
    T = math.exp(X[n])
    P = math.exp(X[n + 1])
    zK = z * np.exp(X[:n])
    S = float(zK.sum())
    w = zK / S
    fz = fugacity_derivatives(mix, T, P, z, "gibbs")
    fw = fugacity_derivatives(mix, T, P, w, "gibbs")
    F = np.empty(n + 1)
    F[:n] = X[:n] + fw.lnphi - fz.lnphi
    F[n] = S - 1.0
    J = np.zeros((n + 1, n + 2))
    # ln phi(w) is homogeneous of degree 0 in the mole numbers zK: d ln phi_i/d ln K_j = dn_ij w_j
    J[:n, :n] = fw.dn * w[None, :]
    J[np.arange(n), np.arange(n)] += 1.0
    J[:n, n] = T * (fw.dT - fz.dT)
    J[:n, n + 1] = P * (fw.dP - fz.dP)
    J[n, :n] = zK
    return F, J, w


def _full(J: np.ndarray, spec: int) -> np.ndarray:
    m = J.shape[1]
    row = np.zeros(m)
    row[spec] = 1.0
    return np.vstack([J, row])


@dataclass(frozen=True)
class _Newton:
    X: np.ndarray
    converged: bool
    iterations: int
    residual: float
    jacobian: np.ndarray | None
    reason: str


def _newton(mix: Mixture, z: np.ndarray, X0: np.ndarray, spec: int,
            max_iter: int = _NEWTON_ITERATIONS) -> _Newton:
    """Newton on the saturation equations with X[spec] held at its value in ``X0``."""
    n = z.size
    X = np.array(X0, dtype=float)
    resid = float("inf")
    for it in range(1, max_iter + 1):
        F, J, _ = _equations(mix, z, X)
        resid = float(np.max(np.abs(F)))
        if not math.isfinite(resid):
            return _Newton(X, False, it, resid, None, "non-finite residual")
        if resid < (TOL if isinstance(mix, CubicMixture) else TOL_MULTIPARAMETER):
            return _Newton(X, True, it, resid, J, "")
        try:
            dX = np.linalg.solve(_full(J, spec), -np.append(F, 0.0))
        except np.linalg.LinAlgError:
            return _Newton(X, False, it, resid, None, "singular Jacobian")
        scale = 1.0
        big_t = abs(dX[n]) / 0.1
        big_p = abs(dX[n + 1]) / 0.5
        big_k = float(np.max(np.abs(dX[:n]))) / 2.0
        worst = max(big_t, big_p, big_k)
        if worst > 1.0:
            scale = 1.0 / worst
        X = X + scale * dX
        T = math.exp(X[n])
        P = math.exp(X[n + 1])
        if not (T_MIN_K <= T <= T_MAX_K):
            return _Newton(X, False, it, resid, None,
                           f"the temperature left the range {T_MIN_K:g}-{T_MAX_K:g} K")
        if P > 10.0 * P_MAX_PA or P < 1.0:
            return _Newton(X, False, it, resid, None, "the pressure left the range 1 Pa to 10000 bar")
    return _Newton(X, False, max_iter, resid, None, f"no convergence in {max_iter} Newton iterations")


def _tangent(J: np.ndarray, spec: int) -> np.ndarray:
    """Unit tangent of the saturation curve, dX/dS normalised (sign as it comes)."""
    rhs = np.zeros(J.shape[1])
    rhs[-1] = 1.0
    t = np.linalg.solve(_full(J, spec), rhs)
    return t / np.linalg.norm(t)


# ---------------------------------------------------------------------------------------------
# saturation points
# ---------------------------------------------------------------------------------------------

def _wilson_t(mix: Mixture, z: np.ndarray, p_pa: float, kind: str) -> float:
    """Temperature where the Wilson K-values put the feed at its bubble or dew point [K]."""
    sign = 1.0 if kind == "bubble" else -1.0
    mask = z > 0.0

    def g(T: float) -> float:
        K = wilson_k(mix, T, p_pa)
        return math.log(float(np.sum(z[mask] * K[mask] ** sign)))

    lo, hi = 20.0, 2000.0
    g_lo, g_hi = g(lo), g(hi)
    if g_lo * g_hi > 0.0:
        return lo if abs(g_lo) < abs(g_hi) else hi
    for _ in range(200):   # bisection in 1/T (ln K is linear in 1/T)
        mid = 2.0 / (1.0 / lo + 1.0 / hi)
        g_mid = g(mid)
        if g_mid * g_lo > 0.0:
            lo, g_lo = mid, g_mid
        else:
            hi = mid
        if hi - lo < 1e-3:
            break
    return 0.5 * (lo + hi)


def _wilson_p(mix: Mixture, z: np.ndarray, t_k: float, kind: str) -> float:
    """Pressure where the Wilson K-values put the feed at its bubble or dew point [Pa]."""
    K1 = wilson_k(mix, t_k, 1.0)          # K at 1 Pa; K(P) = K1 / P
    if kind == "bubble":
        return float(z @ K1)
    return 1.0 / float(np.sum(z / K1))


@dataclass(frozen=True)
class _Attempt:
    X: np.ndarray
    converged: bool
    iterations: int
    residual: float
    reason: str


def _solve_saturation(mix: Mixture, zs: np.ndarray, X0: np.ndarray, spec: int, free: int) -> _Attempt:
    """Successive substitution (one Newton step on the free variable per pass), then full Newton."""
    n = zs.size
    iT, iP = n, n + 1
    X = np.array(X0, dtype=float)
    its = 0
    for _ in range(_SS_ITERATIONS):
        its += 1
        Tx, Px = math.exp(X[iT]), math.exp(X[iP])
        zK = zs * np.exp(X[:n])
        w = zK / zK.sum()
        fz = fugacity_derivatives(mix, Tx, Px, zs, "gibbs")
        fw = fugacity_derivatives(mix, Tx, Px, w, "gibbs")
        lnK_new = fz.lnphi - fw.lnphi
        zK = zs * np.exp(lnK_new)
        S = float(zK.sum())
        wn = zK / S
        if free == iT:
            dlnS = float(wn @ (Tx * (fz.dT - fw.dT)))
            cap = 0.1
        else:
            dlnS = float(wn @ (Px * (fz.dP - fw.dP)))
            cap = 0.5
        change = float(np.max(np.abs(lnK_new - X[:n])))
        X[:n] = lnK_new
        if dlnS != 0.0 and math.isfinite(dlnS):
            X[free] -= float(np.clip(math.log(S) / dlnS, -cap, cap))
        if not np.all(np.isfinite(X)):
            return _Attempt(X, False, its, float("nan"), "successive substitution gave non-finite values")
        if float(np.max(np.abs(X[:n]))) < 100.0 * TRIVIAL_LNK:
            return _Attempt(X, False, its, float("nan"), "the iteration went to the trivial solution "
                                                         "(incipient phase = feed)")
        if abs(math.log(S)) < 1e-3 and change < 1e-3:
            break
    res = _newton(mix, zs, X, spec)
    its += res.iterations
    if res.converged and float(np.max(np.abs(res.X[:n]))) < TRIVIAL_LNK:
        return _Attempt(res.X, False, its, res.residual, "the iteration went to the trivial solution "
                                                          "(incipient phase = feed)")
    return _Attempt(res.X, res.converged, its, res.residual, res.reason)


def _verify(mix: Mixture, zs: np.ndarray, X: np.ndarray, kind: str) -> str:
    """Empty string if X is a true saturation point of this kind, else what is wrong with it.

    A solution of the saturation equations is a stationary point of the tangent-plane distance
    with value zero; it is the phase boundary only if the feed is stable there (Michelsen 1982,
    Part I).  A bubble point has an incipient phase less dense than the feed, a dew point a denser one.
    """
    n = zs.size
    T, P = math.exp(X[n]), math.exp(X[n + 1])
    if stability_test(mix, T, P, zs).tpd_min < _TPD_INSIDE:
        return "inside"
    zK = zs * np.exp(X[:n])
    _, Zz = ln_phi(mix, T, P, zs, "gibbs")
    _, Zw = ln_phi(mix, T, P, zK / zK.sum(), "gibbs")
    lighter = float(Zw) > float(Zz)
    if lighter != (kind == "bubble"):
        return "kind"
    return ""


def _scan_start(mix: Mixture, zs: np.ndarray, kind: str, spec: int, free: int, X_spec: float):
    """Start for Newton from a stability scan along the free variable, or a reason why there is none.

    The free variable (ln T at given P, ln P at given T) is scanned on a grid with the stability test;
    the wanted edge of the unstable range (bubble: low-T or high-P edge; dew: high-T or low-P edge)
    is narrowed by bisection, and the trial phase of the test on its unstable side gives the K-values.
    Returns (X0, "") or (None, reason).
    """
    n = zs.size
    iT = n
    if free == iT:
        lo, hi = math.log(max(T_MIN_K, 0.5 * float(mix.tcs.min()))), math.log(1.5 * float(mix.tcs.max()))
    else:
        lo, hi = math.log(1e3), math.log(P_MAX_PA)
    grid = np.linspace(lo, hi, _SCAN_POINTS)

    def unstable(xf: float):
        T, P = (math.exp(xf), math.exp(X_spec)) if free == iT else (math.exp(X_spec), math.exp(xf))
        st = stability_test(mix, T, P, zs)
        return (st.tpd_min < _TPD_INSIDE), st

    flags = [unstable(x)[0] for x in grid]
    lower = [k for k in range(len(grid) - 1) if not flags[k] and flags[k + 1]]   # stable -> unstable
    upper = [k for k in range(len(grid) - 1) if flags[k] and not flags[k + 1]]   # unstable -> stable
    unit = "K" if free == iT else "bar"
    var = "temperature" if free == iT else "pressure"
    shown = (np.exp([lo, hi]) if free == iT else np.exp([lo, hi]) / 1e5)
    if not any(flags):
        if free == iT:
            hint = "the pressure is above the cricondenbar"
        else:
            _, Z = ln_phi(mix, math.exp(X_spec), math.exp(lo), zs, "gibbs")
            hint = ("the temperature is above the cricondentherm" if float(Z) > 0.5 else
                    f"the feed is a liquid down to {shown[0]:.4g} bar: its saturation pressures are lower")
        return None, (f"the feed is single-phase at every {var} from {shown[0]:.4g} to {shown[1]:.4g} "
                      f"{unit} ({hint})")
    want_lower = (kind == "bubble") if free == iT else (kind == "dew")
    edges = lower[:1] if want_lower else upper[-1:]
    if not edges:
        if want_lower and flags[0]:
            return None, f"the feed is two-phase down to {shown[0]:.4g} {unit}, the lowest {var} searched"
        if not want_lower and flags[-1]:
            return None, f"the feed is two-phase up to {shown[1]:.4g} {unit}, the highest {var} searched"
        return None, "no edge of the two-phase region of this kind was found in the scan"
    k = edges[0]
    a, b = grid[k], grid[k + 1]                       # flags[a] != flags[b]
    a_unstable = flags[k]
    st_u = None
    for _ in range(18):
        mid = 0.5 * (a + b)
        u, st = unstable(mid)
        if u == a_unstable:
            a = mid
        else:
            b = mid
        if u:
            st_u = st
    x_u = a if a_unstable else b
    if st_u is None:
        st_u = unstable(x_u)[1]
    if st_u.trial is None:
        return None, "the stability test gave no trial phase near the edge of the two-phase region"
    lnK = np.log(np.maximum(st_u.trial, 1e-300) / np.where(zs > 0.0, zs, 1.0))
    X0 = np.empty(n + 2)
    X0[:n] = lnK
    X0[spec] = X_spec
    X0[free] = x_u
    return X0, ""


def _saturation(mix: Mixture, z, kind: str, spec_name: str, value: float,
                guess: float | None) -> SaturationPoint:
    if kind not in ("bubble", "dew"):
        raise InputError("kind", f"must be 'bubble' or 'dew', got {kind!r}")
    zs = _check_feed(mix, z)
    n = zs.size
    iT, iP = n, n + 1
    what = "pressure" if spec_name == "P" else "temperature"
    if spec_name == "P":
        P = _check_positive("p_pa", value, "Pa", upper=P_MAX_PA)
        T = _check_positive("t_guess_k", guess, "K") if guess is not None else _wilson_t(mix, zs, P, kind)
        spec, free = iP, iT
    else:
        T = _check_positive("t_k", value, "K")
        P = _check_positive("p_guess_pa", guess, "Pa") if guess is not None else _wilson_p(mix, zs, T, kind)
        P = min(max(P, 1e3), P_MAX_PA)
        spec, free = iT, iP

    def result(att: _Attempt, its: int, converged: bool, message: str) -> SaturationPoint:
        X = att.X
        K = np.exp(X[:n])
        w = zs * K
        w = w / w.sum()
        t_k, p_pa = math.exp(X[iT]), math.exp(X[iP])
        if not converged:       # fail closed: no number that could be mistaken for an answer
            K = np.full(n, np.nan)
            w = np.full(n, np.nan)
            t_k, p_pa = (float("nan"), p_pa) if free == iT else (t_k, float("nan"))
        return SaturationPoint(t_k=t_k, p_pa=p_pa, kind=kind, incipient=w, k_values=K, converged=converged,
                               iterations=its, residual=att.residual, message=message)

    lnK = np.log(wilson_k(mix, T, P))
    X0 = np.concatenate([lnK if kind == "bubble" else -lnK, [math.log(T), math.log(P)]])
    att = _solve_saturation(mix, zs, X0, spec, free)
    its = att.iterations
    problem = _verify(mix, zs, att.X, kind) if att.converged else ""
    if att.converged and not problem:
        return result(att, its, True, f"{kind} point found")
    first = att
    # second route: locate the edge of the two-phase region by stability tests, then Newton
    X1, why = _scan_start(mix, zs, kind, spec, free, X0[spec])
    if X1 is not None:
        att = _solve_saturation(mix, zs, X1, spec, free)
        its += att.iterations
        problem = _verify(mix, zs, att.X, kind) if att.converged else ""
        if att.converged and not problem:
            return result(att, its, True, f"{kind} point found (started from a stability scan)")
        if att.converged and problem == "kind":
            other = "dew" if kind == "bubble" else "bubble"
            if spec_name == "P":
                hint = (f"the pressure is above the critical pressure of the mixture, where both edges of "
                        f"the two-phase region are {other} points")
            else:
                hint = ("the temperature is above the critical temperature of the mixture" if kind == "bubble"
                        else "the temperature is below the critical temperature of the mixture")
            return result(att, its, False, f"no {kind} point at this {what}: the edge of the two-phase "
                                           f"region found is a {other} point ({hint})")
        why = att.reason if not att.converged else "the solution found lies inside the two-phase region"
        return result(att, its, False, f"no {kind} point found at this {what}: {why}")
    if why.startswith("the feed is single-phase"):
        return result(first, its, False, f"no {kind} point at this {what}: {why}")
    return result(first, its, False, f"no {kind} point found at this {what}: {why}")


def bubble_point_t(mix: Mixture, z, p_pa: float, t_guess_k: float | None = None) -> SaturationPoint:
    """Bubble-point temperature of feed ``z`` at pressure ``p_pa``.

    Michelsen, Fluid Phase Equilib. 4 (1980) 1-10; Michelsen and Mollerup (2007), ch. 12:
    successive substitution from Wilson K-values, then Newton on (ln K, ln T) with the analytic
    Jacobian.  See the module docstring for the equations.

    Parameters
    ----------
    mix : CubicMixture or GergMixture
        Mixture parameters (any model family).
    z : array_like
        Feed mole fractions [-], summing to 1.
    p_pa : float
        Pressure [Pa].
    t_guess_k : float, optional
        Starting temperature [K]; by default the Wilson K-value estimate.

    Returns
    -------
    SaturationPoint
        ``converged=False`` with a message when there is no bubble point at this pressure (above
        the cricondenbar) or the iteration failed; never a wrong number marked as converged.
    """
    return _saturation(mix, z, "bubble", "P", p_pa, t_guess_k)


def dew_point_t(mix: Mixture, z, p_pa: float, t_guess_k: float | None = None) -> SaturationPoint:
    """Dew-point temperature of feed ``z`` at pressure ``p_pa``.

    Same method as :func:`bubble_point_t`.  Where the dew curve is retrograde two dew temperatures
    exist at one pressure; the one found is the one the start (Wilson K-values, usually the upper
    one, or ``t_guess_k``) leads to.

    Parameters
    ----------
    mix : CubicMixture or GergMixture
        Mixture parameters (any model family).
    z : array_like
        Feed mole fractions [-], summing to 1.
    p_pa : float
        Pressure [Pa].
    t_guess_k : float, optional
        Starting temperature [K]; by default the Wilson K-value estimate.

    Returns
    -------
    SaturationPoint
        ``converged=False`` with the message "no dew point found at this pressure: ..." above the
        cricondenbar or when the iteration fails.
    """
    return _saturation(mix, z, "dew", "P", p_pa, t_guess_k)


def bubble_point_p(mix: Mixture, z, t_k: float, p_guess_pa: float | None = None) -> SaturationPoint:
    """Bubble-point pressure of feed ``z`` at temperature ``t_k``.

    Same method as :func:`bubble_point_t`, with ln T specified and ln P free.

    Parameters
    ----------
    mix : CubicMixture or GergMixture
        Mixture parameters (any model family).
    z : array_like
        Feed mole fractions [-], summing to 1.
    t_k : float
        Temperature [K].
    p_guess_pa : float, optional
        Starting pressure [Pa]; by default the Wilson K-value estimate.

    Returns
    -------
    SaturationPoint
    """
    return _saturation(mix, z, "bubble", "T", t_k, p_guess_pa)


def dew_point_p(mix: Mixture, z, t_k: float, p_guess_pa: float | None = None) -> SaturationPoint:
    """Dew-point pressure of feed ``z`` at temperature ``t_k``.

    Same method as :func:`bubble_point_t`, with ln T specified and ln P free.  Between the
    critical temperature and the cricondentherm two dew pressures exist; the start decides which
    is found (pass ``p_guess_pa`` to choose).

    Parameters
    ----------
    mix : CubicMixture or GergMixture
        Mixture parameters (any model family).
    z : array_like
        Feed mole fractions [-], summing to 1.
    t_k : float
        Temperature [K].
    p_guess_pa : float, optional
        Starting pressure [Pa]; by default the Wilson K-value estimate.

    Returns
    -------
    SaturationPoint
        ``converged=False`` ("no dew point found at this temperature: ...") above the
        cricondentherm or when the iteration fails.
    """
    return _saturation(mix, z, "dew", "T", t_k, p_guess_pa)


# ---------------------------------------------------------------------------------------------
# critical point (Heidemann and Khalil 1980)
# ---------------------------------------------------------------------------------------------

def _helmholtz_parts(mix: CubicMixture, T: float, V: float, nv: np.ndarray):
    """Pieces of the reduced residual Helmholtz function F(T, V, n) of the generic cubic.

    F = -N g(V, B) - D(T) f(V, B) / T (Michelsen and Mollerup 2007, ch. 3).
    """
    s, _, _ = sqrt_a(mix, T)
    aij = mix.one_minus_kij * np.outer(s, s)
    bs = mix.bs
    N = float(nv.sum())
    B = float(nv @ bs)
    Di = 2.0 * (aij @ nv)
    D = 0.5 * float(nv @ Di)
    d1, d2 = mix.d1, mix.d2
    p1, p2 = V + d1 * B, V + d2 * B
    g = math.log(1.0 - B / V)
    g_B = -1.0 / (V - B)
    f = 1.0 / (R * p1) if d1 == d2 else math.log(p1 / p2) / (R * B * (d1 - d2))
    f_V = -1.0 / (R * p1 * p2)
    f_B = -(f + V * f_V) / B
    return aij, bs, N, B, Di, D, g, g_B, f, f_V, f_B, p1, p2


def _ln_f_tv(mix: CubicMixture, T: float, V: float, nv: np.ndarray) -> np.ndarray:
    """ln of the fugacities [ln Pa] at temperature T [K], total volume V [m^3], mole numbers nv [mol]."""
    _, bs, N, _, Di, D, g, g_B, f, _, f_B, _, _ = _helmholtz_parts(mix, T, V, nv)
    F_i = -g - N * g_B * bs - (Di * f + D * f_B * bs) / T
    with np.errstate(divide="ignore"):
        return np.log(nv * R * T / V) + F_i


def _q_matrix(mix: CubicMixture, T: float, V: float, nv: np.ndarray) -> np.ndarray:
    """d ln f_i / d n_j at constant T, V [1/mol] (the Hessian of A/RT in the mole numbers)."""
    aij, bs, N, B, Di, D, g, g_B, f, f_V, f_B, p1, p2 = _helmholtz_parts(mix, T, V, nv)
    g_BB = -1.0 / (V - B) ** 2
    f_VV = (p1 + p2) / (R * (p1 * p2) ** 2)
    f_BV = -(2.0 * f_V + V * f_VV) / B
    f_BB = -(2.0 * f_B + V * f_BV) / B
    bb = np.outer(bs, bs)
    F_ij = (-g_B * (bs[:, None] + bs[None, :]) - N * g_BB * bb
            - (2.0 * aij * f + f_B * (np.outer(Di, bs) + np.outer(bs, Di)) + D * f_BB * bb) / T)
    with np.errstate(divide="ignore"):
        return F_ij + np.diag(1.0 / nv)


def _critical_conditions(mix, z, mask, T, V, u_ref):
    """(lambda_min, cubic form, eigenvector) of Heidemann and Khalil at T [K], V [m^3/mol]."""
    Q = _q_matrix(mix, T, V, z)[np.ix_(mask, mask)]
    sq = np.sqrt(z[mask])
    M = sq[:, None] * Q * sq[None, :]
    lam, vec = np.linalg.eigh(M)
    u = vec[:, 0]
    if u_ref is not None and float(u @ u_ref) < 0.0:
        u = -u
    dn = np.zeros_like(z)
    dn[mask] = sq * u
    zm = z[mask]
    eps = min(1e-3, 0.5 * float(np.min(zm / np.maximum(np.abs(dn[mask]), 1e-300))))
    lf0 = _ln_f_tv(mix, T, V, z)[mask]
    lfp = _ln_f_tv(mix, T, V, z + eps * dn)[mask]
    lfm = _ln_f_tv(mix, T, V, z - eps * dn)[mask]
    cubic = float(dn[mask] @ ((lfp - lf0) + (lfm - lf0))) / (eps * eps)
    return float(lam[0]), cubic, u


def _critical_point_hk(mix: CubicMixture, z: np.ndarray, t_k: float, p_pa: float):
    """Critical point by Heidemann and Khalil (1980) from a start near it; None if it fails.

    Conditions: the smallest eigenvalue of B_ij = sqrt(z_i z_j) (d ln f_i/d n_j)_T,V is zero
    (the stability limit) and the cubic form sum dn_i dn_j dn_k d3(A/RT)/dn_i dn_j dn_k is zero
    along its eigenvector dn = sqrt(z) u (evaluated as the second difference of dn . ln f along dn).
    Newton in (ln T, ln V) with a difference Jacobian.
    """
    mask = z > 0.0
    if int(mask.sum()) < 2:
        return None
    _, Z = ln_phi(mix, t_k, p_pa, z, "gibbs")
    x = np.array([math.log(t_k), math.log(float(Z) * R * t_k / p_pa)])
    _, _, u_ref = _critical_conditions(mix, z, mask, t_k, math.exp(x[1]), None)
    bmin = float(z @ mix.bs)
    for _ in range(30):
        T, V = math.exp(x[0]), math.exp(x[1])
        if V <= bmin * 1.0001:
            return None
        lam, cub, u_ref = _critical_conditions(mix, z, mask, T, V, u_ref)
        G = np.array([lam, cub])
        h = 1e-6
        lam_t, cub_t, _ = _critical_conditions(mix, z, mask, T * math.exp(h), V, u_ref)
        lam_v, cub_v, _ = _critical_conditions(mix, z, mask, T, V * math.exp(h), u_ref)
        Jg = np.array([[lam_t - lam, lam_v - lam], [cub_t - cub, cub_v - cub]]) / h
        try:
            dx = np.linalg.solve(Jg, -G)
        except np.linalg.LinAlgError:
            return None
        big = float(np.max(np.abs(dx)) / 0.05)
        if big > 1.0:
            dx = dx / big
        x = x + dx
        if not np.all(np.isfinite(x)):
            return None
        if float(np.max(np.abs(dx))) < 1e-8:   # the cubic form carries round-off of about 1e-9
            break
    else:
        return None
    T, V = math.exp(x[0]), math.exp(x[1])
    s, _, _ = sqrt_a(mix, T)
    a = float(z @ (mix.one_minus_kij * np.outer(s, s)) @ z)
    b = bmin
    P = R * T / (V - b) - a / ((V + mix.d1 * b) * (V + mix.d2 * b))
    if not (math.isfinite(P) and P > 0.0):
        return None
    return T, P


# ---------------------------------------------------------------------------------------------
# phase envelope
# ---------------------------------------------------------------------------------------------

def _hermite(a: float, b: float, ya, yb, da, db, s: float):
    """Cubic Hermite interpolant through (a, ya, slope da) and (b, yb, slope db), at s."""
    h = b - a
    t = (s - a) / h
    h00 = 2 * t ** 3 - 3 * t ** 2 + 1
    h10 = t ** 3 - 2 * t ** 2 + t
    h01 = -2 * t ** 3 + 3 * t ** 2
    h11 = t ** 3 - t ** 2
    return h00 * ya + h10 * h * da + h01 * yb + h11 * h * db


def _curve_max(Xs: np.ndarray, tans: np.ndarray, var: int) -> np.ndarray:
    """Point of the largest X[var] along the curve through ``Xs`` with unit tangents ``tans``.

    On every interval the curve is represented by the cubic Hermite polynomial in a parameter
    sigma in [0, 1] with end slopes t * |X_b - X_a| (the chord length), which is exact to third
    order; the maximum of X[var] is where its derivative, a quadratic in sigma, vanishes.
    """
    i = int(np.argmax(Xs[:, var]))
    best = Xs[i]
    for j in range(len(Xs) - 1):
        Xa, Xb = Xs[j], Xs[j + 1]
        c = float(np.linalg.norm(Xb - Xa))
        da, db = tans[j] * c, tans[j + 1] * c
        ya, yb = Xa[var], Xb[var]
        # X[var](s) = ya + c1 s + c2 s^2 + c3 s^3
        c1 = da[var]
        c2 = 3.0 * (yb - ya) - 2.0 * da[var] - db[var]
        c3 = 2.0 * (ya - yb) + da[var] + db[var]
        if abs(c3) > 1e-300:
            disc = c2 * c2 - 3.0 * c3 * c1
            if disc < 0.0:
                continue
            roots = ((-c2 + math.sqrt(disc)) / (3.0 * c3), (-c2 - math.sqrt(disc)) / (3.0 * c3))
        elif abs(c2) > 1e-300:
            roots = (-c1 / (2.0 * c2),)
        else:
            continue
        for r in roots:
            if 0.0 < r < 1.0 and 2.0 * c2 + 6.0 * c3 * r < 0.0:
                Xr = _hermite(0.0, 1.0, Xa, Xb, da, db, r)
                if Xr[var] > best[var]:
                    best = Xr
    return best


def _failed_envelope(message: str, p_start: float) -> PhaseEnvelope:
    empty = np.empty(0)
    nan2 = (float("nan"), float("nan"))
    return PhaseEnvelope(t_k=empty, p_pa=empty, branch=np.empty(0, dtype="<U6"), k_values=np.empty((0, 0)),
                         incipient=np.empty((0, 0)), critical=None, cricondentherm=nan2, cricondenbar=nan2,
                         converged=False, message=message, critical_method="", p_start_pa=p_start)


def phase_envelope(mix: Mixture, z, p_start_pa: float = 1e5, max_points: int = 400) -> PhaseEnvelope:
    """Phase envelope of feed ``z`` by Michelsen's continuation method.

    Michelsen, *Calculation of phase envelopes and critical points for multicomponent mixtures*,
    Fluid Phase Equilib. 4 (1980) 1-10 (doi:10.1016/0378-3812(80)80001-X); Michelsen and Mollerup
    (2007), ch. 12.  Unknowns X = (ln K_1..ln K_n, ln T, ln P), with K_i = incipient_i / feed_i.
    The curve starts at the dew point at ``p_start_pa`` and is followed up the dew branch, through
    the critical point and down the bubble branch until the pressure is back at ``p_start_pa``
    (the last point is solved at exactly that pressure).  At each point:

    1. the tangent dX/dS solves J dX/dS = e_n+2 (J the Jacobian of the saturation equations plus
       the specification row);
    2. the next specified variable is the one with the largest |dX_i/dS|; in the critical region
       (max |ln K| < 0.25) it is the ln K_i with the largest sensitivity, and a step that would
       reach ln K_i = 0 is set to land at -ln K_i instead;
    3. the predictor is X + dX/dS * dS, the corrector Newton's method; the step dS grows by 1.5
       after a Newton solve of at most 3 iterations and shrinks (x 0.5) after more than 5 or on
       failure; steps are also limited to |d ln T| <= 0.05 and |d ln P| <= 0.25, a step in ln K
       stops inside the critical region before it may jump across, and a corrector that lands far
       from its predictor (another branch of solutions) is rejected and the step halved.

    The critical point is where every ln K_i changes sign; it is first interpolated at ln K_i = 0
    by a cubic Hermite polynomial through the two points around it and their tangents, then refined
    with the criticality conditions of Heidemann and Khalil, AIChE J. 26 (1980) 769-779
    (doi:10.1002/aic.690260510).  If that refinement fails the interpolated point is kept and
    ``critical_method`` says so.  The cricondentherm and cricondenbar are the largest T and P of the
    curve, refined between the points by cubic Hermite interpolation through the points and their
    tangents (in a chord-length parameter): for natural gases the largest T comes within about
    0.001 K and the largest P within about 0.01 bar of the true maxima (where they lie along the flat
    top, the pressure of the cricondentherm and the temperature of the cricondenbar, is less sharp:
    about 0.05 bar and 0.01 K).

    Parameters
    ----------
    mix : CubicMixture or GergMixture
        Mixture parameters (any model family).
    z : array_like
        Feed mole fractions [-], summing to 1.
    p_start_pa : float
        Pressure at which the envelope starts (dew point) and ends (bubble point) [Pa].
    max_points : int
        Most points to compute.

    Returns
    -------
    PhaseEnvelope
        ``converged=False`` with a message when the dew point at ``p_start_pa`` cannot be found, the
        continuation fails, the points run out, or the envelope does not close below 1000 bar.
    """
    zs = _check_feed(mix, z)
    p_start = _check_positive("p_start_pa", p_start_pa, "Pa", upper=P_MAX_PA)
    if int(max_points) < 3:
        raise InputError("max_points", f"must be at least 3, got {max_points!r}")
    max_points = int(max_points)
    n = zs.size
    iT, iP = n, n + 1
    ln_p_end = math.log(p_start)

    first = dew_point_t(mix, zs, p_start)
    if not first.converged:
        return _failed_envelope(f"no envelope: {first.message}", p_start)
    X = np.concatenate([np.log(first.k_values), [math.log(first.t_k), math.log(first.p_pa)]])
    spec = iP
    _, J, _ = _equations(mix, zs, X)
    t = _tangent(J, spec)
    if t[iP] < 0.0:
        t = -t
    Xs = [X]
    tans = [t]
    branch = ["dew"]
    crossings: list[tuple[float, float]] = []
    h = 0.1
    h_max = 0.5
    converged = False
    message = ""
    while True:
        if len(Xs) >= max_points:
            message = f"stopped after {max_points} points before the envelope closed"
            break
        lnk = X[:n]
        if float(np.max(np.abs(lnk))) < CRITICAL_ZONE_LNK:
            s = int(np.argmax(np.abs(t[:n])))
        else:
            s = int(np.argmax(np.abs(t)))
        dxds = t / t[s]
        dS = h * math.copysign(1.0, t[s])
        # limit the step in T and P
        lim = max(abs(dxds[iT] * dS) / 0.05, abs(dxds[iP] * dS) / 0.25, 1.0)
        dS /= lim
        if s < n and X[s] * dS < 0.0:
            if abs(X[s]) < CRITICAL_ZONE_LNK:
                if abs(dS) >= 0.6 * abs(X[s]):
                    dS = -2.0 * X[s]           # land symmetrically on the other side of the critical point
            elif abs(dS) > abs(X[s]) - 0.5 * CRITICAL_ZONE_LNK:
                dS = math.copysign(abs(X[s]) - 0.5 * CRITICAL_ZONE_LNK, dS)   # stop inside the critical zone
        closing = False
        if dxds[iP] * dS < 0.0:
            # on the way down: finish exactly at the start pressure
            lnp_pred = X[iP] + dxds[iP] * dS
            if lnp_pred <= ln_p_end < X[iP]:
                s = iP
                dxds = t / t[iP]
                dS = ln_p_end - X[iP]
                closing = True
        Xp = X + dxds * dS
        res = _newton(mix, zs, Xp, s, max_iter=12)
        ok = res.converged and float(np.max(np.abs(res.X[:n]))) > TRIVIAL_LNK
        if ok and max(abs(res.X[iT] - Xp[iT]) / 0.05, abs(res.X[iP] - Xp[iP]) / 0.25) > 0.5:
            ok = False                         # the corrector went far from the predictor: another branch?
        if not ok:
            h *= 0.5
            if h < 1e-6:
                message = (f"the continuation failed near T = {math.exp(X[iT]):.2f} K, "
                           f"P = {math.exp(X[iP]) / 1e5:.3f} bar ({res.reason or 'trivial solution'})")
                break
            continue
        Xn = res.X
        tn = _tangent(res.jacobian, s)
        if float(tn @ t) < 0.0:
            tn = -tn
        k = int(np.argmax(np.abs(lnk)))
        crossed = np.sign(Xn[k]) != np.sign(lnk[k])
        if crossed:
            # cubic Hermite through both points in the parameter ln K_k, evaluated at ln K_k = 0
            Xc = _hermite(lnk[k], Xn[k], X, Xn, t / t[k], tn / tn[k], 0.0)
            crossings.append((math.exp(Xc[iT]), math.exp(Xc[iP])))
        X, t = Xn, tn
        Xs.append(X)
        tans.append(t)
        branch.append("bubble" if len(crossings) % 2 else "dew")
        if closing:
            converged = True
            message = "envelope closed at the start pressure"
            break
        if math.exp(X[iP]) > P_MAX_PA:
            message = (f"the envelope does not close: the pressure exceeded {P_MAX_PA / 1e5:.0f} bar "
                       f"at T = {math.exp(X[iT]):.2f} K")
            break
        if not (T_MIN_K < math.exp(X[iT]) < T_MAX_K):
            message = f"the envelope left the temperature range {T_MIN_K:g}-{T_MAX_K:g} K"
            break
        if res.iterations <= 3:
            h = min(h * 1.5, h_max)
        elif res.iterations > 5:
            h *= 0.5

    Xa = np.array(Xs)
    ta = np.array(tans)
    T = np.exp(Xa[:, iT])
    P = np.exp(Xa[:, iP])
    K = np.exp(Xa[:, :n])
    W = zs * K
    W /= W.sum(axis=1, keepdims=True)
    top_t = _curve_max(Xa, ta, iT)
    top_p = _curve_max(Xa, ta, iP)
    cricondentherm = (math.exp(top_t[iT]), math.exp(top_t[iP]))
    cricondenbar = (math.exp(top_p[iT]), math.exp(top_p[iP]))
    critical = None
    method = "none: the continuation did not pass a critical point"
    crit_interp = crossings[0] if crossings else None
    if len(crossings) > 1:
        message += f"; the curve passed {len(crossings)} critical points, the first is reported"
    if crit_interp is not None and not isinstance(mix, CubicMixture):
        # the Heidemann-Khalil refinement below is written on the cubic's Helmholtz function
        critical = crit_interp
        method = ("interpolated where ln K changes sign along the continuation (the Heidemann-Khalil "
                  "refinement is implemented for the cubic models only)")
    elif crit_interp is not None:
        hk = _critical_point_hk(mix, zs, *crit_interp)
        # accept the refinement only next to where the continuation crossed (within 2 K and 5 %)
        t_ok = hk is not None and abs(hk[0] - crit_interp[0]) < 2.0
        if t_ok and abs(math.log(hk[1] / crit_interp[1])) < 0.05:
            critical = hk
            method = "Heidemann and Khalil (1980), started from the continuation's sign change of ln K"
        else:
            critical = crit_interp
            method = ("interpolated where ln K changes sign along the continuation "
                      "(the Heidemann-Khalil refinement did not converge near it)")
    if critical is not None:
        # the critical point lies on the envelope: it bounds both from below
        if critical[0] > cricondentherm[0]:
            cricondentherm = critical
        if critical[1] > cricondenbar[1]:
            cricondenbar = critical
    for arr in (T, P, K, W):
        arr.setflags(write=False)
    br = np.array(branch)
    br.setflags(write=False)
    return PhaseEnvelope(t_k=T, p_pa=P, branch=br, k_values=K, incipient=W, critical=critical,
                         cricondentherm=cricondentherm, cricondenbar=cricondenbar,
                         converged=converged, message=message, critical_method=method, p_start_pa=p_start)
