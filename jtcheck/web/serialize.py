"""Stored records as JSON for the API: SI values with their unit in the key, and the same values in the
units the user typed.  A stored result carries its screening (outcome, findings, answers; SI) as computed."""
from __future__ import annotations

from typing import Any

from jtcheck.records.models import AuditEntry, Case, CaseKind, CaseResult, FluidRecord, KijMode, Material, Site
from jtcheck.screening.findings import Outcome
from jtcheck.web import results
from jtcheck.web.quantities import CASE_QUANTITIES, display_unit, to_display


def _iso(value) -> str | None:
    return value.isoformat() if value is not None else None


def case_json(case: Case, latest: CaseResult | None = None, current: bool | None = None) -> dict[str, Any]:
    shown = dict(case.display_units or {})
    si: dict[str, Any] = {q.key: getattr(case, q.key) for q in CASE_QUANTITIES}
    si["p_atm_pa"] = case.p_atm_pa
    display = {}
    for q in CASE_QUANTITIES:
        unit = display_unit(q, shown)
        value = getattr(case, q.key)
        display[q.name] = None if value is None else {"value": to_display(q, value, unit, case.p_atm_pa),
                                                      "unit": unit}
    out: dict[str, Any] = {
        "id": case.id, "tag": case.tag, "service": case.service, "kind": CaseKind(case.kind).value,
        "kind_label": CaseKind(case.kind).label, "status": case.status, "version": case.version,
        "site": {"id": case.unit.site.id, "name": case.unit.site.name},
        "unit": {"id": case.unit.id, "name": case.unit.name},
        "fluid": {"id": case.fluid.id, "name": case.fluid.name},
        "material": None if case.material is None else {"id": case.material.id, "name": case.material.name},
        "mdmt_source": case.mdmt_source, "si": si, "display": display, "display_units": shown,
        "water_saturated": bool(getattr(case, "water_saturated", False)),
        "hydrate_inhibitor": getattr(case, "hydrate_inhibitor", None) or "methanol",
        "basis": case.basis, "references": case.references,
        "created_at": _iso(case.created_at), "updated_at": _iso(case.updated_at),
        "created_by": case.created_by.name if case.created_by else None,
        "updated_by": case.updated_by.name if case.updated_by else None,
    }
    if latest is not None:
        out["latest_result"] = {"id": latest.id, "computed_at": _iso(latest.computed_at),
                                "converged": latest.converged, "t_out_min_k": latest.t_out_min_k,
                                "outcome": latest.outcome, "outcome_sentence": outcome_sentence(latest.outcome),
                                "current": current}
    else:
        out["latest_result"] = None
    return out


def outcome_sentence(outcome: str | None) -> str | None:
    """The plain sentence of a stored outcome (None for a result stored before screening existed)."""
    try:
        return Outcome(outcome).sentence if outcome else None
    except ValueError:
        return None


def result_json(result: CaseResult, current: bool | None = None) -> dict[str, Any]:
    """A stored result for the API (:func:`jtcheck.web.results.result_json`), with its outcome and screening.

    The screening is passed through as stored (``Screening.to_dict()``, SI); results stored before
    screening existed have ``"screening": null`` and the outcome they were stored with.
    """
    out = results.result_json(result, current)
    out.setdefault("outcome", result.outcome)
    out.setdefault("outcome_sentence", outcome_sentence(result.outcome))
    out.setdefault("screening", getattr(result, "screening", None))
    return out


def fluid_json(fluid: FluidRecord) -> dict[str, Any]:
    return {"id": fluid.id, "name": fluid.name,
            "composition": [{"component": c, "mole_fraction": z} for c, z in fluid.composition_pairs()],
            "eos": fluid.eos, "kij": KijMode(fluid.kij_mode).value, "notes": fluid.notes,
            "created_at": _iso(fluid.created_at), "updated_at": _iso(fluid.updated_at)}


def material_json(m: Material) -> dict[str, Any]:
    return {"id": m.id, "name": m.name, "specification": m.specification,
            "min_metal_temperature_k": m.min_metal_temperature_k, "notes": m.notes, "source": m.source,
            "seeded": m.seeded, "editable": m.editable}


def site_json(site: Site) -> dict[str, Any]:
    return {"id": site.id, "name": site.name, "description": site.description,
            "units": [{"id": u.id, "name": u.name, "description": u.description} for u in site.units]}


def audit_json(entry: AuditEntry) -> dict[str, Any]:
    return {"id": entry.id, "at": _iso(entry.at), "user": entry.user.name if entry.user else None,
            "action": entry.action, "field": entry.field, "old_value": entry.old_value, "new_value": entry.new_value}


__all__ = ["audit_json", "case_json", "fluid_json", "material_json", "result_json", "site_json"]
