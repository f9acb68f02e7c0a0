"""A stored result as pages and the API show it: each condition in SI and in the case's units, with margins,
the screening outcome, its findings and its answers.

Everything is read from the stored :class:`~jtcheck.records.models.CaseResult` (its results, its screening
and the inputs it was computed from), never recomputed.

Limits.  The governing cold limit is the warmer of the MDMT and the cold limit entered on the case; the
target is governing limit + required margin (:class:`jtcheck.screening.cold_metal.ColdLimits`).  A result
with a stored screening carries them; for a result stored before the screening existed they are worked
out the same way from the stored inputs.

Bands.  Each condition is judged on its screened outlet temperature (``t_screen_k``: the colder of PR and
SRK, corrected for CO2 solids; the case model's outlet for old results): fail below the governing limit,
margin eroded from the limit up to the target, pass at or above the target, not screened when it did not
converge or no limit is given.  Margins are differences of stored numbers: margin to the cold limit =
screened outlet - governing limit, margin to the MDMT = screened outlet - MDMT.

Outcome.  The outcome of a result is the stored screening's.  A result stored before the screening has no
outcome: it shows as "not screened" (fail closed), with a note to compute again.
"""
from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any

from jtcheck.errors import InputError
from jtcheck.notices import CAUTION
from jtcheck.records.models import CaseResult
from jtcheck.screening.cold_metal import ColdLimits
from jtcheck.screening.findings import Outcome
from jtcheck.units import P_ATM_DEFAULT_PA, pressure_from_pa, temperature_difference_from_k, temperature_from_k
from jtcheck.web.quantities import pressure_difference_from_pa

#: The outcomes of a screening, best first, and the word for a case never computed.
OUTCOMES: tuple[str, ...] = tuple(o.value for o in Outcome)
NOT_COMPUTED = "not computed"
#: Outcome words for badges (upper case) and filters.
OUTCOME_LABELS = {Outcome.PASS.value: "PASS", Outcome.MARGIN_ERODED.value: "MARGIN ERODED",
                  Outcome.FAIL.value: "FAIL", Outcome.NOT_SCREENED.value: "NOT SCREENED",
                  NOT_COMPUTED: "NOT COMPUTED"}

#: Standing of one condition against the limits.
STANDING_PASS = "pass: at or above the cold limit plus the required margin"
STANDING_MARGIN_ERODED = "margin eroded: above the cold limit but inside the required margin"
STANDING_FAIL = "fail: colder than the cold limit"
NOT_SCREENED = "not screened: the calculation did not converge"
NO_LIMIT = "not screened: no cold limit or MDMT given"
LEGACY_NOTE = ("This result was stored before the hazard screening existed: it has no outcome, findings or "
               "answers and counts as not screened. Compute again to screen it.")

_SEVERITY_ORDER = {"hazard": 0, "caution": 1, "information": 2}
_DIMENSIONS = {"p_in_pa": "Inlet pressure", "t_in_k": "Inlet temperature", "p_out_pa": "Outlet pressure"}


@dataclass(frozen=True)
class Limits:
    """The temperature limits a result was screened against [K].

    ``governing_k`` is the warmer of the MDMT and the entered cold limit; ``target_k`` = governing + margin.
    """

    mdmt_k: float | None
    mdmt_source: str
    user_limit_k: float | None
    margin_k: float
    governing_k: float | None
    target_k: float | None
    basis: str
    from_screening: bool = True

    @property
    def cold_limit_k(self) -> float | None:
        """The governing cold limit [K] (the name the pages and the API used before the screening)."""
        return self.governing_k

    @property
    def cold_limit_basis(self) -> str:
        return self.basis


@dataclass(frozen=True)
class Units:
    """The units a case was entered in (for showing its results)."""

    temperature: str = "degC"
    inlet_pressure: str = "barg"
    outlet_pressure: str = "barg"
    p_atm_pa: float = P_ATM_DEFAULT_PA
    shown: Mapping[str, str] = field(default_factory=dict, compare=False)

    @property
    def difference(self) -> str:
        return "degF" if self.temperature.lower() in ("degf", "f") else "K"

    def t(self, k: float | None) -> float | None:
        return None if k is None else temperature_from_k(k, self.temperature)

    def dt(self, dk: float | None) -> float | None:
        return None if dk is None else temperature_difference_from_k(dk, self.difference)

    def p_in(self, pa: float | None) -> float | None:
        return None if pa is None else pressure_from_pa(pa, self.inlet_pressure, self.p_atm_pa)

    def p_out(self, pa: float | None) -> float | None:
        return None if pa is None else pressure_from_pa(pa, self.outlet_pressure, self.p_atm_pa)

    def pressure_unit(self, name: str) -> str:
        """The unit the pressure field ``name`` was entered in (else the inlet pressure's)."""
        return self.shown.get(name) or self.inlet_pressure

    def p(self, pa: float | None, name: str) -> float | None:
        """Absolute pressure [Pa] in the unit of the pressure field ``name``."""
        return None if pa is None else pressure_from_pa(pa, self.pressure_unit(name), self.p_atm_pa)

    @property
    def dp_unit(self) -> str:
        return self.shown.get("built_up_back_pressure") or "bar"

    def dp(self, dpa: float | None) -> float | None:
        """A pressure difference [Pa] in the unit the built-up back pressure was entered in."""
        return None if dpa is None else pressure_difference_from_pa(dpa, self.dp_unit)


@dataclass(frozen=True)
class ConditionView:
    """One computed condition of a result, SI values [Pa, K]."""

    name: str
    converged: bool
    message: str
    p_in_pa: float | None
    t_in_k: float | None
    p_out_pa: float | None
    t_out_k: float | None
    dt_k: float | None
    inlet_phase: str
    phase: str
    inlet_vapor_fraction: float | None
    vapor_fraction: float | None
    warnings: tuple[str, ...] = field(default=())
    margin_to_cold_limit_k: float | None = None
    margin_to_mdmt_k: float | None = None
    standing: str = NO_LIMIT
    band: str = Outcome.NOT_SCREENED.value
    t_screen_k: float | None = None
    governing_model: str = ""
    t_out_by_model: Mapping[str, float | None] = field(default_factory=dict)
    solids: Mapping[str, Any] | None = None
    margin_to_target_k: float | None = None

    @property
    def drop_k(self) -> float | None:
        """Temperature drop across the letdown, inlet - outlet [K] (positive when the fluid cools)."""
        return None if self.dt_k is None else -self.dt_k

    @property
    def model_spread_k(self) -> float | None:
        """Warmest minus coldest outlet over the models [K] (None with fewer than two converged)."""
        temps = [t for t in self.t_out_by_model.values() if t is not None]
        return max(temps) - min(temps) if len(temps) >= 2 else None


def units_of(result: CaseResult) -> Units:
    values = (result.inputs or {}).get("case_values") or {}
    shown = dict(values.get("display_units") or {})
    return Units(temperature=shown.get("inlet_temperature") or "degC",
                 inlet_pressure=shown.get("inlet_pressure") or "barg",
                 outlet_pressure=shown.get("outlet_pressure") or shown.get("inlet_pressure") or "barg",
                 p_atm_pa=float(values.get("p_atm_pa") or P_ATM_DEFAULT_PA), shown=shown)


def _num(value: Any) -> float | None:
    if value is None or isinstance(value, bool):
        return None
    try:
        v = float(value)
    except (TypeError, ValueError):
        return None
    return v if math.isfinite(v) else None


def limits_of(result: CaseResult) -> Limits:
    """The limits of the stored screening, or (older results) the same rule applied to the stored inputs."""
    stored = (result.screening or {}).get("limits") if isinstance(result.screening, Mapping) else None
    if isinstance(stored, Mapping):
        return Limits(mdmt_k=_num(stored.get("mdmt_k")), mdmt_source=str(stored.get("mdmt_source") or ""),
                      user_limit_k=_num(stored.get("user_limit_k")), margin_k=_num(stored.get("margin_k")) or 0.0,
                      governing_k=_num(stored.get("governing_k")), target_k=_num(stored.get("target_k")),
                      basis=str(stored.get("basis") or ""))
    values = (result.inputs or {}).get("case_values") or {}
    mdmt, user = _num(values.get("mdmt_k")), _num(values.get("cold_limit_k"))
    margin = _num(values.get("margin_k")) or 0.0
    source = str(values.get("mdmt_source") or "")
    try:
        cl = ColdLimits(mdmt_k=mdmt, user_limit_k=user, margin_k=margin, mdmt_source=source)
        governing, target, basis = cl.governing_k, cl.target_k, cl.basis
    except InputError:   # numbers outside today's ranges: the same rule, by hand
        given = [v for v in (mdmt, user) if v is not None]
        governing = max(given) if given else None
        target = None if governing is None else governing + margin
        basis = "warmer of the MDMT and the cold limit" if given else "no limit given"
    return Limits(mdmt_k=mdmt, mdmt_source=source, user_limit_k=user, margin_k=margin, governing_k=governing,
                  target_k=target, basis=basis, from_screening=False)


def band_of(t_k: float | None, limits: Limits, converged: bool = True) -> str:
    """The outcome band of one screened outlet temperature [K] (fail closed)."""
    if not converged or t_k is None or limits.governing_k is None:
        return Outcome.NOT_SCREENED.value
    if t_k < limits.governing_k:
        return Outcome.FAIL.value
    if t_k < (limits.target_k if limits.target_k is not None else limits.governing_k):
        return Outcome.MARGIN_ERODED.value
    return Outcome.PASS.value


def _standing(band: str, converged: bool) -> str:
    if not converged:
        return NOT_SCREENED
    return {Outcome.PASS.value: STANDING_PASS, Outcome.MARGIN_ERODED.value: STANDING_MARGIN_ERODED,
            Outcome.FAIL.value: STANDING_FAIL}.get(band, NO_LIMIT)


def conditions_of(result: CaseResult) -> list[ConditionView]:
    limits = limits_of(result)
    out = []
    for entry in result.results or []:
        converged = bool(entry.get("converged")) and entry.get("t_out") is not None
        t_out = _num(entry.get("t_out")) if converged else None
        if "t_screen_k" in entry:      # screened: the colder model, CO2 solids included
            t_screen = _num(entry.get("t_screen_k")) if converged else None
            converged = converged and t_screen is not None
        else:                          # stored before the screening: the case model's outlet
            t_screen = t_out
        by_model = {str(m): _num(t) for m, t in (entry.get("t_out_by_model") or {}).items()}
        if not by_model and result.eos:
            by_model = {str(result.eos): t_out}
        to_cold = None if t_screen is None or limits.governing_k is None else t_screen - limits.governing_k
        to_target = None if t_screen is None or limits.target_k is None else t_screen - limits.target_k
        to_mdmt = None if t_screen is None or limits.mdmt_k is None else t_screen - limits.mdmt_k
        band = band_of(t_screen, limits, converged)
        solids = entry.get("solids")
        out.append(ConditionView(
            name=str(entry.get("condition", "")), converged=converged, message=str(entry.get("message") or ""),
            p_in_pa=_num(entry.get("p_in")), t_in_k=_num(entry.get("t_in")), p_out_pa=_num(entry.get("p_out")),
            t_out_k=t_out, dt_k=_num(entry.get("dt")) if t_out is not None else None,
            inlet_phase=str(entry.get("inlet_phase") or "unknown"), phase=str(entry.get("phase") or "unknown"),
            inlet_vapor_fraction=_num(entry.get("inlet_vapor_fraction")),
            vapor_fraction=_num(entry.get("vapor_fraction")) if t_out is not None else None,
            warnings=tuple(entry.get("warnings") or ()), margin_to_cold_limit_k=to_cold, margin_to_mdmt_k=to_mdmt,
            standing=_standing(band, converged), band=band, t_screen_k=t_screen,
            governing_model=str(entry.get("governing_model") or ""), t_out_by_model=by_model,
            solids=solids if isinstance(solids, Mapping) else None, margin_to_target_k=to_target))
    return out


def outcome_of(result: CaseResult | None) -> str:
    """The outcome of a stored result: the screening's; "not screened" for one stored before the screening."""
    if result is None:
        return NOT_COMPUTED
    if result.screening is not None and result.outcome in OUTCOMES:
        return str(result.outcome)
    return Outcome.NOT_SCREENED.value


def outcome_sentence(outcome: str) -> str:
    if outcome == NOT_COMPUTED:
        return "Not computed yet: nothing is known about the outlet temperature."
    try:
        return Outcome(outcome).sentence
    except ValueError:
        return Outcome.NOT_SCREENED.sentence


def basis_of(result: CaseResult) -> dict[str, Any]:
    """The model basis of a result: EOS, kij set, data and software versions."""
    stored = (result.inputs or {}).get("basis") or {}
    return {"eos": result.eos, "eos_name": stored.get("eos_name"), "eos_reference": stored.get("eos_reference"),
            "kij_basis": result.kij_basis, "kij_defaulted_pairs": stored.get("kij_defaulted_pairs") or [],
            "volume_translation": stored.get("volume_translation"),
            "component_data_version": result.component_data_version, "kij_data_version": result.kij_data_version,
            "software_version": result.software_version}


# -- display values ------------------------------------------------------------------------------------
def _dv(value: float | None, unit: str) -> dict[str, Any]:
    return {"value": value, "unit": unit}


def _T(units: Units, k: Any) -> dict[str, Any]:
    return _dv(units.t(_num(k)), units.temperature)


def _DT(units: Units, dk: Any) -> dict[str, Any]:
    return _dv(units.dt(_num(dk)), units.difference)


def _P(units: Units, pa: Any, name: str) -> dict[str, Any]:
    return _dv(units.p(_num(pa), name), units.pressure_unit(name))


def _dim(units: Units, dim: str, value: Any) -> dict[str, Any]:
    """A sweep axis value in the case's units."""
    if dim == "t_in_k":
        return _T(units, value)
    return _P(units, value, "inlet_pressure" if dim == "p_in_pa" else "outlet_pressure")


def _display(units: Units, c: ConditionView) -> dict[str, Any]:
    return {"p_in": {"value": units.p_in(c.p_in_pa), "unit": units.inlet_pressure},
            "t_in": {"value": units.t(c.t_in_k), "unit": units.temperature},
            "p_out": {"value": units.p_out(c.p_out_pa), "unit": units.outlet_pressure},
            "t_out": {"value": units.t(c.t_out_k), "unit": units.temperature},
            "t_screen": {"value": units.t(c.t_screen_k), "unit": units.temperature},
            "temperature_drop": {"value": units.dt(c.drop_k), "unit": units.difference},
            "margin_to_cold_limit": {"value": units.dt(c.margin_to_cold_limit_k), "unit": units.difference},
            "margin_to_mdmt": {"value": units.dt(c.margin_to_mdmt_k), "unit": units.difference}}


# -- the screening for pages -----------------------------------------------------------------------------
@dataclass(frozen=True)
class ScreeningView:
    """The screening of a result for templates: numbers in the case's units (floats) with their unit words.

    ``preheat``, ``outlet_limit``, ``sweep`` and ``relief`` are None when the screening has no such answer.
    """

    outcome: str
    label: str
    sentence: str
    legacy: bool
    limits: Limits
    t_out_min: dict[str, Any]
    coldest_condition: str
    models: tuple[str, ...]
    findings: tuple[dict[str, Any], ...]
    preheat: dict[str, Any] | None
    outlet_limit: dict[str, Any] | None
    sweep: dict[str, Any] | None
    relief: dict[str, Any] | None
    display: dict[str, Any]

    @property
    def slug(self) -> str:
        return outcome_slug(self.outcome)


def outcome_slug(outcome: str | None) -> str:
    """CSS-safe name of an outcome (``"margin eroded"`` -> ``"margin-eroded"``)."""
    return str(outcome or Outcome.NOT_SCREENED.value).replace(" ", "-")


def _findings(stored: Mapping[str, Any]) -> tuple[dict[str, Any], ...]:
    out = []
    for f in stored.get("findings") or ():
        if not isinstance(f, Mapping):
            continue
        out.append({"severity": str(f.get("severity") or "information"), "topic": str(f.get("topic") or ""),
                    "message": str(f.get("message") or ""), "basis": str(f.get("basis") or ""),
                    "condition": str(f.get("condition") or ""), "numbers": dict(f.get("numbers") or {})})
    out.sort(key=lambda f: _SEVERITY_ORDER.get(f["severity"], 3))   # stable: hazards first
    return tuple(out)


def _preheat_row(units: Units, p: Mapping[str, Any]) -> dict[str, Any]:
    duty = _num(p.get("duty_w"))
    return {"condition": str(p.get("condition") or ""), "model": str(p.get("model") or ""),
            "converged": bool(p.get("converged")), "needed": bool(p.get("needed")),
            "t_in": _T(units, p.get("t_in_k")), "t_in_required": _T(units, p.get("t_in_required_k")),
            "rise": _DT(units, p.get("temperature_rise_k")), "duty_kw": None if duty is None else duty / 1e3,
            "message": str(p.get("message") or "")}


def _preheat(units: Units, ph: Any) -> dict[str, Any] | None:
    if not isinstance(ph, Mapping):
        return None
    rows = [_preheat_row(units, p) for p in ph.get("cases") or () if isinstance(p, Mapping)]
    gov = ph.get("governing")
    return {"target": _T(units, ph.get("target_k")), "all_converged": bool(ph.get("all_converged")),
            "governing": _preheat_row(units, gov) if isinstance(gov, Mapping) else None, "rows": rows,
            "mass_flow_given": any(r["duty_kw"] is not None for r in rows)}


def _limit_row(units: Units, o: Mapping[str, Any]) -> dict[str, Any]:
    return {"condition": str(o.get("condition") or ""), "model": str(o.get("model") or ""),
            "converged": bool(o.get("converged")), "limited": bool(o.get("limited")),
            "inlet_too_cold": bool(o.get("inlet_too_cold")),
            "p_out_min": _P(units, o.get("p_out_min_pa"), "outlet_pressure"),
            "p_in": _P(units, o.get("p_in_pa"), "inlet_pressure"), "t_in": _T(units, o.get("t_in_k")),
            "t_out_at_floor": _T(units, o.get("t_out_at_floor_k")), "message": str(o.get("message") or "")}


def _outlet_limit(units: Units, ol: Any) -> dict[str, Any] | None:
    if not isinstance(ol, Mapping):
        return None
    rows = [_limit_row(units, o) for o in ol.get("cases") or () if isinstance(o, Mapping)]
    gov = ol.get("governing")
    return {"target": _T(units, ol.get("target_k")), "all_converged": bool(ol.get("all_converged")),
            "governing": _limit_row(units, gov) if isinstance(gov, Mapping) else None, "rows": rows,
            "inlet_too_cold": [r for r in rows if r["inlet_too_cold"]]}


def _sweep(units: Units, sw: Any, limits: Limits) -> dict[str, Any] | None:
    if not isinstance(sw, Mapping):
        return None
    worst = sw.get("worst") if isinstance(sw.get("worst"), Mapping) else None
    models = {str(m): d for m, d in (sw.get("models") or {}).items() if isinstance(d, Mapping)}
    gov_model = None
    if worst is not None:
        t_worst = _num(worst.get("t_out_k"))
        for m, d in models.items():
            if _num(d.get("worst_t_out_k")) == t_worst:
                gov_model = m
                break
    per_model = []
    for m, d in models.items():
        per_model.append({"model": m, "converged": bool(d.get("converged", True)),
                          "complete": bool(d.get("complete")), "worst_t_out": _T(units, d.get("worst_t_out_k")),
                          "interior": bool(d.get("worst_is_interior")),
                          "interior_dimensions": [_DIMENSIONS.get(x, x).lower()
                                                  for x in d.get("interior_dimensions") or ()],
                          "n_points": d.get("n_points"), "n_not_converged": d.get("n_not_converged"),
                          "n_skipped": d.get("n_skipped"), "message": str(d.get("message") or "")})
    table = None
    source = models.get(gov_model or "") or next(iter(models.values()), None)
    raw = source.get("table") if source is not None else None
    if isinstance(raw, Mapping) and raw.get("row_values") and raw.get("column_values"):
        rdim, cdim = str(raw.get("row_dimension")), str(raw.get("column_dimension"))
        rows = []
        for value, temps in zip(raw.get("row_values") or (), raw.get("t_out_k") or (), strict=False):
            cells = []
            for t in temps:
                tk = _num(t)
                cells.append({"t_out": _T(units, tk), "band": band_of(tk, limits, tk is not None)})
            rows.append({"axis": _dim(units, rdim, value), "cells": cells})
        table = {"model": gov_model or "", "row_dimension": _DIMENSIONS.get(rdim, rdim),
                 "column_dimension": _DIMENSIONS.get(cdim, cdim),
                 "row_kind": "temperature" if rdim == "t_in_k" else "pressure",
                 "column_kind": "temperature" if cdim == "t_in_k" else "pressure",
                 "columns": [_dim(units, cdim, v) for v in raw.get("column_values") or ()], "rows": rows,
                 "fixed_dimension": _DIMENSIONS.get(str(raw.get("fixed_dimension")), str(raw.get("fixed_dimension"))),
                 "fixed": _dim(units, str(raw.get("fixed_dimension")), raw.get("fixed_value")),
                 "fixed_kind": "temperature" if raw.get("fixed_dimension") == "t_in_k" else "pressure"}
    gov = next((p for p in per_model if p["model"] == gov_model), None)
    ranges = sw.get("ranges") or {}
    return {"complete": bool(sw.get("complete")), "governing_model": gov_model or "",
            "worst": None if worst is None else {
                "t_out": _T(units, worst.get("t_out_k")), "p_in": _P(units, worst.get("p_in_pa"), "inlet_pressure"),
                "t_in": _T(units, worst.get("t_in_k")), "p_out": _P(units, worst.get("p_out_pa"), "outlet_pressure"),
                "band": band_of(_num(worst.get("t_out_k")), limits, True)},
            "interior": bool(gov and gov["interior"]), "interior_dimensions": gov["interior_dimensions"] if gov else [],
            "models": per_model, "table": table,
            "ranges": {"p_in": [_P(units, v, "inlet_pressure") for v in ranges.get("p_in_pa") or ()],
                       "t_in": [_T(units, v) for v in ranges.get("t_in_k") or ()],
                       "p_out": [_P(units, v, "outlet_pressure") for v in ranges.get("p_out_pa") or ()]}}


def _relief(units: Units, rv: Any) -> dict[str, Any] | None:
    if not isinstance(rv, Mapping):
        return None
    models = {str(m): d for m, d in (rv.get("models") or {}).items() if isinstance(d, Mapping)}
    per_model = []
    for m, d in models.items():
        nz = d.get("nozzle") if isinstance(d.get("nozzle"), Mapping) else {}
        per_model.append({"model": m, "converged": bool(d.get("converged")), "choked": nz.get("choked"),
                          "critical_pressure_ratio": _num(nz.get("critical_pressure_ratio")),
                          "ideal_critical_pressure_ratio": _num(nz.get("ideal_critical_pressure_ratio")),
                          "t_throat": _T(units, d.get("t_throat_k")),
                          "t_downstream": _T(units, d.get("t_downstream_k")),
                          "message": str(d.get("message") or "")})
    gm = rv.get("governing_model")
    d = models.get(str(gm)) if gm else None
    out: dict[str, Any] = {"governing_model": str(gm or ""), "models": per_model, "converged": d is not None}
    if d is None:
        return out
    nz = d.get("nozzle") if isinstance(d.get("nozzle"), Mapping) else {}
    out.update({
        "p_set": _P(units, d.get("set_pressure_pa"), "set_pressure"),
        "overpressure_percent": None if _num(d.get("overpressure_fraction")) is None
        else 100.0 * _num(d.get("overpressure_fraction")),
        "p_relieving": _P(units, d.get("p_relieving_pa"), "set_pressure"),
        "t_relieving": _T(units, d.get("t_relieving_k")),
        "p_superimposed": _P(units, d.get("superimposed_back_pressure_pa"), "superimposed_back_pressure"),
        "dp_built_up": _dv(units.dp(_num(d.get("built_up_back_pressure_pa"))), units.dp_unit),
        "p_back": _P(units, d.get("p_back_pa"), "superimposed_back_pressure"),
        "choked": nz.get("choked"),
        "critical_pressure_ratio": _num(nz.get("critical_pressure_ratio")),
        "ideal_critical_pressure_ratio": _num(nz.get("ideal_critical_pressure_ratio")),
        "isentropic_exponent": _num(nz.get("isentropic_exponent")),
        "p_throat": _P(units, nz.get("p_throat_pa"), "set_pressure"),
        "t_throat": _T(units, d.get("t_throat_k")), "throat_phase": str(nz.get("throat_phase") or ""),
        "t_downstream": _T(units, d.get("t_downstream_k")),
        "downstream_phase": str(d.get("downstream_phase") or ""),
        "outlet_limit": _T(units, d.get("outlet_limit_k")), "outlet_margin": _DT(units, d.get("outlet_margin_k")),
        "below_outlet_limit": d.get("below_outlet_limit"),
        "header_limit": _T(units, d.get("header_limit_k")), "header_margin": _DT(units, d.get("header_margin_k")),
        "below_header_limit": d.get("below_header_limit"),
        "message": str(d.get("message") or ""), "warnings": [str(w) for w in d.get("warnings") or ()]})
    return out


def _main_display(units: Units, limits: Limits, t_out_min_k: float | None, preheat, outlet_limit, sweep,
                  relief) -> dict[str, Any]:
    """The main numbers of a screening in the case's units (value None where there is none)."""
    gov_ph = (preheat or {}).get("governing") or {}
    gov_ol = (outlet_limit or {}).get("governing") or {}
    worst = (sweep or {}).get("worst")
    return {
        "t_out_min": _T(units, t_out_min_k),
        "governing_limit": _T(units, limits.governing_k),
        "target": _T(units, limits.target_k),
        "margin": _DT(units, limits.margin_k),
        "mdmt": _T(units, limits.mdmt_k),
        "preheat_t_in_required": gov_ph.get("t_in_required") or _T(units, None),
        "preheat_temperature_rise": gov_ph.get("rise") or _DT(units, None),
        "preheat_duty": _dv(gov_ph.get("duty_kw"), "kW"),
        "outlet_pressure_limit": gov_ol.get("p_out_min") or _P(units, None, "outlet_pressure"),
        "sweep_worst": None if worst is None else {k: worst[k] for k in ("t_out", "p_in", "t_in", "p_out")},
        "relief_t_downstream": (relief or {}).get("t_downstream") or _T(units, None),
    }


def screening_view(result: CaseResult) -> ScreeningView:
    """Outcome, findings and answers of a stored result, in the case's units, for templates and the API."""
    units = units_of(result)
    limits = limits_of(result)
    stored = result.screening if isinstance(result.screening, Mapping) else None
    outcome = outcome_of(result)
    legacy = stored is None
    answers = (stored or {}).get("answers") or {}
    if stored is not None:
        t_min = _num(stored.get("t_out_min_k"))
        coldest = str(stored.get("coldest_condition") or "")
        models = tuple(str(m) for m in stored.get("models") or ())
    else:
        done = [c for c in conditions_of(result) if c.t_screen_k is not None]
        c_min = min(done, key=lambda c: c.t_screen_k) if done else None
        t_min, coldest = (None, "") if c_min is None else (c_min.t_screen_k, c_min.name)
        models = (str(result.eos),) if result.eos else ()
    preheat = _preheat(units, answers.get("preheat"))
    outlet_limit = _outlet_limit(units, answers.get("outlet_pressure_limit"))
    sweep = _sweep(units, answers.get("sweep"), limits)
    relief = _relief(units, answers.get("relief_valve"))
    return ScreeningView(
        outcome=outcome, label=OUTCOME_LABELS.get(outcome, outcome.upper()),
        sentence=LEGACY_NOTE if legacy else str((stored or {}).get("outcome_sentence") or outcome_sentence(outcome)),
        legacy=legacy, limits=limits, t_out_min=_T(units, t_min), coldest_condition=coldest, models=models,
        findings=_findings(stored or {}), preheat=preheat, outlet_limit=outlet_limit, sweep=sweep, relief=relief,
        display=_main_display(units, limits, t_min, preheat, outlet_limit, sweep, relief))


def screening_json(result: CaseResult) -> dict[str, Any] | None:
    """The stored screening (SI) plus ``display``: its main numbers in the case's units; None before screening."""
    if not isinstance(result.screening, Mapping):
        return None
    view = screening_view(result)
    return {**dict(result.screening), "display": view.display}


def result_json(result: CaseResult, current: bool | None = None) -> dict[str, Any]:
    """A stored result for the API: SI values and the same values in the case's units."""
    units = units_of(result)
    limits = limits_of(result)
    conditions = []
    for c in conditions_of(result):
        conditions.append({
            "condition": c.name, "converged": c.converged, "message": c.message, "inlet_phase": c.inlet_phase,
            "phase": c.phase, "inlet_vapor_fraction": c.inlet_vapor_fraction, "vapor_fraction": c.vapor_fraction,
            "warnings": list(c.warnings), "standing": c.standing, "band": c.band,
            "governing_model": c.governing_model, "solids": None if c.solids is None else dict(c.solids),
            "si": {"p_in_pa": c.p_in_pa, "t_in_k": c.t_in_k, "p_out_pa": c.p_out_pa, "t_out_k": c.t_out_k,
                   "t_screen_k": c.t_screen_k, "t_out_by_model_k": dict(c.t_out_by_model),
                   "temperature_drop_k": c.drop_k, "margin_to_cold_limit_k": c.margin_to_cold_limit_k,
                   "margin_to_mdmt_k": c.margin_to_mdmt_k},
            "display": _display(units, c)})
    out: dict[str, Any] = {
        "id": result.id, "case_id": result.case_id, "case_version": result.case_version,
        "computed_at": result.computed_at.isoformat() if result.computed_at else None,
        "computed_by": result.computed_by.name if result.computed_by else None,
        "converged": result.converged, "message": result.message, "warnings": list(result.warnings or []),
        "outcome": result.outcome, "t_out_min_k": result.t_out_min_k,
        "limits": {"mdmt_k": limits.mdmt_k, "mdmt_source": limits.mdmt_source, "cold_limit_k": limits.governing_k,
                   "cold_limit_basis": limits.basis, "margin_k": limits.margin_k,
                   "user_limit_k": limits.user_limit_k, "governing_k": limits.governing_k,
                   "target_k": limits.target_k},
        "p_atm_pa": units.p_atm_pa, "conditions": conditions, "basis": basis_of(result),
        "screening": screening_json(result), "caution": CAUTION,
    }
    if current is not None:
        out["current"] = current
    return out


def fluid_key(inputs: Mapping[str, Any]) -> tuple[tuple[tuple[str, float], ...], str, int | None]:
    """(composition, EOS, kij argument) of the fluid a result was computed with."""
    fluid = inputs.get("fluid") or {}
    comp = tuple((str(c), float(z)) for c, z in fluid.get("composition") or ())
    return comp, str(fluid.get("eos") or "PR"), fluid.get("kij")
