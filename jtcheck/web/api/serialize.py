"""Stored records as JSON for the API: SI values with their unit in the key, and the same values in the
units the user typed.  A stored result carries its screening (outcome, findings, answers; SI) as computed.

Calculation records (case revisions) are given with their status, people, dates and hashes, and links to
their API addresses (so these functions need a request context, as every API answer has).
"""
from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

from flask import url_for

from jtcheck.notices import CAUTION
from jtcheck.records.case_inputs import field_value
from jtcheck.records.models import (
    AuditEntry,
    Case,
    CaseKind,
    CaseResult,
    CaseRevision,
    FluidRecord,
    KijMode,
    Material,
    ReviewAction,
    ReviewStep,
    RevisionStatus,
    Site,
    User,
)
from jtcheck.records.snapshot import record_number
from jtcheck.reports.screening_display import ConditionView, DisplayUnits, key_numbers
from jtcheck.screening.findings import Outcome
from jtcheck.web.cases import results
from jtcheck.web.quantities import CASE_QUANTITIES, display_unit, to_display


def _iso(value) -> str | None:
    return value.isoformat() if value is not None else None


#: ``case_json(..., revision=UNSET)``: look the current revision up on the case.
UNSET: Any = object()


def case_json(case: Case, latest: CaseResult | None = None, current: bool | None = None,
              revision: CaseRevision | None = UNSET) -> dict[str, Any]:
    """A case for the API.  ``revision`` is its current calculation record when the caller has it (None: the
    case has none); by default it is read from the case (which loads every revision of the case)."""
    if revision is UNSET:
        revision = case.current_revision
    shown = dict(case.display_units or {})
    si: dict[str, Any] = {q.key: field_value(case, q.key) for q in CASE_QUANTITIES}
    si["p_atm_pa"] = case.p_atm_pa
    display = {}
    for q in CASE_QUANTITIES:
        unit = display_unit(q, shown)
        value = field_value(case, q.key)
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
        "parameters": {k: v for k, v in (case.parameters or {}).items() if k != "margin_source"},
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
    out["current_revision"] = None if revision is None else current_revision_json(revision)
    out["links"] = {"self": url_for("api.get_case", case_id=case.id),
                    "revisions": url_for("api.list_case_revisions", case_id=case.id)}
    return out


def _has_record(revision: CaseRevision) -> bool:
    # the hash is stored with the PDF (and checked to be there by the database): no need to load the PDF
    return revision.record_sha256 is not None


def revision_links(revision: CaseRevision) -> dict[str, str]:
    """``self``, ``case`` and, once the revision has a signed record, ``record_pdf``."""
    links = {"self": url_for("api.get_case_revision", case_id=revision.case_id, rev=revision.label),
             "case": url_for("api.get_case", case_id=revision.case_id)}
    if _has_record(revision):
        links["record_pdf"] = url_for("api.revision_record", case_id=revision.case_id, rev=revision.label)
    return links


def current_revision_json(revision: CaseRevision) -> dict[str, Any]:
    """The short form of a case's current revision shown with the case."""
    return {"label": revision.label, "letter": revision.letter, "number": revision.number,
            "status": RevisionStatus(revision.status).value, "links": revision_links(revision)}


def person_json(user: User | None) -> dict[str, Any] | None:
    """A signer or actor: id, name, e-mail (as printed on the record)."""
    return None if user is None else {"id": user.id, "name": user.name, "email": user.email}


def review_step_json(step: ReviewStep) -> dict[str, Any]:
    return {"id": step.id, "action": ReviewAction(step.action).value,
            "from_status": None if step.from_status is None else RevisionStatus(step.from_status).value,
            "to_status": RevisionStatus(step.to_status).value, "user": person_json(step.user), "at": _iso(step.at),
            "comment": step.comment or ""}


def revision_json(revision: CaseRevision, steps: Sequence[ReviewStep] | None = None,
                  current: bool | None = None) -> dict[str, Any]:
    """A calculation record (case revision) for the API; with ``steps`` its review history, oldest first.

    ``current`` tells whether it is the case's current (latest) revision, when the caller knows.
    """
    status = RevisionStatus(revision.status)
    out: dict[str, Any] = {
        "case_id": revision.case_id, "record_number": record_number(revision.case_id),
        "label": revision.label, "letter": revision.letter, "number": revision.number, "status": status.value,
        "issued": status.issued, "under_review": status.under_review, "current": current,
        "case_version": revision.case_version, "result_id": revision.result_id,
        "prepared_by": person_json(revision.preparer), "checked_by": person_json(revision.checker),
        "approved_by": person_json(revision.approver),
        "created_at": _iso(revision.created_at), "submitted_at": _iso(revision.submitted_at),
        "checked_at": _iso(revision.checked_at), "approved_at": _iso(revision.approved_at),
        "closed_at": _iso(revision.closed_at),
        "record_sha256": revision.record_sha256, "snapshot_sha256": revision.snapshot_sha256,
        "links": revision_links(revision),
    }
    if steps is not None:
        out["steps"] = [review_step_json(s) for s in steps]
    return out


def outcome_sentence(outcome: str | None) -> str | None:
    """The plain sentence of a stored outcome (None for a result stored before screening existed)."""
    try:
        return Outcome(outcome).sentence if outcome else None
    except ValueError:
        return None


def _condition_display(units: DisplayUnits, c: ConditionView) -> dict[str, Any]:
    return {"p_in": units.P(c.p_in_pa, "inlet_pressure"), "t_in": units.T(c.t_in_k),
            "p_out": units.P(c.p_out_pa, "outlet_pressure"), "t_out": units.T(c.t_out_k),
            "t_screen": units.T(c.t_screen_k), "temperature_drop": units.DT(c.drop_k),
            "margin_to_cold_limit": units.DT(c.margin_to_cold_limit_k), "margin_to_mdmt": units.DT(c.margin_to_mdmt_k)}


def screening_json(result: CaseResult) -> dict[str, Any] | None:
    """The stored screening (SI) plus ``display``: its main numbers in the case's units; None before screening."""
    if not isinstance(result.screening, Mapping):
        return None
    return {**dict(result.screening), "display": key_numbers(result.screening, results.units_of(result))}


def result_json(result: CaseResult, current: bool | None = None) -> dict[str, Any]:
    """A stored result for the API: SI values and the same values in the case's units, its outcome and screening.

    The screening is passed through as stored (``Screening.to_dict()``, SI) with its main numbers in the case's
    units added as ``display``; results stored before screening existed have ``"screening": null`` and the
    outcome they were stored with.
    """
    units = results.units_of(result)
    limits = results.limits_of(result)
    conditions = []
    for c in results.conditions_of(result):
        conditions.append({
            "condition": c.name, "converged": c.converged, "message": c.message, "inlet_phase": c.inlet_phase,
            "phase": c.phase, "inlet_vapor_fraction": c.inlet_vapor_fraction, "vapor_fraction": c.vapor_fraction,
            "warnings": list(c.warnings), "standing": c.standing, "band": c.band,
            "governing_model": c.governing_model, "solids": None if c.solids is None else dict(c.solids),
            "si": {"p_in_pa": c.p_in_pa, "t_in_k": c.t_in_k, "p_out_pa": c.p_out_pa, "t_out_k": c.t_out_k,
                   "t_screen_k": c.t_screen_k, "t_out_by_model_k": dict(c.t_out_by_model),
                   "temperature_drop_k": c.drop_k, "margin_to_cold_limit_k": c.margin_to_cold_limit_k,
                   "margin_to_mdmt_k": c.margin_to_mdmt_k},
            "display": _condition_display(units, c)})
    out: dict[str, Any] = {
        "id": result.id, "case_id": result.case_id, "case_version": result.case_version,
        "computed_at": _iso(result.computed_at),
        "computed_by": result.computed_by.name if result.computed_by else None,
        "converged": result.converged, "message": result.message, "warnings": list(result.warnings or []),
        "outcome": result.outcome, "t_out_min_k": result.t_out_min_k,
        "limits": {"mdmt_k": limits.mdmt_k, "mdmt_source": limits.mdmt_source, "cold_limit_k": limits.governing_k,
                   "cold_limit_basis": limits.basis, "margin_k": limits.margin_k,
                   "user_limit_k": limits.user_limit_k, "governing_k": limits.governing_k,
                   "target_k": limits.target_k, "total_margin_k": limits.total_margin_k,
                   "margin_terms": [dict(t) for t in limits.margin_terms]},
        "p_atm_pa": units.p_atm_pa, "conditions": conditions, "basis": results.basis_of(result),
        "screening": screening_json(result), "caution": CAUTION,
    }
    if current is not None:
        out["current"] = current
    out["outcome_sentence"] = outcome_sentence(result.outcome)
    return units.words.walk(out)     # findings, remedies and reasoning quote the case's units


def fluid_json(fluid: FluidRecord) -> dict[str, Any]:
    return {"id": fluid.id, "version": fluid.version, "name": fluid.name,
            "composition": [{"component": c, "mole_fraction": z} for c, z in fluid.composition_pairs()],
            "eos": fluid.eos, "kij": KijMode(fluid.kij_mode).value, "notes": fluid.notes,
            "created_at": _iso(fluid.created_at), "updated_at": _iso(fluid.updated_at)}


def material_json(m: Material) -> dict[str, Any]:
    return {"id": m.id, "version": m.version, "name": m.name, "specification": m.specification,
            "min_metal_temperature_k": m.min_metal_temperature_k, "notes": m.notes, "source": m.source,
            "seeded": m.seeded, "editable": m.editable, "limit_way": m.limit_way,
            "exemption_curve": m.exemption_curve or "", "curve_code": m.curve_code, "thickness_m": m.thickness_m,
            "impact_test_temperature_k": m.impact_test_temperature_k, "pwht_credit": bool(m.pwht_credit),
            "allowable_stress_pa": m.allowable_stress_pa, "outside_diameter_m": m.outside_diameter_m,
            "corrosion_allowance_m": m.corrosion_allowance_m, "joint_efficiency": m.joint_efficiency,
            "other_stress_pa": m.other_stress_pa}


def site_json(site: Site) -> dict[str, Any]:
    return {"id": site.id, "name": site.name, "description": site.description,
            "units": [{"id": u.id, "name": u.name, "description": u.description} for u in site.units]}


def audit_json(entry: AuditEntry) -> dict[str, Any]:
    return {"id": entry.id, "at": _iso(entry.at), "user": entry.user.name if entry.user else None,
            "action": entry.action, "field": entry.field, "old_value": entry.old_value, "new_value": entry.new_value}


__all__ = ["UNSET", "audit_json", "case_json", "current_revision_json", "fluid_json", "material_json", "person_json",
           "result_json", "review_step_json", "screening_json", "revision_json", "revision_links", "site_json"]
