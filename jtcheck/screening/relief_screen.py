"""Screen the relieving case of a relief valve: the outlet piping and the flare header, fail closed.

A relief valve's discharge is screened like a letdown: every limit it meets gets the same bands
(pass / margin eroded / fail / not screened, margin = :attr:`ColdLimits.total_margin_k`, the entered
margin plus the model spread), and the worst band
over the limits, the relieving temperatures and the models governs.

* **Relieving temperatures.**  From the minimum credible relieving temperature (when given) to the
  normal one, at the relieving pressure (set + overpressure + atmospheric).  At fixed pressures the
  relieving enthalpy rises with the relieving temperature (cp > 0) and an isenthalpic state at fixed
  pressure warms with the enthalpy, so every downstream temperature is monotonic in the relieving
  temperature: the two ends bound the range; the midpoint is screened as a check.
* **Outlet piping.**  The state after the valve once the jet has slowed: the isenthalpic letdown to
  the total back pressure (:func:`jtcheck.letdown.relief.downstream_of_relief`), against the case's
  governing cold limit (:attr:`ColdLimits.governing_k`).
* **Flare header.**  A path, section by section in flow order, each given by its lowest pressure
  (:class:`HeaderSpec`); this valve's stream (its mass flow, or 1 kg/s nominal when not given: with one
  source the flow does not change the temperatures) and the other valves relieving at the same time
  (:class:`OtherSource`) are mixed and let down by :func:`jtcheck.letdown.flare_header.screen_header`.
  Without sections, a header limit is screened at the lowest credible pressure of the header, the
  atmospheric pressure at the tip: a conservative default, stated in the finding.
* **Remedies that fit a relief case** (:func:`relief_remedies`): the lowest relieving temperature that
  keeps every limit at limit + margin, and the material cold limit (MDMT) each failing part needs.  A
  heater or an outlet-pressure limit is never offered for a relief valve.

Everything is SI: Pa absolute, K, kg/s.
"""
from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

from scipy.optimize import brentq

from jtcheck.errors import InputError, JtcheckError
from jtcheck.letdown.flare_header import HeaderResult, HeaderSection, ReliefSource, screen_header
from jtcheck.letdown.relief import back_pressure_pa, downstream_of_relief, relief_valve_case, relieving_pressure_pa
from jtcheck.letdown.throttle import LetdownResult
from jtcheck.marks import DT, P, T
from jtcheck.screening.cold_metal import ColdLimits
from jtcheck.screening.findings import Finding, Outcome, Severity, Topic
from jtcheck.thermo.fluid import Fluid

#: Mass flow of this valve's stream when the case gives none [kg/s]: with one source the header
#: temperatures do not depend on it; with other sources the mix does, and the finding says so.
NOMINAL_MASS_FLOW_KG_PER_S = 1.0
#: Highest relieving temperature the remedy search tries [K].
T_REMEDY_MAX_K = 600.0
#: Tolerance of the remedy's relieving temperature [K].
T_REMEDY_XTOL_K = 0.01
#: Names of the limits that are not header sections.
OUTLET_PIPING = "outlet piping"
THIS_VALVE = "this relief valve"
#: Name of the one header section screened at the tip when the header's sections are not given.
HEADER_AT_TIP = "flare header (at the tip, atmospheric)"
#: Order of the outcomes when several are combined: fail governs, then not screened, margin eroded, pass.
WORST_ORDER = {Outcome.PASS: 0, Outcome.MARGIN_ERODED: 1, Outcome.NOT_SCREENED: 2, Outcome.FAIL: 3}
BASIS = ("API 520 Part I: isentropic nozzle (direct integration), isenthalpic expansion to the back pressure; "
         "flare header as a path of isenthalpic sections (jtcheck.letdown.flare_header); bands as a letdown")


@dataclass(frozen=True)
class HeaderSpec:
    """One flare-header section, given by its lowest pressure, in flow order (tailpipe, sub-header, main
    header, knock-out drum, tip).

    Attributes
    ----------
    name : str
    p_pa : float
        Lowest pressure of the section (its outlet), absolute [Pa].
    limit_k : float or None
        Lowest allowed temperature of its material [K]; None: the case's flare header limit applies.
    material : str
    """

    name: str
    p_pa: float
    limit_k: float | None
    material: str = ""


@dataclass(frozen=True)
class OtherSource:
    """Another relief valve discharging into the header at the same time, at its relieving state.

    Attributes
    ----------
    name : str
    fluid : Fluid
    mass_flow_kg_per_s : float
        Its relieving mass flow [kg/s].
    p_pa, t_k : float
        Its relieving pressure, absolute [Pa], and temperature [K].
    """

    name: str
    fluid: Fluid
    mass_flow_kg_per_s: float
    p_pa: float
    t_k: float


@dataclass(frozen=True)
class ReliefInputs:
    """Relief-valve data of a case (SI; pressures absolute except the built-up back pressure, a difference).

    ``t_relieving_min_k`` is the minimum credible relieving temperature [K] (the screening runs from it
    to ``t_relieving_k``); ``mass_flow_kg_per_s`` this valve's relieving flow [kg/s]; ``header_sections``
    the header in flow order; ``other_sources`` the valves relieving at the same time;
    ``header_limit_k`` the header's limit [K] (for sections without their own, or, without sections, the
    header screened at atmospheric pressure).
    """

    set_pressure_pa: float
    overpressure_fraction: float
    t_relieving_k: float
    superimposed_back_pressure_pa: float
    built_up_back_pressure_pa: float
    p_atm_pa: float = 101325.0
    header_limit_k: float | None = None
    t_relieving_min_k: float | None = None
    mass_flow_kg_per_s: float | None = None
    header_sections: tuple[HeaderSpec, ...] = ()
    other_sources: tuple[OtherSource, ...] = ()

    @property
    def p_relieving_pa(self) -> float:
        """Relieving pressure, absolute [Pa]."""
        return relieving_pressure_pa(self.set_pressure_pa, self.overpressure_fraction, self.p_atm_pa)

    @property
    def p_back_pa(self) -> float:
        """Total back pressure at the valve outlet, absolute [Pa]."""
        return back_pressure_pa(self.superimposed_back_pressure_pa, self.built_up_back_pressure_pa)

    @property
    def relieving_temperatures_k(self) -> list[float]:
        """The relieving temperatures screened, coldest first [K]."""
        t_n, t_min = self.t_relieving_k, self.t_relieving_min_k
        if t_min is None or t_min >= t_n:
            return [t_n]
        return [t_min, 0.5 * (t_min + t_n), t_n]


def worst_outcome(*outcomes: Outcome) -> Outcome:
    """The worst of ``outcomes``: fail > not screened > margin eroded > pass."""
    return max(outcomes, key=WORST_ORDER.__getitem__)


def band(t_k: float | None, limit_k: float | None, margin_k: float, converged: bool = True) -> Outcome:
    """The band of one temperature [K] against one limit [K] with the margin [K], as for a letdown."""
    if limit_k is None or t_k is None or not math.isfinite(t_k):
        return Outcome.NOT_SCREENED
    if t_k < limit_k:
        return Outcome.FAIL
    if not converged:
        return Outcome.NOT_SCREENED
    return Outcome.MARGIN_ERODED if t_k < limit_k + margin_k else Outcome.PASS


def header_path(relief: ReliefInputs) -> tuple[HeaderSection, ...]:
    """The header sections to screen: the given ones chained from the back pressure, each from the lowest
    pressure of the one before; without them, one section from the back pressure to atmospheric when a
    header limit is given; else none."""
    p_in = relief.p_back_pa
    if relief.header_sections:
        out = []
        for spec in relief.header_sections:
            limit = spec.limit_k if spec.limit_k is not None else relief.header_limit_k
            out.append(HeaderSection(spec.name, max(p_in, spec.p_pa), spec.p_pa, limit, spec.material))
            p_in = spec.p_pa
        return tuple(out)
    if relief.header_limit_k is None:
        return ()
    return (HeaderSection(HEADER_AT_TIP, p_in, min(p_in, relief.p_atm_pa), relief.header_limit_k),)


@dataclass(frozen=True)
class _Point:
    """One model at one relieving temperature: the outlet piping and the header."""

    model: str
    t_relieving_k: float
    downstream: LetdownResult | None
    header: HeaderResult | None
    message: str


def _point(fl: Fluid, relief: ReliefInputs, t1: float, sections: tuple[HeaderSection, ...]) -> _Point:
    p1, pb = relief.p_relieving_pa, relief.p_back_pa
    notes = []
    try:
        down: LetdownResult | None = downstream_of_relief(fl, p1, t1, pb)
    except JtcheckError as exc:
        down, notes = None, [f"outlet piping: {exc}"]
    header = None
    if sections:
        flow = relief.mass_flow_kg_per_s or NOMINAL_MASS_FLOW_KG_PER_S
        try:
            sources = [ReliefSource(THIS_VALVE, fl, flow, p_pa=p1, t_k=t1)]
            sources += [ReliefSource(o.name, o.fluid.with_eos(fl.eos), o.mass_flow_kg_per_s, p_pa=o.p_pa, t_k=o.t_k)
                        for o in relief.other_sources]
            header = screen_header(sources, sections)
        except JtcheckError as exc:
            notes.append(f"flare header: {exc}")
    return _Point(fl.eos.value, t1, down, header, "; ".join(notes))


def _row(limit: str, where: str, p_pa: float, t_k: float | None, limit_k: float | None, outcome: Outcome,
         pt: _Point, converged: bool, message: str, material: str = "") -> dict[str, Any]:
    t = t_k if t_k is not None and math.isfinite(t_k) else None
    return {"limit": limit, "where": where, "p_pa": p_pa, "t_k": t, "limit_k": limit_k,
            "margin_k": None if t is None or limit_k is None else t - limit_k, "band": outcome.value,
            "t_relieving_k": pt.t_relieving_k, "model": pt.model, "material": material, "converged": converged,
            "message": message}


def _rows(pt: _Point, relief: ReliefInputs, limits: ColdLimits,
          sections: tuple[HeaderSection, ...]) -> list[dict[str, Any]]:
    """One row per limit for one point."""
    margin, pb = limits.total_margin_k, relief.p_back_pa
    d = pt.downstream
    ok = d is not None and d.converged
    t = d.t_out if ok and d is not None else None
    msg = pt.message if d is None else d.message
    rows = [_row(OUTLET_PIPING, "downstream of the valve, at the total back pressure", pb, t, limits.governing_k,
                 band(t, limits.governing_k, margin, ok), pt, ok, msg)]
    if pt.header is None:
        rows += [_row(s.name, "flare header", s.p_outlet_pa, None, s.limit_k, Outcome.NOT_SCREENED, pt, False,
                      pt.message or "the header was not computed", s.material) for s in sections]
        return rows
    for s in pt.header.sections:
        out = Outcome.FAIL if s.band == "fail" else band(s.t_k, s.limit_k, margin, s.converged)
        rows.append(_row(s.name, "flare header, at its colder end", s.p_screened_pa if math.isfinite(s.p_screened_pa)
                         else s.p_outlet_pa, s.t_k, s.limit_k, out, pt, s.converged, s.message, s.material))
    return rows


def _severity_key(row: dict[str, Any]) -> tuple[int, float]:
    m = row["margin_k"]
    return WORST_ORDER[Outcome(row["band"])], -(m if m is not None else math.inf)


def _governing_rows(rows: list[dict[str, Any]]) -> list[dict[str, Any]]:
    """The worst row of each limit, in the order the limits first appear."""
    worst: dict[str, dict[str, Any]] = {}
    for r in rows:
        if r["limit"] not in worst or _severity_key(r) > _severity_key(worst[r["limit"]]):
            worst[r["limit"]] = r
    return list(worst.values())


def _c(t_k: float) -> str:
    return f"{T(t_k)}"


def _limit_finding(row: dict[str, Any], margin_k: float, at_tip_note: str) -> Finding | None:
    outcome = Outcome(row["band"])
    if outcome is Outcome.PASS:
        return None
    place = "the outlet piping" if row["limit"] == OUTLET_PIPING else f"the flare header section {row['limit']!r}"
    case = f"(relieving at {_c(row['t_relieving_k'])}, {row['model']}, {P(row['p_pa'])})"
    note = at_tip_note if row["limit"] == HEADER_AT_TIP else ""
    numbers = {k: row[k] for k in ("t_k", "limit_k", "margin_k", "p_pa", "t_relieving_k")}
    if outcome is Outcome.NOT_SCREENED:
        why = "no temperature limit is given" if row["limit_k"] is None else f"not converged: {row['message']}"
        return Finding(Topic.RELIEF, Severity.HAZARD, f"Not screened: {place} {case}: {why}.{note}", numbers, BASIS,
                       row["limit"])
    t, lim = row["t_k"], row["limit_k"]
    if outcome is Outcome.FAIL:
        return Finding(Topic.RELIEF, Severity.HAZARD,
                       f"The relieving flow reaches {place} at {_c(t)}, {DT(lim - t, 1)} below its limit {_c(lim)} "
                       f"{case}.{note}", numbers, BASIS, row["limit"])
    return Finding(Topic.RELIEF, Severity.CAUTION,
                   f"The relieving flow reaches {place} at {_c(t)}, inside the {DT(margin_k, 2)} margin above its "
                   f"limit {_c(lim)} {case}.{note}", numbers, BASIS, row["limit"])


def _nozzle_finding(rv: dict[str, Any], model: str) -> Finding:
    nz = rv.get("nozzle") or {}
    choke = "choked" if nz.get("choked") else "not choked"
    return Finding(
        Topic.RELIEF, Severity.INFORMATION,
        f"Relieving at {P(rv['p_relieving_pa'])} and {_c(rv['t_relieving_k'])}: flow {choke}; nozzle "
        f"throat {T(rv['t_throat_k'])} at {P(nz['p_throat_pa'])}; after expansion to "
        f"the back pressure {P(rv['p_back_pa'])} the flow reaches the outlet piping at "
        f"{T(rv['t_downstream_k'])} ({model}).",
        {"p_relieving_pa": rv["p_relieving_pa"], "p_back_pa": rv["p_back_pa"], "p_throat_pa": nz.get("p_throat_pa"),
         "t_throat_k": rv["t_throat_k"], "t_downstream_k": rv["t_downstream_k"], "choked": nz.get("choked"),
         "critical_pressure_ratio": nz.get("critical_pressure_ratio"),
         "ideal_critical_pressure_ratio": nz.get("ideal_critical_pressure_ratio")},
        "API 520 Part I: isentropic nozzle (direct integration), isenthalpic expansion downstream")


def _header_rank(pt: _Point) -> tuple[int, float]:
    h = pt.header
    assert h is not None
    rank = {"fail": 3, "not screened": 2}.get(str(h.band), 0)
    return rank, -(h.t_coldest_k if math.isfinite(h.t_coldest_k) else -math.inf)


def screen_relief(models: Sequence[Fluid], relief: ReliefInputs,
                  limits: ColdLimits) -> tuple[dict[str, Any], list[Finding], Outcome]:
    """The relieving case of a relief valve against the outlet piping's and the flare header's limits.

    Parameters
    ----------
    models : sequence of Fluid
        The case's fluid under each model screened (the case's EOS and the other of PR and SRK).
    relief : ReliefInputs
    limits : ColdLimits
        The case's limits: the governing one applies to the outlet piping; the margin to every limit.

    Returns
    -------
    (dict, list of Finding, Outcome)
        The answer stored as ``answers["relief_valve"]`` (each model's nozzle and outlet state at its
        coldest relieving temperature in ``models``; ``limits``: the governing row of each limit;
        ``header``: the :class:`HeaderResult` of the coldest header), the findings, and the relief outcome
        (the worst band; a calculation that did not converge is "not screened", never "pass").
    """
    sections = header_path(relief)
    temps = relief.relieving_temperatures_k
    points = [_point(fl, relief, t, sections) for fl in models for t in temps]
    rows = [r for pt in points for r in _rows(pt, relief, limits, sections)]
    governing = _governing_rows(rows)
    outcome = worst_outcome(*(Outcome(r["band"]) for r in governing))
    findings: list[Finding] = []

    # each model's nozzle and outlet state at its coldest relieving temperature (the worst outlet piping)
    per_model: dict[str, Any] = {}
    coldest: tuple[float, str, float] | None = None
    for fl in models:
        done = [pt for pt in points if pt.model == fl.eos.value and pt.downstream is not None
                and pt.downstream.converged]
        t1 = min(done, key=lambda p: p.downstream.t_out).t_relieving_k if done else temps[0]  # type: ignore[union-attr]
        try:
            rv = relief_valve_case(fl, relief.set_pressure_pa, relief.overpressure_fraction, t1,
                                   relief.superimposed_back_pressure_pa, relief.built_up_back_pressure_pa,
                                   p_atm_pa=relief.p_atm_pa, outlet_limit_k=limits.governing_k)
        except JtcheckError as exc:
            per_model[fl.eos.value] = {"converged": False, "message": str(exc)}
            continue
        d = rv.to_dict()
        per_model[fl.eos.value] = d
        t = d.get("t_downstream_k")
        if rv.converged and t is not None and (coldest is None or t < coldest[0]):
            coldest = (t, fl.eos.value, t1)
    if coldest is None or not all(v.get("converged") for v in per_model.values()):
        outcome = worst_outcome(outcome, Outcome.NOT_SCREENED)
    flow = relief.mass_flow_kg_per_s
    data: dict[str, Any] = {
        "models": per_model, "governing_model": None if coldest is None else coldest[1],
        "p_relieving_pa": relief.p_relieving_pa, "p_back_pa": relief.p_back_pa,
        "relieving_temperatures_k": temps, "t_relieving_min_k": relief.t_relieving_min_k,
        "mass_flow_kg_per_s": flow if flow is not None else NOMINAL_MASS_FLOW_KG_PER_S,
        "mass_flow_given": flow is not None, "other_sources": [o.name for o in relief.other_sources],
        "header_at_tip": bool(sections) and not relief.header_sections,
        "limits": governing, "outcome": outcome.value, "header": None}
    with_header = [pt for pt in points if pt.header is not None]
    if with_header:
        data["header"] = max(with_header, key=_header_rank).header.to_dict()  # type: ignore[union-attr]
    if coldest is None:
        findings.append(Finding(Topic.RELIEF, Severity.HAZARD, "Relief-valve calculation did not converge: "
                                "the relieving case is not screened.", {}, "API 520 Part I"))
    else:
        data["t_downstream_k"] = coldest[0]
        data["t_relieving_k"] = coldest[2]
        findings.append(_nozzle_finding(per_model[coldest[1]], coldest[1]))
    at_tip = ""
    if data["header_at_tip"]:
        at_tip = (f" The header's sections are not given: the header is screened at its lowest credible pressure, "
                  f"the atmospheric pressure at the tip ({P(relief.p_atm_pa)}), not at the back "
                  "pressure at the valve (a conservative default).")
    if relief.other_sources and flow is None:
        at_tip += (f" This valve's mass flow is not given: {NOMINAL_MASS_FLOW_KG_PER_S:g} kg/s is taken for its "
                   "share of the mix with the other relieving valves.")
    for r in governing:
        f = _limit_finding(r, limits.total_margin_k, at_tip)
        if f is not None:
            findings.append(f)
    passing = [r for r in governing if r["band"] == Outcome.PASS.value]
    if passing:
        listing = "; ".join(f"{r['limit']} {_c(r['t_k'])} against {_c(r['limit_k'])}" for r in passing)
        over = ", ".join(_c(t) for t in temps)
        note = at_tip if any(r["limit"] == HEADER_AT_TIP for r in passing) else ""
        findings.append(Finding(Topic.RELIEF, Severity.INFORMATION,
                                f"The relieving case keeps the {DT(limits.total_margin_k, 2)} margin at: {listing} "
                                f"(coldest "
                                f"over the relieving temperatures {over} and the models).{note}",
                                {"limits": [r["limit"] for r in passing]}, BASIS))
    return data, findings, outcome


# -- remedies that fit a relief case ---------------------------------------------------------------------------

def _shortfall(models: Sequence[Fluid], relief: ReliefInputs, limits: ColdLimits) -> Callable[[float], float]:
    """g(T1) = min over models and limits of t - (limit + margin) [K] at the relieving temperature T1 [K];
    raises :class:`JtcheckError` when a calculation does not converge."""
    sections = header_path(relief)

    def g(t1: float) -> float:
        worst = math.inf
        for fl in models:
            rows = _rows(_point(fl, relief, t1, sections), relief, limits, sections)
            for r in rows:
                if r["limit_k"] is None:
                    continue
                if r["t_k"] is None or not r["converged"]:
                    raise JtcheckError(f"{r['limit']} at a relieving temperature of {t1:.2f} K ({fl.eos.value}): "
                                       f"{r['message'] or 'not converged'}")
                worst = min(worst, r["t_k"] - r["limit_k"] - limits.total_margin_k)
        return worst

    return g


def _min_relieving_temperature(models: Sequence[Fluid], relief: ReliefInputs,
                               limits: ColdLimits) -> dict[str, Any]:
    g = _shortfall(models, relief, limits)
    lo = relief.relieving_temperatures_k[0]
    out: dict[str, Any] = {"found": False, "t_relieving_min_k": None, "already_met": False,
                           "search_k": [lo, T_REMEDY_MAX_K], "sentence": ""}
    try:
        g_lo = g(lo)
        if not math.isfinite(g_lo):
            out["reason"] = "no limit is given for the relieving case"
            return out
        if g_lo >= 0.0:
            out.update(found=True, already_met=True, t_relieving_min_k=lo,
                       sentence=f"The relieving case already keeps every limit with the "
                                f"{DT(limits.total_margin_k, 2)} margin "
                                f"at the minimum credible relieving temperature {_c(lo)}; the outcome comes from "
                                "the letdown conditions.")
            return out
        if g(T_REMEDY_MAX_K) < 0.0:
            out["reason"] = (f"even at a relieving temperature of {_c(T_REMEDY_MAX_K)} a limit is not kept with its "
                             "margin; a warmer relieving temperature is not a remedy here")
            return out
        t = float(brentq(g, lo, T_REMEDY_MAX_K, xtol=T_REMEDY_XTOL_K))
        for _ in range(20):         # the root may sit a hair below the line: step up until every limit holds
            if g(t) >= 0.0:
                break
            t += T_REMEDY_XTOL_K
        else:
            out["reason"] = f"the search did not settle near {_c(t)}"
            return out
    except JtcheckError as exc:
        out["reason"] = f"the calculation did not converge: {exc}"
        return out
    out.update(found=True, t_relieving_min_k=t,
               sentence=f"Keep the relieving temperature at or above {_c(t)} (e.g. by heat tracing and insulating the "
                        "protected equipment and the valve inlet, or by removing the cause that lets the relieving "
                        f"fluid get colder); every limit then keeps its {DT(limits.total_margin_k, 2)} margin.")
    return out


def _materials(data: dict[str, Any], limits: ColdLimits, t_letdown_min_k: float | None) -> list[dict[str, Any]]:
    """The MDMT each part needs: its coldest screened temperature minus the margin [K]."""
    out = []
    rows = {r["limit"]: r for r in data.get("limits") or ()}
    outlet = [t for t in (t_letdown_min_k, (rows.get(OUTLET_PIPING) or {}).get("t_k")) if t is not None]
    parts: list[tuple[str, float | None, float | None, str]] = []
    if outlet:
        parts.append((OUTLET_PIPING, min(outlet), limits.governing_k, ""))
    for name, r in rows.items():
        if name != OUTLET_PIPING and r["band"] in (Outcome.FAIL.value, Outcome.MARGIN_ERODED.value):
            parts.append((name, r["t_k"], r["limit_k"], r.get("material") or ""))
    for name, t, current, material in parts:
        if t is None:
            continue
        need = t - limits.total_margin_k
        where = "the outlet piping" if name == OUTLET_PIPING else f"the flare header section {name!r}"
        out.append({"where": name, "t_coldest_k": t, "mdmt_needed_k": need, "current_limit_k": current,
                    "material": material,
                    "sentence": f"For {where}: a material whose MDMT is at or below {_c(need)} (coldest screened "
                                f"{_c(t)}, less the {DT(limits.total_margin_k, 2)} margin)."})
    return out


def relief_remedies(models: Sequence[Fluid], relief: ReliefInputs | None, limits: ColdLimits,
                    data: dict[str, Any] | None, t_letdown_min_k: float | None) -> dict[str, Any]:
    """Remedies that fit a relief case: no heater, no outlet-pressure limit.

    Parameters
    ----------
    models : sequence of Fluid
    relief : ReliefInputs or None
        None for a relief-valve case without set-pressure data (only the material remedy is given).
    limits : ColdLimits
    data : dict or None
        ``answers["relief_valve"]`` from :func:`screen_relief`.
    t_letdown_min_k : float or None
        The coldest outlet of the case's letdown conditions [K] (the same outlet piping).

    Returns
    -------
    dict
        ``min_relieving_temperature``: the lowest relieving temperature [K] that keeps every limit at limit +
        margin (bracketed Brent search from the coldest relieving temperature screened to
        :data:`T_REMEDY_MAX_K`), or ``found`` False with the ``reason``; ``materials``: per part, the MDMT a
        material needs [K] (coldest screened temperature less the margin).
    """
    if relief is None:
        temp: dict[str, Any] = {"found": False, "t_relieving_min_k": None, "sentence": "",
                                "reason": "no relieving case (no set pressure given)"}
    else:
        try:
            temp = _min_relieving_temperature(models, relief, limits)
        except InputError as exc:
            temp = {"found": False, "t_relieving_min_k": None, "sentence": "", "reason": str(exc)}
    return {"margin_k": limits.total_margin_k, "margin_terms": limits.margin_terms,
            "min_relieving_temperature": temp,
            "materials": _materials(data or {}, limits, t_letdown_min_k)}
