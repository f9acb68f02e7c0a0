"""Computing a case: an isenthalpic letdown at each credible condition, screened, stored as a result.

The letdowns run before the write transaction (no lock is held while they do); the write then
checks that the case and its fluid are still those computed with.
"""
from __future__ import annotations

from typing import Any

from sqlalchemy.orm import Session, joinedload, object_session

from jtcheck import __version__ as jtcheck_version
from jtcheck.cases import CaseKind as KindOfCase
from jtcheck.cases import kind_of
from jtcheck.records import audit
from jtcheck.records.case_inputs import case_values
from jtcheck.records.cases import case_loads
from jtcheck.records.errors import ConcurrentEditError, NotFound
from jtcheck.records.guard import ALL_ROLES, require
from jtcheck.records.json_values import json_safe
from jtcheck.records.mdmt_curves import curve_table
from jtcheck.records.models import Case, CaseKind, CaseResult, FluidRecord, KijMode, User
from jtcheck.records.transactions import transaction
from jtcheck.screening.screen import (
    CONDITION_MAX_P,
    CONDITION_MIN_T,
    CONDITION_MIN_T_MAX_P,
    CONDITION_NORMAL,
    ConditionScreen,
    Screening,
    ScreeningOptions,
)
from jtcheck.thermo.fluid import Fluid

#: Names of the conditions a case is computed at, in order (the sweep may add SWEEP_CONDITION).
CONDITIONS = (CONDITION_NORMAL, CONDITION_MIN_T, CONDITION_MAX_P, CONDITION_MIN_T_MAX_P)


def kind_values(case: Case) -> dict[str, Any]:
    """The values of ``case`` as its kind reads them (register keys, SI), with where the MDMT came from.

    A case whose MDMT comes from its material gets the material's cold-limit data (``material_spec``, with the
    limit the case copied as its typed limit) and the register's curve table (``mdmt_table``), so that its kind
    finds the MDMT at the coincident pressure.
    """
    values = {**case_values(case), "mdmt_source": case.mdmt_source or "",
              "margin_source": (case.parameters or {}).get("margin_source") or ""}
    material = case.material
    if material is not None and (case.mdmt_source or "").startswith("material"):
        spec = material.cold_spec(typed_limit_k=case.mdmt_k)
        if spec.has_curve:
            session = object_session(case)
            values["material_spec"] = spec
            values["mdmt_table"] = curve_table(session) if session is not None else None
        elif case.mdmt_k is not None:
            values["mdmt_source"] = f"{case.mdmt_source}, typed limit"   # the result says which way it was found
    return values


def case_kind(case: Case) -> KindOfCase:
    """The case kind (:mod:`jtcheck.cases`) that computes ``case``."""
    return kind_of(case.kind)


def case_conditions(case: Case) -> list[tuple[str, float, float]]:
    """The credible conditions to compute: ``(name, inlet pressure [Pa], inlet temperature [K])``.

    Always "normal"; "min inlet temperature" and "max inlet pressure" when those extremes are given,
    and "min temperature + max pressure" when both are (:func:`jtcheck.screening.screen.credible_conditions`).
    """
    return [(c.name, c.p_in_pa, c.t_in_k) for c in case_kind(case).conditions(kind_values(case))]


def _condition_entry(cs: ConditionScreen, eos: str) -> dict[str, Any]:
    """The stored entry of one screened condition: the case model's letdown plus what the screening made of it."""
    c = cs.condition
    result = cs.results.get(eos)
    extra = {"t_screen_k": cs.t_screen_k, "governing_model": cs.governing_model, "screen_message": cs.message,
             "solids": cs.solids,
             "t_out_by_model": {m: (r.t_out if r is not None and r.converged else None) for m, r in cs.results.items()}}
    if result is None:   # refused: stored as not converged, with the reason
        return json_safe({"condition": c.name, "p_in": c.p_in_pa, "t_in": c.t_in_k, "p_out": c.p_out_pa,
                          "t_out": None, "dt": None, "vapor_fraction": None, "phase": "unknown", "converged": False,
                          "message": cs.message, "warnings": [], **extra})
    entry = {"condition": c.name, **json_safe(result.to_dict()), **json_safe(extra)}
    if not result.converged:   # never a number for a state that was not found
        entry.update(t_out=None, dt=None, vapor_fraction=None, converged=False)
    elif not cs.converged:      # the case model converged, another did not: not screened
        entry.update(converged=False, message=cs.message)
    return entry


def screening_options(case: Case) -> ScreeningOptions:
    """The screening a case asks for: its limits, hydrate data, operating ranges and relief-valve data."""
    return case_kind(case).options(kind_values(case))


def _merged_warnings(entries: list[dict[str, Any]]) -> list[str]:
    seen: dict[str, list[str]] = {}
    for entry in entries:
        for text in entry.get("warnings") or []:
            seen.setdefault(text, [])
            if entry["condition"] not in seen[text]:
                seen[text].append(entry["condition"])
    n = len(entries)
    return [text if len(conds) == n else f"{text} ({', '.join(conds)})" for text, conds in seen.items()]


def _fluid_record_inputs(record: FluidRecord) -> dict[str, Any]:
    """The stored fluid's part of ``CaseResult.inputs["fluid"]`` (everything but what the built Fluid adds)."""
    return {"id": record.id, "name": record.name, "composition": record.composition, "eos": record.eos,
            "kij_mode": KijMode(record.kij_mode).value, "kij": KijMode(record.kij_mode).fluid_kij()}


def result_inputs(case: Case, fluid: Fluid | None = None) -> dict[str, Any]:
    """Everything needed to reproduce a computation of ``case``, in SI units (stored as ``CaseResult.inputs``)."""
    record = case.fluid
    fluid = fluid if fluid is not None else record.to_fluid()
    material = case.material
    return json_safe({
        "method": case_kind(case).method,
        "software_version": jtcheck_version,
        "case": {"id": case.id, "version": case.version, "tag": case.tag, "kind": CaseKind(case.kind).value,
                 "unit": case.unit.name, "site": case.unit.site.name},
        "fluid": {**_fluid_record_inputs(record),
                  "component_ids": list(fluid.ids), "zs": [float(z) for z in fluid.zs]},
        "basis": fluid.basis(),
        "conditions": [{"condition": c.name, "p_in_pa": c.p_in_pa, "t_in_k": c.t_in_k, "p_out_pa": c.p_out_pa}
                       for c in case_kind(case).conditions(kind_values(case))],
        "case_values": {**{k: v for k, v in case_values(case).items() if k not in ("basis", "references")},
                        "mdmt_source": case.mdmt_source},
        "material": None if material is None else {
            "id": material.id, "name": material.name, "min_metal_temperature_k": material.min_metal_temperature_k,
            "notes": material.notes, "source": material.source, "cold_spec": material.cold_spec().to_dict()},
    })


def compute_case(session: Session, user: User, case_id: int) -> CaseResult:
    """Compute a case at each credible condition and store the result (any active user).

    Each condition of :func:`case_conditions` is an isenthalpic letdown from its inlet state to the
    case's outlet pressure.  A condition that did not converge is stored with ``converged: False``,
    its reason and ``t_out: None``; ``CaseResult.converged`` is True only if all did, and
    ``t_out_min_k`` is the coldest converged outlet temperature [K] (None if none converged).
    The inputs, model basis (EOS, kij set, data versions) and software version are stored with it.
    Computing does not change the case (nor its version).

    Raises
    ------
    NotFound
        If there is no such case.
    ConcurrentEditError
        If the case or its fluid was changed while it was being computed; nothing is stored.
    """
    require(user, ALL_ROLES, "compute cases")
    try:   # the letdowns run before the write transaction, so no lock is held while they do
        case = session.get(Case, case_id, populate_existing=True, options=case_loads())
        if case is None:
            raise NotFound("case", case_id)
        prepared = _prepare_computation(case)
    except BaseException:
        session.rollback()
        raise
    with transaction(session):
        result = _store_computation(session, user, case_id, prepared)
    return result


def add_result(session: Session, user: User, case_id: int) -> CaseResult:
    """Compute a case and add its result within the caller's transaction (no permission check)."""
    case = session.get(Case, case_id, options=case_loads())
    if case is None:
        raise NotFound("case", case_id)
    return _store_computation(session, user, case_id, _prepare_computation(case))


def _prepare_computation(case: Case) -> dict[str, Any]:
    fluid = case.fluid.to_fluid()   # built once: the letdowns, the stored inputs and the basis share it
    kind, values = case_kind(case), kind_values(case)
    screening = kind.compute(fluid, values)
    entries = kind.result_entries(screening, values)
    if entries is None:
        entries = [_condition_entry(cs, fluid.eos.value) for cs in screening.conditions]
    else:
        entries = [json_safe(e) for e in entries]
    inputs = result_inputs(case, fluid)
    return {"version": case.version, "inputs": inputs, "basis": fluid.basis(), "entries": entries,
            "screening": screening}


def _store_computation(session: Session, user: User, case_id: int, prepared: dict[str, Any]) -> CaseResult:
    case = session.get(Case, case_id, populate_existing=True, options=(joinedload(Case.fluid),))
    if case is None:
        raise NotFound("case", case_id)
    inputs = prepared["inputs"]
    # the fluid as stored now must be the one computed with; the rest of inputs["fluid"] (component ids and
    # normalised mole fractions) is a function of these stored fields, so no Fluid is built to compare them
    stored_fluid = json_safe(_fluid_record_inputs(case.fluid))
    if case.version != prepared["version"] or any(inputs["fluid"].get(k) != v for k, v in stored_fluid.items()):
        raise ConcurrentEditError("case", case_id, prepared["version"], case.version)
    entries = prepared["entries"]
    converged = all(e["converged"] for e in entries)
    failed = [f"{e['condition']}: {e['message']}" for e in entries if not e["converged"]]
    message = (f"all {len(entries)} conditions converged" if converged
               else "not converged: " + "; ".join(failed))
    basis = prepared["basis"]
    screening: Screening = prepared["screening"]
    result = CaseResult(
        case=case, case_version=case.version, computed_by=user, inputs=inputs,
        eos=basis["eos"], kij_basis=basis["kij_basis"], component_data_version=basis["component_data"],
        kij_data_version=basis["kij_data"], software_version=jtcheck_version, converged=converged,
        message=message, warnings=_merged_warnings(entries), results=entries,
        t_out_min_k=screening.t_out_min_k, outcome=screening.outcome.value, screening=screening.to_dict())
    session.add(result)
    session.flush()
    audit.add_entry(session, user, "case", case.id, "compute",
                    new=f"result {result.id}: {message}; outcome {result.outcome}; coldest screened outlet "
                        + (f"{result.t_out_min_k:.2f} K" if result.t_out_min_k is not None else "none"))
    return result
