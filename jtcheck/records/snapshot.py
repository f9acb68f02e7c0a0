"""The frozen content of a calculation record: a case's inputs and its result, as canonical JSON.

A revision submitted for check freezes a *snapshot*: everything the record shows (the case's inputs as
entered and in SI, the fluid, the stored result with its screening and model basis, the history of
earlier revisions).  The PDF is rendered from the snapshot alone, and the record keeps the SHA-256 of
its canonical JSON (sorted keys, no insignificant whitespace, UTF-8, no NaN), so that anyone can show
later that a record and the stored inputs and results agree.
"""
from __future__ import annotations

import hashlib
import json
import math
from typing import Any

from jtcheck.records.case_inputs import case_values
from jtcheck.records.demo_labels import site_label
from jtcheck.records.models import Case, CaseKind, CaseResult, KijMode

#: Version of the snapshot layout (bump when its keys change meaning).
SNAPSHOT_SCHEMA = "jtcheck-record-1"


def record_number(case_id: int) -> str:
    """The record number of a case: the same for all its revisions (``JTC-00007``)."""
    return f"JTC-{int(case_id):05d}"


def _clean(value: Any) -> Any:
    """JSON-safe copy: non-finite floats to None, tuples to lists, keys to text."""
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    if isinstance(value, dict):
        return {str(k): _clean(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_clean(v) for v in value]
    if hasattr(value, "isoformat"):
        return value.isoformat()
    if hasattr(value, "value") and not isinstance(value, (str, int, bool)):   # enums
        return value.value
    return value


def canonical_json(data: Any) -> bytes:
    """Canonical JSON bytes: sorted keys, compact separators, UTF-8, NaN refused."""
    return json.dumps(_clean(data), sort_keys=True, separators=(",", ":"), ensure_ascii=False,
                      allow_nan=False).encode("utf-8")


def sha256_hex(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


def case_snapshot(case: Case, result: CaseResult, letter: str, history: list[dict[str, Any]] | None = None,
                  prepared_by: dict[str, Any] | None = None) -> dict[str, Any]:
    """The snapshot a record is rendered from (plain JSON; SI values plus the units the user typed).

    Parameters
    ----------
    case : Case
        The case, with its unit, site, fluid and material loaded.
    result : CaseResult
        The stored result the record reports (computed from the case as it is now).
    letter : str
        The revision letter being prepared ("A", "B", ...).
    history : list of dict, optional
        Earlier revisions and review steps: ``{"revision", "status", "at", "by", "action", "comment"}``.
    prepared_by : dict, optional
        ``{"name", "email"}`` of the preparer.
    """
    material = case.material
    values = case_values(case)
    values.pop("display_units", None)
    return _clean({
        "schema": SNAPSHOT_SCHEMA,
        "record_number": record_number(case.id),
        "revision": {"letter": letter},
        "case": {
            "id": case.id, "version": case.version, "tag": case.tag, "service": case.service,
            "title": f"{case.tag}: {case.service}" if case.service else case.tag,
            "kind": CaseKind(case.kind).value, "kind_label": CaseKind(case.kind).label,
            "site": site_label(case), "unit": case.unit.name, "basis": case.basis, "references": case.references,
            "display_units": dict(case.display_units or {}), "p_atm_pa": case.p_atm_pa, "values": values,
            "mdmt_source": case.mdmt_source,
            "material": None if material is None else {
                "name": material.name, "specification": material.specification,
                "min_metal_temperature_k": material.min_metal_temperature_k, "source": material.source,
                "notes": material.notes, "cold_spec": material.cold_spec().to_dict()},
        },
        "fluid": {"name": case.fluid.name, "composition": case.fluid.composition, "eos": case.fluid.eos,
                  "kij_mode": KijMode(case.fluid.kij_mode).value},
        "result": {
            "id": result.id, "case_version": result.case_version, "computed_at": result.computed_at,
            "computed_by": result.computed_by.name if result.computed_by else None,
            "converged": result.converged, "message": result.message, "warnings": list(result.warnings or []),
            "conditions": list(result.results or []), "t_out_min_k": result.t_out_min_k, "outcome": result.outcome,
            "screening": result.screening, "inputs": result.inputs, "eos": result.eos,
            "kij_basis": result.kij_basis, "component_data_version": result.component_data_version,
            "kij_data_version": result.kij_data_version, "software_version": result.software_version,
        },
        "history": list(history or []),
        "prepared_by": prepared_by or {},
    })


def snapshot_digest(snapshot: dict[str, Any]) -> str:
    """SHA-256 (hex) of a snapshot's canonical JSON."""
    return sha256_hex(canonical_json(snapshot))
