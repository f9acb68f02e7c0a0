"""Screen a letdown case: every credible condition, with PR and SRK side by side, against every cold hazard.

:func:`screen_letdown` is the one entry point that the register, the API and the CLI share:

1. each credible condition (name, inlet pressure, inlet temperature, outlet pressure) is let down
   isenthalpically with the case's equation of state and with the other of Peng-Robinson and SRK;
   the colder outlet governs (model spread);
2. a CO2-rich outlet below the CO2 triple-point pressure is recomputed against the sublimation line
   (the fluid-only EOS has no solid phase, see :mod:`jtcheck.screening.co2_solids`);
3. when operating ranges are given, a sweep finds the coldest combination inside them, which joins
   the conditions as "coldest in the operating ranges";
4. the coldest screened outlet is classified against the cold limits (:mod:`.cold_metal`), and
   liquid dropout, hydrates, CO2 solids, icing and inverse Joule-Thomson are reported as findings;
5. a relief-valve case adds the relieving case (:mod:`jtcheck.screening.relief_screen`): every
   relieving temperature from the minimum credible to the normal, the outlet piping at the back
   pressure and the flare header as a path, each limit in the same bands; the worst of the letdown
   and the relief outcome governs (fail > not screened > margin eroded > pass);
6. when the outcome is fail or margin eroded, the remedies that fit the kind: for a letdown the
   preheat that brings every condition to the limit plus margin and the lowest outlet pressure that
   keeps it there; for a relief valve (``remedies="relief"``) the lowest relieving temperature that
   keeps every limit and the material cold limit (MDMT) each part needs, never a heater.

Everything here is SI; units are converted at the edges (web, API, CLI).
"""
from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field, replace
from typing import Any

from jtcheck.errors import InputError, JtcheckError
from jtcheck.letdown.outlet_limit import outlet_pressure_limit
from jtcheck.letdown.preheat import required_preheat
from jtcheck.letdown.sweep import operating_sweep
from jtcheck.letdown.throttle import CO2_TRIPLE_P_PA, LetdownResult, letdown
from jtcheck.marks import DT, P, T
from jtcheck.screening.co2_solids import screen_co2_solids
from jtcheck.screening.cold_metal import ColdLimits, screen_cold_metal
from jtcheck.screening.findings import Finding, Outcome, Severity, Topic, plain, sort_findings
from jtcheck.screening.hydrates import (
    METHOD,
    METHOD_UNCERTAINTY_BASIS,
    METHOD_UNCERTAINTY_K,
    Inhibitor,
    assess_hydrates,
)
from jtcheck.screening.phase_hazards import icing, inverse_joule_thomson, liquid_dropout, two_phase_inlet
from jtcheck.screening.relief_screen import (
    HeaderSpec,
    OtherSource,
    ReliefInputs,
    relief_remedies,
    screen_relief,
    worst_outcome,
)
from jtcheck.thermo.eos import EOS
from jtcheck.thermo.fluid import Fluid

#: The public names; the relief-valve inputs (HeaderSpec, OtherSource, ReliefInputs) live in
#: :mod:`jtcheck.screening.relief_screen` and are re-exported here.
__all__ = ["CONDITION_MAX_P", "CONDITION_MIN_T", "CONDITION_MIN_T_MAX_P", "CONDITION_NORMAL", "CONDITION_START_UP",
           "REMEDIES",
           "SWEEP_CONDITION", "Condition", "ConditionScreen", "HeaderSpec", "OperatingRanges", "OtherSource",
           "ReliefInputs", "Screening", "ScreeningOptions", "credible_conditions", "model_fluids", "screen_letdown",
           "start_up_conditions", "start_up_name"]
#: Names of the credible conditions, in order, and of the one the operating sweep adds.
CONDITION_NORMAL = "normal"
CONDITION_MIN_T = "min inlet temperature"
CONDITION_MAX_P = "max inlet pressure"
CONDITION_MIN_T_MAX_P = "min temperature + max pressure"
SWEEP_CONDITION = "coldest in the operating ranges"
#: Name of the generated start-up condition (one per credible inlet state; :func:`start_up_conditions`).
CONDITION_START_UP = "start-up into depressured outlet"
#: Spread between models above which the finding becomes a caution [K].
MODEL_SPREAD_CAUTION_K = 3.0
#: The remedies a screening may offer: a letdown's (preheat, outlet-pressure limit) or a relief valve's
#: (minimum relieving temperature, material cold limit; never a heater or an outlet-pressure limit).
REMEDIES = ("letdown", "relief")
#: Letdown warnings that a finding already covers (not repeated as model-validity notes).
_COVERED_WARNINGS = ("the fluid warms on letdown", "CO2-rich fluid let down below")
#: Model-validity warnings raised to a caution: a state outside GERG-2008's normal range, and a hydrogen- or
#: helium-rich fluid screened on a cubic (which errs by kelvins there, issue 15).
_CAUTION_WARNINGS = ("outside the normal range of GERG-2008", "screen this fluid with GERG2008")


def governs_alone(fluid: Fluid) -> bool:
    """Whether the case's model alone decides the screened outlet: GERG-2008, the reference-grade model
    (Kunz and Wagner 2012), governs, and the cubic models beside it show the spread.  With a cubic model
    the colder of the models compared governs."""
    return fluid.eos is EOS.GERG2008


@dataclass(frozen=True)
class Condition:
    """One credible operating condition of a case (SI)."""

    name: str
    p_in_pa: float
    t_in_k: float
    p_out_pa: float


def credible_conditions(p_in_pa: float, t_in_k: float, p_out_pa: float, p_in_max_pa: float | None = None,
                        t_in_min_k: float | None = None) -> list[Condition]:
    """The credible conditions of a letdown: always "normal"; "min inlet temperature" and "max inlet
    pressure" when those extremes are given, and "min temperature + max pressure" when both are.

    Pressures [Pa] absolute, temperatures [K]; every condition lets down to ``p_out_pa``.
    """
    out = [Condition(CONDITION_NORMAL, p_in_pa, t_in_k, p_out_pa)]
    if t_in_min_k is not None:
        out.append(Condition(CONDITION_MIN_T, p_in_pa, t_in_min_k, p_out_pa))
    if p_in_max_pa is not None:
        out.append(Condition(CONDITION_MAX_P, p_in_max_pa, t_in_k, p_out_pa))
    if t_in_min_k is not None and p_in_max_pa is not None:
        out.append(Condition(CONDITION_MIN_T_MAX_P, p_in_max_pa, t_in_min_k, p_out_pa))
    return out


def start_up_name(inlet_condition: str) -> str:
    """The start-up condition from the credible inlet state named ``inlet_condition`` ("normal" -> the bare
    name, else the name with the inlet state in brackets)."""
    return CONDITION_START_UP + ("" if inlet_condition == CONDITION_NORMAL else f" ({inlet_condition})")


def start_up_conditions(p_in_pa: float, t_in_k: float, p_out_pa: float, p_atm_pa: float,
                        p_in_max_pa: float | None = None, t_in_min_k: float | None = None) -> list[Condition]:
    """Start-up into a depressured downstream: every credible inlet state (:func:`credible_conditions`) let
    down to the atmospheric pressure ``p_atm_pa`` [Pa], the outlet's pressure when the valve first opens.

    Empty when the normal outlet pressure is not above ``p_atm_pa`` (the normal conditions are the start-up).
    """
    if not p_out_pa > p_atm_pa:
        return []
    return [Condition(start_up_name(c.name), c.p_in_pa, c.t_in_k, p_atm_pa)
            for c in credible_conditions(p_in_pa, t_in_k, p_out_pa, p_in_max_pa, t_in_min_k)]


@dataclass(frozen=True)
class OperatingRanges:
    """Ranges of the operating sweep: (low, high) each, equal ends for a fixed value [Pa, K, Pa]."""

    p_in_pa: tuple[float, float]
    t_in_k: tuple[float, float]
    p_out_pa: tuple[float, float]

    @property
    def varies(self) -> bool:
        return any(hi > lo for lo, hi in (self.p_in_pa, self.t_in_k, self.p_out_pa))


@dataclass(frozen=True)
class ScreeningOptions:
    """What to screen against and which answers to find."""

    limits: ColdLimits
    compare_models: bool = True
    water_saturated: bool | None = None
    inhibitor: str = "methanol"
    mass_flow_kg_per_s: float | None = None
    water_basis: str | None = None
    water_content_mg_per_sm3: float | None = None
    water_dew_point_k: float | None = None
    ranges: OperatingRanges | None = None
    relief: ReliefInputs | None = None
    answers: bool = True
    remedies: str = "letdown"

    def __post_init__(self) -> None:
        if self.remedies not in REMEDIES:
            raise InputError("remedies", f"unknown remedies {self.remedies!r}; allowed: {', '.join(REMEDIES)}")


@dataclass(frozen=True)
class ConditionScreen:
    """One condition screened with every model.

    Attributes
    ----------
    condition : Condition
    results : dict
        EOS value -> :class:`LetdownResult` (or None when the letdown refused its inputs).
    t_screen_k : float or None
        The outlet temperature screened [K]: the colder model, corrected for CO2 solids; None if any
        model did not converge (the condition is then not screened).
    governing_model : str
    solids : dict or None
        The CO2-solids outlet (``SolidCO2Outlet.to_dict()``) of the governing model when it applies.
    message : str
    """

    condition: Condition
    results: dict[str, LetdownResult | None]
    t_screen_k: float | None
    governing_model: str
    solids: dict[str, Any] | None
    message: str

    @property
    def converged(self) -> bool:
        return self.t_screen_k is not None

    def to_dict(self) -> dict[str, Any]:
        return plain({
            "condition": self.condition.name, "p_in_pa": self.condition.p_in_pa, "t_in_k": self.condition.t_in_k,
            "p_out_pa": self.condition.p_out_pa, "t_screen_k": self.t_screen_k, "converged": self.converged,
            "governing_model": self.governing_model, "message": self.message, "solids": self.solids,
            "models": {eos: (None if r is None else {
                "t_out_k": r.t_out if r.converged else None, "phase": r.phase, "converged": r.converged,
                "vapor_fraction": r.vapor_fraction if r.converged else None, "message": r.message})
                for eos, r in self.results.items()}})


@dataclass(frozen=True)
class Screening:
    """Everything the screening of one case found (SI)."""

    outcome: Outcome
    limits: ColdLimits
    t_out_min_k: float | None
    coldest_condition: str
    models: tuple[str, ...]
    conditions: tuple[ConditionScreen, ...]
    findings: tuple[Finding, ...]
    answers: dict[str, Any] = field(default_factory=dict)

    def to_dict(self) -> dict[str, Any]:
        return plain({
            "outcome": self.outcome.value, "outcome_sentence": self.outcome.sentence,
            "limits": self.limits.to_dict(), "t_out_min_k": self.t_out_min_k,
            "coldest_condition": self.coldest_condition, "models": list(self.models),
            "conditions": [c.to_dict() for c in self.conditions],
            "findings": [f.to_dict() for f in self.findings], "answers": self.answers})


def model_fluids(fluid: Fluid, compare: bool = True) -> list[Fluid]:
    """The case's fluid, then the same fluid under the other of PR and SRK, or under both when the case's
    model is GERG-2008 (when ``compare``)."""
    out = [fluid]
    if compare:
        out += [fluid.with_eos(e) for e in (EOS.PR, EOS.SRK) if e is not fluid.eos]
    return out


def _co2_rich(fluid: Fluid) -> bool:
    return "carbon dioxide" in fluid.ids and float(fluid.zs[fluid.ids.index("carbon dioxide")]) > 0.0


def _screen_condition(models: list[Fluid], cond: Condition) -> ConditionScreen:
    results: dict[str, LetdownResult | None] = {}
    temps: dict[str, float] = {}
    solids_by_model: dict[str, dict[str, Any]] = {}
    problems = []
    for fl in models:
        eos = fl.eos.value
        try:
            r = letdown(fl, cond.p_in_pa, cond.t_in_k, cond.p_out_pa)
        except InputError as exc:
            results[eos] = None
            problems.append(f"{eos}: {exc}")
            continue
        results[eos] = r
        if not r.converged:
            problems.append(f"{eos}: {r.message}")
            continue
        t = r.t_out
        if _co2_rich(fl) and cond.p_out_pa < CO2_TRIPLE_P_PA:
            solid = screen_co2_solids(fl, r)
            if solid.applies and not solid.converged:
                problems.append(f"{eos}: CO2 solids calculation failed: {solid.message}")
                continue
            if solid.applies and solid.forms_solid:
                t = solid.t_out_k
                solids_by_model[eos] = solid.to_dict()
        temps[eos] = t
    if problems:
        return ConditionScreen(cond, results, None, "", None, "not converged: " + "; ".join(problems))
    if governs_alone(models[0]):
        gov = models[0].eos.value
        others = [e for e in temps if e != gov]
        why = (f"screened on {gov}, the reference-grade model (GERG-2008, Kunz and Wagner 2012)"
               + (f"; {', '.join(others)} beside it as the model spread" if others else ""))
        return ConditionScreen(cond, results, temps[gov], gov, solids_by_model.get(gov), why)
    gov = min(temps, key=temps.__getitem__)
    return ConditionScreen(cond, results, temps[gov], gov, solids_by_model.get(gov),
                           f"screened on {gov} (the colder of {', '.join(temps)})")


def _sweep(models: list[Fluid], ranges: OperatingRanges) -> tuple[Condition | None, dict[str, Any]]:
    """Coldest combination over the ranges with every model; the condition it adds and the sweep data."""
    per_model: dict[str, Any] = {}
    worst: tuple[float, Condition] | None = None
    complete = True
    for fl in models:
        try:
            sw = operating_sweep(fl, ranges.p_in_pa, ranges.t_in_k, ranges.p_out_pa)
        except JtcheckError as exc:
            per_model[fl.eos.value] = {"converged": False, "message": str(exc)}
            complete = False
            continue
        d = sw.to_dict()
        per_model[fl.eos.value] = d
        if not sw.complete:
            complete = False
        t = sw.worst_t_out_k
        if t is not None and math.isfinite(t) and (worst is None or t < worst[0]):
            worst = (t, Condition(SWEEP_CONDITION, sw.worst_p_in_pa, sw.worst_t_in_k, sw.worst_p_out_pa))
    data = {"ranges": {"p_in_pa": list(ranges.p_in_pa), "t_in_k": list(ranges.t_in_k),
                       "p_out_pa": list(ranges.p_out_pa)},
            "complete": complete, "models": per_model,
            "worst": None if worst is None else {"t_out_k": worst[0], "p_in_pa": worst[1].p_in_pa,
                                                 "t_in_k": worst[1].t_in_k, "p_out_pa": worst[1].p_out_pa}}
    return (None if worst is None else worst[1]), data


def _worst_of(findings: list[tuple[Finding, float]], total: int) -> Finding | None:
    """The finding with the highest score; its message notes the other conditions that share the topic."""
    if not findings:
        return None
    findings.sort(key=lambda fs: -fs[1])
    top = findings[0][0]
    others = sorted({f.condition for f, _ in findings[1:] if f.condition and f.condition != top.condition})
    if not others:
        return top
    note = f" Worst of {len(findings)} of {total} conditions ({top.condition}); also: {', '.join(others)}."
    return Finding(top.topic, top.severity, top.message + note, top.numbers, top.basis, top.condition)


def _hazard_findings(fluid: Fluid, screens: list[ConditionScreen], options: ScreeningOptions) -> list[Finding]:
    out: list[Finding] = []
    dropout: list[tuple[Finding, float]] = []
    ice: list[tuple[Finding, float]] = []
    warm: list[tuple[Finding, float]] = []
    hyd: list[tuple[Any, str]] = []
    solids: list[tuple[Finding, float]] = []
    feed: list[tuple[Finding, float]] = []
    validity: dict[str, list[str]] = {}
    for cs in screens:
        name = cs.condition.name
        r = cs.results.get(fluid.eos.value)
        if r is None or not r.converged:
            continue
        if cs.solids is None:   # with dry ice, the fluid-only phase split is not the outlet state
            f = liquid_dropout(fluid, r, name)
            if f is not None:
                dropout.append((f, f.numbers.get("outlet_liquid_fraction") or f.numbers.get("path_max_liquid_fraction")
                                or 0.0))
        f = two_phase_inlet(fluid, r, name)
        if f is not None:
            feed.append((f, 1.0 - r.inlet_vapor_fraction))
        t_eff = cs.t_screen_k if cs.t_screen_k is not None else r.t_out
        f = icing(_with_t(r, t_eff), name)
        if f is not None:
            ice.append((f, -t_eff))
        f = inverse_joule_thomson(r, name)
        if f is not None:
            warm.append((f, r.t_out - r.t_in))
        if cs.solids is not None:
            s = cs.solids
            solids.append((Finding(
                Topic.CO2_SOLIDS, Severity.HAZARD,
                f"Dry ice forms: the outlet settles on the CO2 sublimation line at {T(s['t_out_k'])} "
                f"with {100 * (s['solid_fraction'] or 0):.1f} mol% solid CO2 "
                f"(the fluid-only EOS would report {T(r.t_out)}). Solid CO2 can block the outlet "
                "piping and relief or vent lines.",
                {"t_out_k": s["t_out_k"], "solid_fraction": s["solid_fraction"], "t_eos_k": r.t_out,
                 "p_out_pa": r.p_out}, str(s.get("method") or "energy balance on the CO2 sublimation line"),
                name), s["solid_fraction"] or 0.0))
        try:
            h = assess_hydrates(fluid, r.p_out, t_eff, water_present=options.water_saturated,
                                inhibitor=Inhibitor.parse(options.inhibitor), design_margin_k=options.limits.margin_k,
                                **hydrate_water_inputs(options, cs.condition))
        except InputError as exc:
            validity.setdefault(f"hydrate screen not possible: {exc.message}", []).append(name)
        else:
            hyd.append((h, name))
        for w in r.warnings:
            if not w.startswith(_COVERED_WARNINGS):
                validity.setdefault(w, []).append(name)
    n = len(screens)
    for group in (feed, solids, dropout, ice, warm):
        f = _worst_of(group, n)
        if f is not None:
            out.append(f)
    out += _hydrate_findings(hyd, options)
    for text, names in validity.items():
        where = "" if len(names) == n else f" ({', '.join(names)})"
        out.append(Finding(Topic.MODEL_VALIDITY, validity_severity(text), text + where, {}, "model validity"))
    return out


#: Words of a model-validity note that asks the engineer to act (a solid can form at the outlet, a model poor for
#: the fluid): such a note is a caution, not information.
_ACT_ON = ("can freeze", "can form", "caution", "poor")


def validity_severity(text: str) -> Severity:
    """Caution for a model-validity note that names a hazard or a model to distrust; information otherwise."""
    if any(c in text for c in _CAUTION_WARNINGS) or any(w in text.lower() for w in _ACT_ON):
        return Severity.CAUTION
    return Severity.INFORMATION


def _with_t(r: LetdownResult, t: float) -> LetdownResult:
    return r if t == r.t_out else replace(r, t_out=t)


def hydrate_water_inputs(options: ScreeningOptions, condition: Condition) -> dict[str, Any]:
    """The water inputs of :func:`assess_hydrates` for one condition: the case's water basis, content or dew
    point, the condition's inlet (saturated-at-inlet basis) and the mass flow (injection rate)."""
    return {"water_basis": options.water_basis, "p_in_pa": condition.p_in_pa, "t_in_k": condition.t_in_k,
            "water_content_mg_per_sm3": options.water_content_mg_per_sm3,
            "water_dew_point_k": options.water_dew_point_k, "mass_flow_kg_per_s": options.mass_flow_kg_per_s}


def _hydrate_findings(assessed: list[tuple[Any, str]], options: ScreeningOptions) -> list[Finding]:
    if not assessed:
        return []
    applying = [(h, n) for h, n in assessed if h.applies]
    if not applying:
        h = assessed[0][0]
        return [hydrate_not_applying(h.reason, h.water is not None)]
    hazards = [(h, n) for h, n in applying if h.screened and h.in_hydrate_region]
    unscreened = [(h, n) for h, n in applying if not h.screened]
    if hazards:
        h, name = max(hazards, key=lambda hn: hn[0].subcooling_k)
    elif unscreened:
        h, name = unscreened[0]
    else:
        h, name = max(applying, key=lambda hn: hn[0].subcooling_k)
    return [hydrate_finding(h, name, options.limits.margin_k)]


def hydrate_not_applying(reason: str, water_given: bool) -> Finding:
    """The hydrate finding of an outlet that is not a hydrate risk or not screened for lack of water."""
    if not water_given and reason.startswith("no water in the composition"):
        msg = "Not screened for hydrates: the fluid holds no water and the gas is not declared water-saturated."
    elif reason.startswith("the gas is declared free of water"):
        msg = "Not screened for hydrates: the gas is declared free of water."
    else:
        msg = f"Not a hydrate risk: {reason}."
    return Finding(Topic.HYDRATES, Severity.INFORMATION, msg, {}, METHOD)


def hydrate_finding(h: Any, name: str, margin_k: float) -> Finding:
    """The hydrate finding of one assessed outlet (:class:`HydrateAssessment` that applies): the same words on
    the scalar and the batch path."""
    numbers = {"t_hydrate_k": h.t_hydrate_k, "t_out_k": h.t_out_k, "subcooling_k": h.subcooling_k,
               "p_pa": h.p_pa, "structure": h.structure, "water_phase": h.water_phase, "method": h.method,
               "gas_gravity": h.gas_gravity, "katz_t_hydrate_k": h.katz_t_hydrate_k, "inhibitor": h.inhibitor,
               "inhibitor_weight_percent": h.inhibitor_weight_percent,
               "inhibitor_kg_per_kg_water": h.inhibitor_kg_per_kg_water,
               "model_weight_percent": h.model_weight_percent,
               "hammerschmidt_weight_percent": h.hammerschmidt_weight_percent,
               "injection_kg_per_s": h.injection_kg_per_s,
               "injection_to_water_kg_per_s": h.injection_to_water_kg_per_s,
               "injection_lost_to_gas_kg_per_s": h.injection_lost_to_gas_kg_per_s,
               "injection_lost_to_liquid_kg_per_s": h.injection_lost_to_liquid_kg_per_s,
               "dose_upper_bound": h.dose_upper_bound, "within_validity": h.within_validity,
               "water_basis": h.water.basis if h.water is not None else "free water assumed",
               "water_content_mg_per_sm3": h.water.content_mg_per_sm3 if h.water is not None else float("nan"),
               "water_dew_point_outlet_k": h.water.dew_point_outlet_k if h.water is not None else float("nan")}
    basis = "; ".join([h.validity_note, *h.notes])
    if not h.screened:
        return Finding(Topic.HYDRATES, Severity.CAUTION,
                       f"Not screened for hydrates: {h.reason.removeprefix('not screened for hydrates: ')}. The outlet "
                       f"({T(h.t_out_k)} at {P(h.p_pa)}) is not shown to be outside the "
                       "hydrate region.", numbers, basis, name)
    if h.in_hydrate_region:
        if math.isfinite(h.inhibitor_weight_percent):
            dose = (f"{h.inhibitor} at {h.inhibitor_weight_percent:.1f} wt% in the free water "
                    f"({h.inhibitor_kg_per_kg_water:.2f} kg per kg of water"
                    + (f"; injection {3600 * h.injection_kg_per_s:.3g} kg/h with the losses to the other phases"
                       if math.isfinite(h.injection_kg_per_s) else "")
                    + ") would suppress it with the margin"
                    + (f" (Hammerschmidt: {h.hammerschmidt_weight_percent:.1f} wt%)"
                       if math.isfinite(h.hammerschmidt_weight_percent) else "")
                    + ("; this is an upper bound, not a checked dose (beyond the range in which the water activity "
                       "is checked)" if h.dose_upper_bound else ""))
        else:
            why = h.dose_note.removeprefix("no dose can be given: ").split("; ")[0]
            dose = f"No {h.inhibitor} dose is given: {why}"
        msg = (f"Hydrates can form: the outlet ({T(h.t_out_k)}) is {DT(h.subcooling_k, 1)} inside the "
               f"hydrate region (hydrate temperature {T(h.t_hydrate_k)} at {P(h.p_pa)}, "
               f"structure {h.structure}, {h.method}). {dose}; or preheat.")
        sev = Severity.HAZARD
    else:
        msg, sev = hydrate_outside(h.t_out_k, h.t_hydrate_k, margin_k, True, "")
    numbers.update(hydrate_margin_numbers(margin_k))   # on every screened outlet, inside the region too
    return Finding(Topic.HYDRATES, sev, msg, numbers, basis, name)


def hydrate_margin_terms(margin_k: float) -> list[dict[str, Any]]:
    """The terms an outlet must clear above the hydrate temperature: the method's uncertainty and the
    case's entered margin [K] (``{"term", "k", "basis"}``, as :attr:`ColdLimits.margin_terms`)."""
    return [{"term": "hydrate method uncertainty", "k": METHOD_UNCERTAINTY_K, "basis": METHOD_UNCERTAINTY_BASIS},
            {"term": "entered margin", "k": float(margin_k),
             "basis": "the case's required margin (a case without its own takes its site's default margin)"}]


def hydrate_margin_numbers(margin_k: float) -> dict[str, Any]:
    """The hydrate finding's margin numbers: its terms and their total [K]."""
    terms = hydrate_margin_terms(margin_k)
    return {"hydrate_margin_k": sum(t["k"] for t in terms), "hydrate_margin_terms": terms}


def hydrate_outside(t_out_k: float, t_hydrate_k: float, margin_k: float, within_validity: bool,
                    validity: str) -> tuple[str, Severity]:
    """Message and severity of an outlet at or above the hydrate temperature: outside only at or above
    T_hydrate + method uncertainty + margin; between the two, a caution inside the hydrate margin."""
    terms = hydrate_margin_terms(margin_k)
    total = sum(t["k"] for t in terms)
    listing = " + ".join(f"{t['term']} {DT(t['k'], 2)}" for t in terms)
    warmer = t_out_k - t_hydrate_k
    where = (f"the outlet ({T(t_out_k)}) is {DT(warmer, 1)} warmer than the hydrate temperature "
             f"({T(t_hydrate_k)})")
    if warmer < total:
        return (f"Inside the hydrate margin: {where}, less than the {DT(total, 2)} margin ({listing}); outside it "
                f"needs at least {T(t_hydrate_k + total)}.{validity}", Severity.CAUTION)
    return (f"Outside the hydrate region: {where}, at least the {DT(total, 2)} margin ({listing}).{validity}",
            Severity.INFORMATION if within_validity else Severity.CAUTION)


def _model_spread(screens: list[ConditionScreen], models: list[Fluid]) -> Finding | None:
    if len(models) < 2:
        return None
    done = [cs for cs in screens if cs.converged]
    if not done:
        return None
    cs = min(done, key=lambda c: c.t_screen_k)
    temps = {eos: r.t_out for eos, r in cs.results.items() if r is not None and r.converged}
    spread = max(temps.values()) - min(temps.values())
    listing = ", ".join(f"{eos} {T(t)}" for eos, t in temps.items())
    if governs_alone(models[0]):
        return Finding(Topic.MODEL_SPREAD, Severity.INFORMATION,
                       f"Outlet by model at the coldest condition: {listing} (spread {DT(spread, 2)}); screened on "
                       f"{cs.governing_model}, the reference-grade model: the cubic models beside it err by kelvins "
                       "on high-pressure letdowns (most for hydrogen and helium), so their spread is shown and not "
                       "added to the margin.",
                       {"t_out_k_by_model": temps, "spread_k": spread, "governing_alone": True},
                       "GERG-2008 governs; PR and SRK beside it", cs.condition.name)
    sev = Severity.CAUTION if spread > MODEL_SPREAD_CAUTION_K else Severity.INFORMATION
    screened = f"screened on the colder ({cs.governing_model})"
    if cs.solids is not None:   # dry ice: the screened outlet is on the sublimation line, not either fluid-only value
        screened = (f"these are fluid-only values: with dry ice the screened outlet is {T(cs.t_screen_k)}, "
                    "on the CO2 sublimation line")
    return Finding(Topic.MODEL_SPREAD, sev,
                   f"Outlet by model at the coldest condition: {listing} (spread {DT(spread, 2)}); {screened}.",
                   {"t_out_k_by_model": temps, "spread_k": spread}, "PR and SRK side by side", cs.condition.name)


def _with_spread(limits: ColdLimits, spread: Finding | None) -> ColdLimits:
    """``limits`` with the model spread at the governing condition as a margin term (none with one model, and
    none when GERG-2008 governs alone: the cubic models' spread is their error, not its uncertainty)."""
    if spread is None or spread.numbers.get("governing_alone"):
        return limits
    return replace(limits, model_spread_k=float(spread.numbers["spread_k"]), spread_condition=spread.condition)


def _answers(models: list[Fluid], screens: list[ConditionScreen], options: ScreeningOptions,
             outcome: Outcome) -> dict[str, Any]:
    target = options.limits.target_k
    if target is None or outcome not in (Outcome.FAIL, Outcome.MARGIN_ERODED):
        return {}
    preheats, limits = [], []
    for cs in screens:
        c = cs.condition
        for fl in models:
            try:
                ph = required_preheat(fl, c.p_in_pa, c.t_in_k, c.p_out_pa, target, options.mass_flow_kg_per_s)
                ol = outlet_pressure_limit(fl, c.p_in_pa, c.t_in_k, target)
            except JtcheckError as exc:
                preheats.append({"condition": c.name, "model": fl.eos.value, "converged": False,
                                 "message": str(exc)})
                limits.append({"condition": c.name, "model": fl.eos.value, "converged": False,
                               "message": str(exc)})
                continue
            preheats.append({"condition": c.name, "model": fl.eos.value, **ph.to_dict()})
            limits.append({"condition": c.name, "model": fl.eos.value, **ol.to_dict()})
    ok_ph = [p for p in preheats if p.get("converged")]
    ok_ol = [o for o in limits if o.get("converged")]
    preheat = {"target_k": target, "all_converged": len(ok_ph) == len(preheats), "cases": preheats,
               "governing": max(ok_ph, key=lambda p: p.get("temperature_rise_k") or 0.0) if ok_ph else None}
    bound = [o for o in ok_ol if o.get("p_out_min_pa") is not None]
    pressure = {"target_k": target, "all_converged": len(ok_ol) == len(limits), "cases": limits,
                "governing": max(bound, key=lambda o: o["p_out_min_pa"]) if bound else None}
    return {"preheat": preheat, "outlet_pressure_limit": pressure}


def _hydrate_preheat(models: list[Fluid], screens: list[ConditionScreen], findings: list[Finding],
                     options: ScreeningOptions) -> dict[str, Any] | None:
    """The preheat that takes the outlet out of the hydrate region with the hydrate margin, at the condition of the
    hydrate hazard (None without one): the same shape as the cold-metal preheat, with ``"hazard": "hydrates"``.

    The target is the hydrate temperature at the outlet pressure plus the hydrate margin (the finding's numbers);
    each model's required inlet temperature is found as for the cold limit (:func:`required_preheat`)."""
    hazard = next((f for f in findings if f.topic is Topic.HYDRATES and f.severity is Severity.HAZARD
                   and f.numbers.get("t_hydrate_k") is not None), None)
    if hazard is None:
        return None
    cs = next((c for c in screens if c.condition.name == hazard.condition), None)
    if cs is None:
        return None
    target = float(hazard.numbers["t_hydrate_k"]) + float(hazard.numbers.get("hydrate_margin_k") or 0.0)
    c, cases = cs.condition, []
    for fl in models:
        try:
            ph = required_preheat(fl, c.p_in_pa, c.t_in_k, c.p_out_pa, target, options.mass_flow_kg_per_s)
        except JtcheckError as exc:
            cases.append({"condition": c.name, "model": fl.eos.value, "converged": False, "message": str(exc)})
            continue
        cases.append({"condition": c.name, "model": fl.eos.value, **ph.to_dict()})
    ok = [p for p in cases if p.get("converged")]
    return {"hazard": "hydrates", "target_k": target, "all_converged": len(ok) == len(cases), "cases": cases,
            "governing": max(ok, key=lambda p: p.get("temperature_rise_k") or 0.0) if ok else None}


#: What each answer keeps the outlet above, in words.
_COVERED = {"preheat": "the cold limit plus margin (cold metal)",
            "hydrate_preheat": "the hydrate temperature plus the hydrate margin (hydrates)"}


def remedies_cover(answers: Mapping[str, Any], findings: Sequence[Finding]) -> str:
    """Which hazards the answers cover, in words, naming the hazards found that they do not cover ("" when there
    are no answers)."""
    given = [k for k in _COVERED if answers.get(k)]
    if not given:
        return ""
    covered = {"preheat": {Topic.COLD_METAL}, "hydrate_preheat": {Topic.HYDRATES}}
    topics = set().union(*(covered[k] for k in given))
    if answers.get("preheat"):
        topics.add(Topic.CONVERGENCE)
    others = sorted({f.topic.value for f in findings if f.severity is Severity.HAZARD and f.topic not in topics})
    text = "The answers keep the outlet above " + " and above ".join(_COVERED[k] for k in given) + "."
    if answers.get("preheat") and answers.get("hydrate_preheat"):
        text += " Both hold at the higher of the two preheats."
    if others:
        text += f" They do not cover {', '.join(others)}: see those findings."
    return text


def screen_letdown(fluid: Fluid, conditions: Sequence[Condition], options: ScreeningOptions) -> Screening:
    """Screen a case's credible conditions; see the module text for the steps.

    Parameters
    ----------
    fluid : Fluid
        The case's fluid with its chosen EOS.
    conditions : sequence of Condition
        At least one credible condition (pressures [Pa] absolute, temperatures [K]).
    options : ScreeningOptions

    Returns
    -------
    Screening
        Outcome, findings and answers.  A condition that did not converge makes the outcome
        "not screened" (never "pass").

    Raises
    ------
    jtcheck.errors.InputError
        On GERG-2008, for a condition whose inlet lies outside its extended range (60-700 K, up to 70 MPa).
    """
    if not isinstance(fluid, Fluid):
        raise InputError("fluid", f"expected a jtcheck Fluid, got {type(fluid).__name__}")
    if not conditions:
        raise InputError("conditions", "at least one credible condition is needed")
    for c in conditions:   # GERG-2008: an inlet outside its extended range is refused, naming the condition
        fluid.check_state(c.t_in_k, c.p_in_pa, f"inlet of the {c.name} condition", "t_in")
    models = model_fluids(fluid, options.compare_models)
    conds = list(conditions)
    sweep_data: dict[str, Any] | None = None
    if options.ranges is not None and options.ranges.varies:
        worst, sweep_data = _sweep(models, options.ranges)
        if worst is not None:
            conds.append(worst)
    screens = [_screen_condition(models, c) for c in conds]
    spread = _model_spread(screens, models)
    limits = _with_spread(options.limits, spread)
    options = replace(options, limits=limits)   # the bands, answers and relief limits use the total margin
    outcome, cold = screen_cold_metal([(cs.condition.name, cs.t_screen_k) for cs in screens], limits)
    if sweep_data is not None and not sweep_data["complete"] and outcome is not Outcome.FAIL:
        outcome = Outcome.NOT_SCREENED
        cold = Finding(cold.topic, Severity.HAZARD, cold.message + " The operating sweep is incomplete (points "
                       "did not converge): not screened.", cold.numbers, cold.basis, cold.condition)
    findings = [cold]
    for cs in screens:
        if not cs.converged:
            findings.append(Finding(Topic.CONVERGENCE, Severity.HAZARD, f"{cs.condition.name}: {cs.message}",
                                    {}, "flash convergence", cs.condition.name))
    findings += _hazard_findings(fluid, screens, options)
    if spread is not None:
        findings.append(spread)
    relief_data: dict[str, Any] | None = None
    if options.relief is not None:
        relief_data, rf, relief_outcome = screen_relief(models, options.relief, options.limits)
        findings += rf
        outcome = worst_outcome(outcome, relief_outcome)
    answers: dict[str, Any] = {}
    if options.answers and options.remedies == "relief":
        if outcome in (Outcome.FAIL, Outcome.MARGIN_ERODED):
            t_min = min((cs.t_screen_k for cs in screens if cs.converged), default=None)
            answers["relief_remedies"] = relief_remedies(models, options.relief, options.limits, relief_data, t_min)
    elif options.answers:
        answers = _answers(models, screens, options, outcome)
        hydrate = _hydrate_preheat(models, screens, findings, options)
        if hydrate is not None:
            answers["hydrate_preheat"] = hydrate
        cover = remedies_cover(answers, findings)
        if cover:
            answers["remedies_cover"] = cover
    if sweep_data is not None:
        answers["sweep"] = sweep_data
    if relief_data is not None:
        answers["relief_valve"] = relief_data
    done = [cs for cs in screens if cs.converged]
    coldest = min(done, key=lambda c: c.t_screen_k) if done else None
    return Screening(outcome=outcome, limits=options.limits,
                     t_out_min_k=None if coldest is None else coldest.t_screen_k,
                     coldest_condition="" if coldest is None else coldest.condition.name,
                     models=tuple(f.eos.value for f in models), conditions=tuple(screens),
                     findings=tuple(sort_findings(findings)), answers=plain(answers))
