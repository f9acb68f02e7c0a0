"""A stored result as pages and the API show it: each condition in SI and in the case's units, with margins.

Everything is read from the stored :class:`~jtcheck.records.models.CaseResult` (its results and the
inputs it was computed from), never recomputed; the margins are differences of stored numbers:
margin to the cold limit = outlet temperature - cold limit, margin to the MDMT = outlet temperature - MDMT.
The cold limit is the one entered on the case, or else MDMT + the required margin.  A condition that
did not converge has no outlet temperature and is "not screened", never "above the limit".
"""
from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any

from jtcheck.notices import CAUTION
from jtcheck.records.models import CaseResult
from jtcheck.units import P_ATM_DEFAULT_PA, pressure_from_pa, temperature_difference_from_k, temperature_from_k

#: Standing of one condition against the limits.
BELOW_COLD_LIMIT = "colder than the cold limit"
AT_OR_ABOVE_COLD_LIMIT = "at or above the cold limit"
NOT_SCREENED = "not screened: the calculation did not converge"
NO_LIMIT = "no cold limit or MDMT given"


@dataclass(frozen=True)
class Limits:
    """The temperature limits a result was computed with [K]."""

    mdmt_k: float | None
    mdmt_source: str
    cold_limit_k: float | None
    cold_limit_basis: str
    margin_k: float


@dataclass(frozen=True)
class Units:
    """The units a case was entered in (for showing its results)."""

    temperature: str = "degC"
    inlet_pressure: str = "barg"
    outlet_pressure: str = "barg"
    p_atm_pa: float = P_ATM_DEFAULT_PA

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

    @property
    def drop_k(self) -> float | None:
        """Temperature drop across the letdown, inlet - outlet [K] (positive when the fluid cools)."""
        return None if self.dt_k is None else -self.dt_k


def units_of(result: CaseResult) -> Units:
    values = (result.inputs or {}).get("case_values") or {}
    shown = values.get("display_units") or {}
    return Units(temperature=shown.get("inlet_temperature") or "degC",
                 inlet_pressure=shown.get("inlet_pressure") or "barg",
                 outlet_pressure=shown.get("outlet_pressure") or shown.get("inlet_pressure") or "barg",
                 p_atm_pa=float(values.get("p_atm_pa") or P_ATM_DEFAULT_PA))


def limits_of(result: CaseResult) -> Limits:
    values = (result.inputs or {}).get("case_values") or {}
    mdmt = values.get("mdmt_k")
    margin = float(values.get("margin_k") or 0.0)
    cold = values.get("cold_limit_k")
    if cold is not None:
        basis = "entered on the case"
    elif mdmt is not None:
        cold = mdmt + margin
        basis = f"MDMT + required margin ({margin:g} K)"
    else:
        basis = "none: no cold limit and no MDMT given"
    return Limits(mdmt_k=mdmt, mdmt_source=str(values.get("mdmt_source") or ""), cold_limit_k=cold,
                  cold_limit_basis=basis, margin_k=margin)


def _num(value: Any) -> float | None:
    return None if value is None else float(value)


def conditions_of(result: CaseResult) -> list[ConditionView]:
    limits = limits_of(result)
    out = []
    for entry in result.results or []:
        converged = bool(entry.get("converged")) and entry.get("t_out") is not None
        t_out = _num(entry.get("t_out")) if converged else None
        to_cold = None if t_out is None or limits.cold_limit_k is None else t_out - limits.cold_limit_k
        to_mdmt = None if t_out is None or limits.mdmt_k is None else t_out - limits.mdmt_k
        if not converged:
            standing = NOT_SCREENED
        elif to_cold is None:
            standing = NO_LIMIT
        else:
            standing = BELOW_COLD_LIMIT if to_cold < 0 else AT_OR_ABOVE_COLD_LIMIT
        out.append(ConditionView(
            name=str(entry.get("condition", "")), converged=converged, message=str(entry.get("message") or ""),
            p_in_pa=_num(entry.get("p_in")), t_in_k=_num(entry.get("t_in")), p_out_pa=_num(entry.get("p_out")),
            t_out_k=t_out, dt_k=_num(entry.get("dt")) if converged else None,
            inlet_phase=str(entry.get("inlet_phase") or "unknown"), phase=str(entry.get("phase") or "unknown"),
            inlet_vapor_fraction=_num(entry.get("inlet_vapor_fraction")),
            vapor_fraction=_num(entry.get("vapor_fraction")) if converged else None,
            warnings=tuple(entry.get("warnings") or ()), margin_to_cold_limit_k=to_cold, margin_to_mdmt_k=to_mdmt,
            standing=standing))
    return out


def basis_of(result: CaseResult) -> dict[str, Any]:
    """The model basis of a result: EOS, kij set, data and software versions."""
    stored = (result.inputs or {}).get("basis") or {}
    return {"eos": result.eos, "eos_name": stored.get("eos_name"), "eos_reference": stored.get("eos_reference"),
            "kij_basis": result.kij_basis, "kij_defaulted_pairs": stored.get("kij_defaulted_pairs") or [],
            "volume_translation": stored.get("volume_translation"),
            "component_data_version": result.component_data_version, "kij_data_version": result.kij_data_version,
            "software_version": result.software_version}


def _display(units: Units, c: ConditionView) -> dict[str, Any]:
    return {"p_in": {"value": units.p_in(c.p_in_pa), "unit": units.inlet_pressure},
            "t_in": {"value": units.t(c.t_in_k), "unit": units.temperature},
            "p_out": {"value": units.p_out(c.p_out_pa), "unit": units.outlet_pressure},
            "t_out": {"value": units.t(c.t_out_k), "unit": units.temperature},
            "temperature_drop": {"value": units.dt(c.drop_k), "unit": units.difference},
            "margin_to_cold_limit": {"value": units.dt(c.margin_to_cold_limit_k), "unit": units.difference},
            "margin_to_mdmt": {"value": units.dt(c.margin_to_mdmt_k), "unit": units.difference}}


def result_json(result: CaseResult, current: bool | None = None) -> dict[str, Any]:
    """A stored result for the API: SI values and the same values in the case's units."""
    units = units_of(result)
    limits = limits_of(result)
    conditions = []
    for c in conditions_of(result):
        conditions.append({
            "condition": c.name, "converged": c.converged, "message": c.message, "inlet_phase": c.inlet_phase,
            "phase": c.phase, "inlet_vapor_fraction": c.inlet_vapor_fraction, "vapor_fraction": c.vapor_fraction,
            "warnings": list(c.warnings), "standing": c.standing,
            "si": {"p_in_pa": c.p_in_pa, "t_in_k": c.t_in_k, "p_out_pa": c.p_out_pa, "t_out_k": c.t_out_k,
                   "temperature_drop_k": c.drop_k, "margin_to_cold_limit_k": c.margin_to_cold_limit_k,
                   "margin_to_mdmt_k": c.margin_to_mdmt_k},
            "display": _display(units, c)})
    out: dict[str, Any] = {
        "id": result.id, "case_id": result.case_id, "case_version": result.case_version,
        "computed_at": result.computed_at.isoformat() if result.computed_at else None,
        "computed_by": result.computed_by.name if result.computed_by else None,
        "converged": result.converged, "message": result.message, "warnings": list(result.warnings or []),
        "outcome": result.outcome, "t_out_min_k": result.t_out_min_k,
        "limits": {"mdmt_k": limits.mdmt_k, "mdmt_source": limits.mdmt_source, "cold_limit_k": limits.cold_limit_k,
                   "cold_limit_basis": limits.cold_limit_basis, "margin_k": limits.margin_k},
        "p_atm_pa": units.p_atm_pa, "conditions": conditions, "basis": basis_of(result), "caution": CAUTION,
    }
    if current is not None:
        out["current"] = current
    return out


def fluid_key(inputs: Mapping[str, Any]) -> tuple[tuple[tuple[str, float], ...], str, int | None]:
    """(composition, EOS, kij argument) of the fluid a result was computed with."""
    fluid = inputs.get("fluid") or {}
    comp = tuple((str(c), float(z)) for c, z in fluid.get("composition") or ())
    return comp, str(fluid.get("eos") or "PR"), fluid.get("kij")
