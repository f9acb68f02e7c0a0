"""Screening many letdown cases at once: the vectorised path, with the scalar screening as the fallback.

:func:`screen_batch` screens a facility's letdown list.  Rows of one fluid are let down together, one
compiled batch letdown per equation of state (:func:`jtcheck.letdown.throttle.letdown` with arrays), and
classified against their cold limits; every row that the fast path cannot screen with confidence (an
outlet that is two-phase or near the phase envelope, liquid forming along the path, dry ice possible, a
flash that did not converge, inputs the batch refuses) is screened by the same robust scalar screening the
single-case pages use (:func:`jtcheck.screening.screen.screen_letdown`).  Nothing is dropped: every row
has exactly one result, in input order, and a row that could not be screened says so ("not screened").

Engineering layer: SI in and out; the file formats and units live in :mod:`jtcheck.batch`.
"""
from __future__ import annotations

import gc
import math
import time
from collections.abc import Callable, Iterator, Mapping, Sequence
from contextlib import contextmanager
from dataclasses import dataclass, field
from typing import Any, NamedTuple

import numpy as np

from jtcheck.errors import JtcheckError
from jtcheck.letdown.plain import plain
from jtcheck.letdown.relief import P_ATM_STANDARD_PA
from jtcheck.letdown.throttle import CO2_TRIPLE_P_PA, letdown
from jtcheck.screening.co2_solids import P_SUB_MIN_PA, co2_sublimation_temperature_k
from jtcheck.screening.cold_metal import ColdLimits, screen_cold_metal
from jtcheck.screening.findings import Finding, Outcome, Severity, Topic, sort_findings
from jtcheck.screening.hydrates import Inhibitor, assess_hydrates
from jtcheck.screening.phase_hazards import icing, inverse_joule_thomson
from jtcheck.screening.screen import (
    _CAUTION_WARNINGS,
    _COVERED_WARNINGS,
    CONDITION_MAX_P,
    CONDITION_MIN_T,
    CONDITION_MIN_T_MAX_P,
    CONDITION_NORMAL,
    Condition,
    ConditionScreen,
    Screening,
    ScreeningOptions,
    _hydrate_findings,
    _model_spread,
    _with_spread,
    _worst_of,
    credible_conditions,
    governs_alone,
    hydrate_not_applying,
    model_fluids,
    screen_letdown,
    start_up_conditions,
    start_up_name,
)
from jtcheck.thermo.fluid import Fluid


@dataclass(frozen=True)
class BatchCase:
    """One row of a letdown list, checked and in SI.

    Attributes
    ----------
    row : int
        Row number as the spreadsheet shows it (the header is row 1, the first case row 2), for messages.
    tag : str
    fluid : Fluid
        The same Fluid object is shared by every row of one fluid (rows are grouped by identity).
    p_in_pa, t_in_k, p_out_pa : float
        Normal inlet pressure [Pa abs], inlet temperature [K], outlet pressure [Pa abs].
    t_in_min_k, p_in_max_pa : float or None
        Credible extremes (add conditions as in :func:`jtcheck.screening.screen.credible_conditions`).
    limits : ColdLimits
    water_saturated : bool
    service, kind : str
        Carried through to the results.
    p_atm_pa : float
        Atmospheric pressure [Pa]: the outlet of the generated start-up conditions
        (:func:`jtcheck.screening.screen.start_up_conditions`), added on both paths.
    vectorised : bool
        Whether the row may take the vectorised path (its case kind says; :mod:`jtcheck.cases.batch`).
    screen : callable(BatchCase, bool) -> Screening, optional
        The row's scalar screening (its case kind's); :func:`letdown_row_screening` when None.
    extras : mapping
        The row's other inputs of its case kind (register keys, SI: relief-valve data, generated-case inputs),
        read by ``screen``.
    """

    row: int
    tag: str
    fluid: Fluid
    p_in_pa: float
    t_in_k: float
    p_out_pa: float
    limits: ColdLimits
    t_in_min_k: float | None = None
    p_in_max_pa: float | None = None
    water_saturated: bool = False
    service: str = ""
    kind: str = ""
    p_atm_pa: float = P_ATM_STANDARD_PA
    vectorised: bool = True
    screen: Callable[[BatchCase, bool], Screening] | None = field(default=None, compare=False, repr=False)
    extras: Mapping[str, Any] = field(default_factory=dict, compare=False, repr=False)


@dataclass(frozen=True)
class BatchRowResult:
    """The screening of one row (SI)."""

    row: int
    tag: str
    outcome: str                       # an Outcome value: pass / margin eroded / fail / not screened
    t_screen_k: float | None           # coldest screened outlet over the row's conditions and models
    coldest_condition: str
    governing_model: str
    t_out_by_model: dict[str, float | None]   # at the coldest condition
    phase: str                         # outlet phase at the coldest condition (case model)
    vapor_fraction: float | None
    margin_to_limit_k: float | None
    findings: tuple[dict[str, Any], ...]      # Finding.to_dict()-like: topic, severity, message
    path: str                          # "batch" or "scalar" (the robust scalar screening was used)
    converged: bool
    message: str = ""
    solids: dict[str, Any] | None = None      # CO2 solids outlet (SolidCO2Outlet.to_dict()) when dry ice forms

    def to_dict(self) -> dict[str, Any]:
        """Plain-JSON representation (SI; NaN becomes None)."""
        return plain({
            "row": self.row, "tag": self.tag, "outcome": self.outcome, "t_screen_k": self.t_screen_k,
            "coldest_condition": self.coldest_condition, "governing_model": self.governing_model,
            "t_out_by_model": self.t_out_by_model, "phase": self.phase, "vapor_fraction": self.vapor_fraction,
            "margin_to_limit_k": self.margin_to_limit_k, "findings": list(self.findings), "path": self.path,
            "converged": self.converged, "message": self.message, "solids": self.solids})


@dataclass(frozen=True)
class BatchScreening:
    """Every row's result, in input order, and the counts by outcome."""

    rows: tuple[BatchRowResult, ...]
    counts: dict[str, int]
    n_scalar: int
    seconds: float
    notes: tuple[str, ...] = field(default=())
    seconds_scalar: float = 0.0        # wall time spent on the scalar path (included in ``seconds``)

    @property
    def n_batch(self) -> int:
        """Rows screened by the batch path."""
        return len(self.rows) - self.n_scalar

    def coldest(self, n: int = 10) -> list[BatchRowResult]:
        """The ``n`` coldest screened rows (rows without a temperature last)."""
        done = [r for r in self.rows if r.t_screen_k is not None]
        return sorted(done, key=lambda r: r.t_screen_k)[:n]


ProgressFn = Callable[[int, int], None]

#: Outlets (and, for the case's model, the whole letdown path) closer than this to the fluid's phase
#: envelope in temperature are screened by the scalar path [K].
NEAR_ENVELOPE_K = 2.0
#: The same envelope test is made over a pressure band this much wider on each side (fraction), so that a
#: state just above the cricondenbar or at the tip of the dew curve is near too [-].
NEAR_ENVELOPE_P_FRACTION = 0.03
#: CO2-bearing outlets below the CO2 triple-point pressure and less than this much warmer than the feed's
#: ideal frost point (sublimation temperature at the CO2 partial pressure) take the scalar path, which
#: has the solids correction [K].  The fugacity coefficient of CO2 below 5.2 bar moves the frost point by
#: well under 1 K, so 10 K is ample.
CO2_FROST_MARGIN_K = 10.0
#: Pressures between outlet and inlet at which the path of a row near the envelope is let down to see
#: whether it passes clear of the two-phase region (the scalar screening samples 12 to look for liquid).
PATH_SAMPLES = 12
#: Groups of fewer rows than this go straight to the scalar path: two phase envelopes cost more than
#: screening a few rows one by one.
BATCH_MIN_ROWS = 5
#: ``progress`` is called at least this often while the scalar path works through its rows.
PROGRESS_EVERY = 100
#: Ranges accepted by the hydrate screen (as :func:`jtcheck.screening.hydrates.assess_hydrates`).
_HYDRATE_P_MAX_PA = 1.0e9
_HYDRATE_T_MAX_K = 1000.0
_INLET_NAMES = (CONDITION_NORMAL, CONDITION_MIN_T, CONDITION_MAX_P, CONDITION_MIN_T_MAX_P)
#: The conditions of a row on the batch path: the credible inlet states to the outlet pressure, then the same
#: to the atmospheric pressure (start-up into a depressured outlet), as :func:`letdown_row_screening` has them.
_CONDITION_NAMES = (*_INLET_NAMES, *(start_up_name(c) for c in _INLET_NAMES))
_VAPOUR_PHASES = ("vapour", "supercritical")


class _Outlet(NamedTuple):
    """The few fields of a LetdownResult that the finding helpers of :mod:`.screen` and :mod:`.phase_hazards` read."""

    converged: bool
    t_in: float
    t_out: float


def _water_present(case: BatchCase) -> bool | None:
    """True when the row declares the gas water-saturated; otherwise decided from the composition."""
    return True if case.water_saturated else None


def _message_of(exc: BaseException) -> str:
    return str(exc) if isinstance(exc, JtcheckError) else f"{type(exc).__name__}: {exc}"


# -- the scalar path ---------------------------------------------------------------------------------

def _failed_row(case: BatchCase, exc: BaseException) -> BatchRowResult:
    text = _message_of(exc)
    finding = Finding(Topic.COLD_METAL, Severity.HAZARD, f"Not screened: {text}", {}, "screening of the row failed")
    return BatchRowResult(case.row, case.tag, Outcome.NOT_SCREENED.value, None, "", "", {}, "unknown", None, None,
                          (finding.to_dict(),), "scalar", False, f"Not screened: {text}")


def _from_screening(case: BatchCase, s: Screening) -> BatchRowResult:
    cs = next((c for c in s.conditions if c.condition.name == s.coldest_condition), None) \
        if s.t_out_min_k is not None else None
    by_model: dict[str, float | None] = {}
    phase, beta, gov, solids = "unknown", None, "", None
    if cs is not None:
        by_model = {eos: (float(r.t_out) if r is not None and r.converged else None) for eos, r in cs.results.items()}
        gov, solids = cs.governing_model, cs.solids
        r = cs.results.get(case.fluid.eos.value)
        if r is not None and r.converged:
            phase, beta = r.phase, float(r.vapor_fraction)
        if solids is not None:
            phase, beta = "vapour + solid CO2", solids.get("vapour_fraction")
    limit = case.limits.governing_k
    t = s.t_out_min_k
    cold = next((f for f in s.findings if f.topic is Topic.COLD_METAL), None)
    return BatchRowResult(
        case.row, case.tag, s.outcome.value, t, s.coldest_condition, gov, by_model, phase, beta,
        None if t is None or limit is None else t - limit, tuple(f.to_dict() for f in s.findings), "scalar",
        all(c.converged for c in s.conditions), "" if cold is None else cold.message, solids=solids)


def letdown_row_screening(case: BatchCase, compare_models: bool) -> Screening:
    """The scalar screening of a row as a letdown at its credible conditions (no sweep, no answers)."""
    conds = [*credible_conditions(case.p_in_pa, case.t_in_k, case.p_out_pa, case.p_in_max_pa, case.t_in_min_k),
             *start_up_conditions(case.p_in_pa, case.t_in_k, case.p_out_pa, case.p_atm_pa, case.p_in_max_pa,
                                  case.t_in_min_k)]
    return screen_letdown(case.fluid, conds, ScreeningOptions(case.limits, compare_models, _water_present(case),
                                                              answers=False))


def _scalar_row(case: BatchCase, compare_models: bool) -> BatchRowResult:
    """The robust scalar screening of one row (its own, or as a letdown); any exception makes the row
    "not screened"."""
    try:
        s = (case.screen or letdown_row_screening)(case, compare_models)
    except Exception as exc:  # noqa: BLE001 - one row's failure must not stop the list
        return _failed_row(case, exc)
    return _from_screening(case, s)


# -- the batch path ----------------------------------------------------------------------------------

@dataclass
class _Points:
    """Every credible condition of the rows of one group, flattened (sorted by row, then condition)."""

    row: np.ndarray       # position of the row within the group
    kind: np.ndarray      # index into _CONDITION_NAMES
    p_in: np.ndarray
    t_in: np.ndarray
    p_out: np.ndarray


def _opt(values: list[float | None]) -> tuple[np.ndarray, np.ndarray]:
    given = np.array([v is not None for v in values], dtype=bool)
    arr = np.array([np.nan if v is None else v for v in values], dtype=float)
    return given, arr


def _flatten(cases: Sequence[BatchCase]) -> _Points:
    """The conditions of :func:`letdown_row_screening` for every row, as arrays (same names, same order): the
    credible conditions, then the start-up conditions where the outlet pressure is above the atmosphere."""
    p_in = np.array([c.p_in_pa for c in cases], dtype=float)
    t_in = np.array([c.t_in_k for c in cases], dtype=float)
    p_out = np.array([c.p_out_pa for c in cases], dtype=float)
    p_atm = np.array([c.p_atm_pa for c in cases], dtype=float)
    has_t, t_min = _opt([c.t_in_min_k for c in cases])
    has_p, p_max = _opt([c.p_in_max_pa for c in cases])
    inlets = [(np.ones(len(cases), bool), p_in, t_in), (has_t, p_in, t_min), (has_p, p_max, t_in),
              (has_t & has_p, p_max, t_min)]
    start_up = p_out > p_atm
    blocks = [(mask, pi, ti, p_out) for mask, pi, ti in inlets]
    blocks += [(mask & start_up, pi, ti, p_atm) for mask, pi, ti in inlets]
    rows, kinds, pis, tis, pos = [], [], [], [], []
    for kind, (mask, pi, ti, po) in enumerate(blocks):
        idx = np.flatnonzero(mask)
        rows.append(idx)
        kinds.append(np.full(idx.size, kind))
        pis.append(pi[idx])
        tis.append(ti[idx])
        pos.append(po[idx])
    row, kind = np.concatenate(rows), np.concatenate(kinds)
    order = np.lexsort((kind, row))
    return _Points(row[order], kind[order], np.concatenate(pis)[order], np.concatenate(tis)[order],
                   np.concatenate(pos)[order])


def _valid_points(pts: _Points) -> np.ndarray:
    """Points that :func:`letdown` accepts (others would make it refuse the whole batch)."""
    with np.errstate(invalid="ignore"):
        return (np.isfinite(pts.p_in) & np.isfinite(pts.t_in) & np.isfinite(pts.p_out) & (pts.p_in > 0.0)
                & (pts.t_in > 0.0) & (pts.p_out > 0.0) & (pts.p_out <= pts.p_in) & (pts.t_in <= 2000.0))


def _envelope_max_t(env, p_lo: np.ndarray, p_hi: np.ndarray, chunk: int = 4096) -> np.ndarray:
    """Highest temperature of the envelope polyline between pressures ``p_lo`` and ``p_hi`` (per entry) [K];
    -inf where the envelope does not reach into the band."""
    T = np.asarray(env.t_k, float)
    P = np.asarray(env.p_pa, float)
    extra = [env.cricondentherm, env.cricondenbar] + ([env.critical] if env.critical is not None else [])
    Tv = np.concatenate([T, [e[0] for e in extra]])
    Pv = np.concatenate([P, [e[1] for e in extra]])
    ok = np.isfinite(Tv) & np.isfinite(Pv)
    Tv, Pv = Tv[ok], Pv[ok]
    p0, p1, t0, t1 = P[:-1], P[1:], T[:-1], T[1:]
    seg_lo, seg_hi = np.minimum(p0, p1), np.maximum(p0, p1)
    dp = np.where(p1 != p0, p1 - p0, 1.0)
    out = np.empty(p_lo.size)
    for a in range(0, p_lo.size, chunk):
        lo, hi = p_lo[a:a + chunk, None], p_hi[a:a + chunk, None]
        inside = (Pv >= lo) & (Pv <= hi)
        best = np.where(inside, Tv, -np.inf).max(axis=1)
        for x in (lo, hi):   # the polyline where it crosses the ends of the band
            hit = (x >= seg_lo) & (x <= seg_hi)
            tc = t0 + (x - p0) / dp * (t1 - t0)
            best = np.maximum(best, np.where(hit, tc, -np.inf).max(axis=1))
        out[a:a + chunk] = best
    return out


def _clear_of_envelope(fluid: Fluid, t_lo: np.ndarray, p_lo: np.ndarray, p_hi: np.ndarray) -> np.ndarray:
    """True where the box [t_lo, ...] x [p_lo, p_hi] lies clear of (warmer than) the fluid's two-phase region.

    ``t_lo`` already carries the margin.  Fast test: above the cricondentherm + 2 K (the fluid's
    :meth:`~jtcheck.thermo.fluid.Fluid.single_phase_above_k`; +inf when the envelope is not available, a
    component can form a second liquid, or the fluid is a single component: then nothing is clear).  Else
    warmer than the envelope's highest temperature over the pressure band widened by
    :data:`NEAR_ENVELOPE_P_FRACTION` (below the envelope's start pressure only the fast test counts).
    """
    with np.errstate(invalid="ignore"):
        threshold = fluid.single_phase_above_k()
        clear = t_lo > threshold
        if not math.isfinite(threshold):
            return clear
        env = fluid.phase_envelope()
        todo = ~clear & np.isfinite(t_lo) & (p_lo >= env.p_start_pa)
        if todo.any():
            lo = np.maximum(p_lo[todo] * (1.0 - NEAR_ENVELOPE_P_FRACTION), env.p_start_pa)
            hi = p_hi[todo] * (1.0 + NEAR_ENVELOPE_P_FRACTION)
            clear[todo] = t_lo[todo] > _envelope_max_t(env, lo, hi)
    return clear


def _co2_frost_clear(fluid: Fluid, p_out: np.ndarray, t_cold: np.ndarray) -> np.ndarray:
    """False where a CO2-bearing outlet below the triple-point pressure may be near or below its frost point."""
    clear = np.ones(p_out.size, dtype=bool)
    if "carbon dioxide" not in fluid.ids:
        return clear
    z = float(fluid.zs[fluid.ids.index("carbon dioxide")])
    low = p_out < CO2_TRIPLE_P_PA
    if z <= 0.0 or not low.any():
        return clear
    pp = np.clip(z * p_out[low], P_SUB_MIN_PA, CO2_TRIPLE_P_PA)
    t_frost = np.asarray(co2_sublimation_temperature_k(pp), dtype=float)
    with np.errstate(invalid="ignore"):
        clear[low] = t_cold[low] >= t_frost + CO2_FROST_MARGIN_K
    return clear


@dataclass
class _GroupRun:
    """Letdowns of one group's valid points with every model."""

    models: list[Fluid]
    t: np.ndarray            # (models, points) outlet temperatures [K]
    t_min: np.ndarray        # screened outlet per point (the colder model; the case model when GERG-2008) [K]
    phase: np.ndarray        # case model's outlet phase per point
    beta: np.ndarray         # case model's vapour fraction per point
    warnings: tuple[tuple[str, ...], ...]   # case model's letdown warnings per point
    fallback: np.ndarray     # per point: the row must take the scalar path


def _path_clear(fluid: Fluid, p_in: np.ndarray, t_in: np.ndarray, p_out: np.ndarray, t_out: np.ndarray) -> np.ndarray:
    """True where the isenthalpic path from inlet to outlet passes clear of the fluid's two-phase region.

    The path is let down to :data:`PATH_SAMPLES` pressures between outlet and inlet (one batch); every piece
    between neighbouring samples must be a single vapour phase and clear of the envelope by
    :func:`_clear_of_envelope` over its pressure span, taking the colder end as the piece's lowest
    temperature (the temperature falls monotonically with pressure along a Joule-Thomson expansion below
    the inversion curve; above it the path warms, so an interior point is never the coldest).
    """
    n = p_in.size
    frac = np.arange(1, PATH_SAMPLES + 1) / (PATH_SAMPLES + 1)
    ps = p_out[:, None] + (p_in - p_out)[:, None] * frac
    r = letdown(fluid, np.repeat(p_in, PATH_SAMPLES), np.repeat(t_in, PATH_SAMPLES), ps.ravel())
    ok = (np.asarray(r.converged, bool) & np.isin(r.phase, _VAPOUR_PHASES)).reshape(n, PATH_SAMPLES).all(axis=1)
    T = np.hstack([t_out[:, None], np.asarray(r.t_out, float).reshape(n, PATH_SAMPLES), t_in[:, None]])
    P = np.hstack([p_out[:, None], ps, p_in[:, None]])
    with np.errstate(invalid="ignore"):
        for j in range(PATH_SAMPLES + 1):
            ok &= _clear_of_envelope(fluid, np.minimum(T[:, j], T[:, j + 1]) - NEAR_ENVELOPE_K, P[:, j], P[:, j + 1])
    return ok


def _run_group(fluid: Fluid, models: list[Fluid], pts: _Points) -> _GroupRun:
    runs = [letdown(m, pts.p_in, pts.t_in, pts.p_out) for m in models]
    t = np.vstack([np.asarray(r.t_out, float) for r in runs])
    conv = np.vstack([np.asarray(r.converged, bool) for r in runs]).all(axis=0)
    single = np.vstack([np.isin(r.phase, _VAPOUR_PHASES) for r in runs]).all(axis=0)
    with np.errstate(invalid="ignore"):
        t_min = t[0].copy() if governs_alone(models[0]) else t.min(axis=0)   # the screened outlet per point
        fallback = ~conv | ~single | ~np.isfinite(t_min)
        # every model's outlet clear of its own envelope
        for k, m in enumerate(models):
            fallback |= ~_clear_of_envelope(m, t[k] - NEAR_ENVELOPE_K, pts.p_out, pts.p_out)
        # the case's model: the whole path (liquid forming along it and re-evaporating is a finding of the
        # scalar screening); a quick box test first, then the path let down at a few pressures
        m = models[0]
        box = _clear_of_envelope(m, np.minimum(pts.t_in, t[0]) - NEAR_ENVELOPE_K, pts.p_out, pts.p_in)
        refine = np.flatnonzero(~box & ~fallback)
        if refine.size:
            box[refine] = _path_clear(m, pts.p_in[refine], pts.t_in[refine], pts.p_out[refine], t[0][refine])
        fallback |= ~box
        fallback |= ~_co2_frost_clear(fluid, pts.p_out, t_min)
        fallback |= ~((t_min > 0.0) & (t.max(axis=0) <= _HYDRATE_T_MAX_K) & (pts.p_out <= _HYDRATE_P_MAX_PA))
    return _GroupRun(models, t, t_min, np.asarray(runs[0].phase), np.asarray(runs[0].vapor_fraction, float),
                     runs[0].warnings, fallback)


def _row_hydrate_finding(fluid: Fluid, case: BatchCase, pts: _Points, t_min: np.ndarray, start: int,
                         n: int) -> Finding:
    """The hydrate finding of one wet row: the scalar screening's own assessment of each of the row's conditions
    and its own choice among them (:func:`jtcheck.screening.screen._hydrate_findings`), so both paths give the same
    words and numbers.  The model's hydrate temperatures of the group's outlet pressures are computed beforehand
    in one parallel call (:func:`_prime_hydrate_temperatures`); each is the same as a single call gives."""
    assessed = []
    for j in range(start, start + n):
        assessed.append((assess_hydrates(fluid, float(pts.p_out[j]), float(t_min[j]),
                                         water_present=_water_present(case),
                                         inhibitor=Inhibitor.METHANOL, design_margin_k=case.limits.margin_k,
                                         p_in_pa=float(pts.p_in[j]), t_in_k=float(pts.t_in[j])),
                         _CONDITION_NAMES[int(pts.kind[j])]))
    return _hydrate_findings(assessed, ScreeningOptions(case.limits))[0]


def _prime_hydrate_temperatures(fluid: Fluid, p_out: np.ndarray) -> None:
    """Compute the hydrate temperatures of every outlet pressure at once (in parallel), kept on the fluid."""
    from jtcheck.thermo.hydrate import hydrate_temperature

    if p_out.size:
        hydrate_temperature(fluid, np.unique(p_out))


def _plain_value(v: Any) -> Any:
    """:func:`jtcheck.letdown.plain.plain` with a fast path for the built-in types the findings here hold."""
    t = type(v)
    if t is float:
        return v if math.isfinite(v) else None
    if v is None or t is str or t is bool or t is int:
        return v
    if t is dict:
        return {str(k): _plain_value(x) for k, x in v.items()}
    return plain(v)


def _finding_dict(f: Finding) -> dict[str, Any]:
    """``f.to_dict()``, faster (the batch path builds tens of thousands)."""
    return {"topic": f.topic.value, "severity": f.severity.value, "message": f.message,
            "numbers": {k: _plain_value(v) for k, v in f.numbers.items()}, "basis": f.basis, "condition": f.condition}


def _no_hydrate_screen() -> Finding:
    return hydrate_not_applying("no water in the composition", False)


def _batch_rows(cases: Sequence[BatchCase], rows: np.ndarray, pts: _Points, starts: np.ndarray, n_pts: np.ndarray,
                run: _GroupRun, fluid: Fluid) -> dict[int, BatchRowResult]:
    """Results of the group's rows ``rows`` (positions), whose ``n_pts`` points start at ``starts``."""
    models = run.models
    eos = [m.eos.value for m in models]
    t_all = run.t.T.tolist()                 # per point: outlet temperature by model
    t_min = run.t_min.tolist()
    t_in = pts.t_in.tolist()
    kinds = pts.kind.tolist()
    phases = run.phase.tolist()
    betas = run.beta.tolist()
    # the coldest point of each row: the first of the lowest (as min() over the conditions in order)
    coldest = np.empty(rows.size, dtype=np.int64)
    for r, (s, n) in enumerate(zip(starts.tolist(), n_pts.tolist(), strict=True)):
        coldest[r] = s + min(range(n), key=lambda j, s=s: t_min[s + j])
    has_water = "water" in fluid.ids
    wet = np.array([cases[g].water_saturated or has_water for g in rows.tolist()], dtype=bool)
    hydrates: dict[int, Finding] = {}
    if wet.any():
        wet_pts = np.concatenate([np.arange(int(starts[r]), int(starts[r]) + int(n_pts[r]))
                                  for r in np.flatnonzero(wet).tolist()])
        _prime_hydrate_temperatures(fluid, pts.p_out[wet_pts])
        for r in np.flatnonzero(wet).tolist():
            g = int(rows[r])
            hydrates[r] = _row_hydrate_finding(fluid, cases[g], pts, run.t_min, int(starts[r]), int(n_pts[r]))
    dry = _no_hydrate_screen()
    out: dict[int, BatchRowResult] = {}
    for r, g in enumerate(rows.tolist()):
        case = cases[g]
        s, n, c = int(starts[r]), int(n_pts[r]), int(coldest[r])
        names = [_CONDITION_NAMES[kinds[p]] for p in range(s, s + n)]
        temps = t_all[c]
        gov = 0 if governs_alone(models[0]) else min(range(len(models)), key=temps.__getitem__)
        spread = None
        if len(models) > 1:
            cond = Condition(names[c - s], float(pts.p_in[c]), t_in[c], float(pts.p_out[c]))
            cs = ConditionScreen(cond, {e: _Outlet(True, t_in[c], t) for e, t in zip(eos, temps, strict=True)},
                                 t_min[c], eos[gov], None, "")
            spread = _model_spread([cs], models)
        limits = _with_spread(case.limits, spread)
        outcome, cold = screen_cold_metal([(names[j], t_min[s + j]) for j in range(n)], limits)
        findings = [cold]
        ice, warm = [], []
        validity: dict[str, list[str]] = {}
        for j in range(n):
            p = s + j
            f = icing(_Outlet(True, t_in[p], t_min[p]), names[j])
            if f is not None:
                ice.append((f, -t_min[p]))
            t_case = t_all[p][0]
            f = inverse_joule_thomson(_Outlet(True, t_in[p], t_case), names[j])
            if f is not None:
                warm.append((f, t_case - t_in[p]))
            for w in run.warnings[p]:
                if not w.startswith(_COVERED_WARNINGS):
                    validity.setdefault(w, []).append(names[j])
        for group in (ice, warm):
            f = _worst_of(group, n)
            if f is not None:
                findings.append(f)
        findings.append(hydrates.get(r) or dry)
        for text, where in validity.items():
            suffix = "" if len(where) == n else f" ({', '.join(where)})"
            sev = Severity.CAUTION if any(c in text for c in _CAUTION_WARNINGS) else Severity.INFORMATION
            findings.append(Finding(Topic.MODEL_VALIDITY, sev, text + suffix, {}, "model validity"))
        if spread is not None:
            findings.append(spread)
        limit = case.limits.governing_k
        out[g] = BatchRowResult(
            case.row, case.tag, outcome.value, t_min[c], names[c - s], eos[gov],
            dict(zip(eos, temps, strict=True)), str(phases[c]), float(betas[c]),
            None if limit is None else t_min[c] - limit, tuple(_finding_dict(f) for f in sort_findings(findings)),
            "batch", True, cold.message)
    return out


@contextmanager
def _gc_paused() -> Iterator[None]:
    """Pause the cyclic garbage collector while building many small, acyclic containers (the row results):
    its full passes over them would cost a tenth of the batch time."""
    was = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if was:
            gc.enable()


def _screen_group(fluid: Fluid, cases: Sequence[BatchCase], compare_models: bool
                  ) -> tuple[dict[int, BatchRowResult], list[int]]:
    """Batch results of the rows of one fluid (by position in ``cases``), and the positions left to the scalar
    path."""
    pts = _flatten(cases)
    n = len(cases)
    valid_pt = _valid_points(pts)
    row_ok = np.ones(n, dtype=bool)
    np.logical_and.at(row_ok, pts.row, valid_pt)
    keep = row_ok[pts.row]
    pts = _Points(pts.row[keep], pts.kind[keep], pts.p_in[keep], pts.t_in[keep], pts.p_out[keep])
    rows = np.flatnonzero(row_ok)
    if rows.size == 0:
        return {}, list(range(n))
    run = _run_group(fluid, model_fluids(fluid, compare_models), pts)
    starts = np.searchsorted(pts.row, rows)
    n_pts = np.diff(np.append(starts, pts.row.size))
    to_scalar = np.logical_or.reduceat(run.fallback, starts)
    batch = ~to_scalar
    with _gc_paused():
        done = _batch_rows(cases, rows[batch], pts, starts[batch], n_pts[batch], run, fluid)
    return done, sorted(set(range(n)) - set(done))


def screen_batch(cases: Sequence[BatchCase], *, compare_models: bool = True,
                 progress: ProgressFn | None = None) -> BatchScreening:
    """Screen many letdown rows: one compiled batch letdown per fluid and model, the robust scalar screening
    for the rows that need it.

    Rows are grouped by fluid object (identity); rows that are not ``vectorised`` (their case kind says so)
    go straight to the scalar path, which runs the row's own ``screen`` when it has one.  For each group,
    every row's credible conditions
    (:func:`jtcheck.screening.screen.credible_conditions`) are flattened and let down in one
    :func:`jtcheck.letdown.throttle.letdown` call per model: the case's fluid and, when ``compare_models``,
    the same fluid under the other of PR and SRK.  Per row, the coldest condition and the colder model give
    the screened temperature, classified against the row's limits
    (:func:`jtcheck.screening.cold_metal.screen_cold_metal`).

    A row takes the scalar path (:func:`jtcheck.screening.screen.screen_letdown`, ``path="scalar"``) when any
    of its conditions, with any model: did not converge; has an outlet that is not a single vapour phase
    (two-phase, liquid); lies within :data:`NEAR_ENVELOPE_K` of the model's phase envelope (for the case's
    model, anywhere along the letdown path, so that liquid forming and re-evaporating along the path is
    found); is a CO2-bearing outlet below the CO2 triple-point pressure within :data:`CO2_FROST_MARGIN_K`
    of the frost point (dry ice); or has inputs the batch letdown refuses.  Groups of fewer than
    :data:`BATCH_MIN_ROWS` rows, fluids without a usable phase envelope (and with water, glycols, alcohols
    or ammonia, or a single component) take the scalar path throughout.  If the batch letdown of a group
    fails, its rows take the scalar path (noted in ``notes``).

    Batch-path rows carry the findings of the scalar screening that apply to a single-phase vapour outlet:
    cold metal, external icing, inverse Joule-Thomson, hydrates (when the row is declared water-saturated
    or water is among the components), model validity and model spread.  Scalar-path rows carry the
    screening's own findings.  Fail closed: a row with a condition that did not converge is "not screened",
    and an exception in one row's screening makes that row "not screened" with the message.

    Parameters
    ----------
    cases : sequence of BatchCase
    compare_models : bool
        Screen with PR and SRK side by side (the colder governs), as the scalar screening does.
    progress : callable(done, total), optional
        Called as rows complete: after each group's batch rows and every :data:`PROGRESS_EVERY` scalar rows.
        An exception it raises stops the screening (a way to cancel).

    Returns
    -------
    BatchScreening
        One result per input row, in input order; ``counts`` has every outcome as a key.

    Notes
    -----
    A row's hydrate screen: a gas declared water-saturated (``water_saturated=True``) is screened for
    hydrates; otherwise water among the components decides, on both paths.
    """
    t0 = time.perf_counter()
    cases = list(cases)
    total = len(cases)
    results: list[BatchRowResult | None] = [None] * total
    notes: list[str] = []
    done = 0
    seconds_scalar = 0.0

    def tick(force: bool = False) -> None:
        if progress is not None and (force or done % PROGRESS_EVERY == 0):
            progress(done, total)

    groups: dict[tuple[int, bool], list[int]] = {}
    for i, case in enumerate(cases):   # a row whose kind is not vectorised goes to the scalar path
        groups.setdefault((id(case.fluid), case.vectorised), []).append(i)
    for (_, may_batch), idx in groups.items():
        fluid = cases[idx[0]].fluid
        members = [cases[i] for i in idx]
        to_scalar = list(range(len(idx)))
        if may_batch and isinstance(fluid, Fluid) and len(idx) >= BATCH_MIN_ROWS:
            try:
                batch, to_scalar = _screen_group(fluid, members, compare_models)
            except Exception as exc:  # noqa: BLE001 - the scalar path is the fallback for anything
                notes.append(f"batch letdown failed for {fluid!r} ({_message_of(exc)}): its {len(idx)} rows took "
                             "the scalar path")
                batch, to_scalar = {}, list(range(len(idx)))
            for pos, res in batch.items():
                results[idx[pos]] = res
            done += len(batch)
            if batch:
                tick(force=True)
        t_scalar = time.perf_counter()
        for pos in to_scalar:
            results[idx[pos]] = _scalar_row(members[pos], compare_models)
            done += 1
            tick()
        seconds_scalar += time.perf_counter() - t_scalar
    tick(force=True)
    rows = tuple(r for r in results if r is not None)
    if len(rows) != total:   # cannot happen: every row is given to one path or the other
        raise RuntimeError(f"batch screening lost rows: {total - len(rows)} of {total} have no result")
    counts = {o.value: 0 for o in Outcome}
    for r in rows:
        counts[r.outcome] = counts.get(r.outcome, 0) + 1
    n_scalar = sum(r.path == "scalar" for r in rows)
    return BatchScreening(rows, counts, n_scalar, time.perf_counter() - t0, tuple(notes), seconds_scalar)
