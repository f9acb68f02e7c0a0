"""Cases of the register: create, edit (opening the next revision of an issued record), read and list.

A case's inputs are frozen while its current calculation record is in review
(:class:`~jtcheck.records.errors.UnderReview`).  The fields and their checks are in
:mod:`jtcheck.records.case_inputs`; computing a case is :mod:`jtcheck.records.computation`.
"""
from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from sqlalchemy import func, or_, select
from sqlalchemy.orm import Session, joinedload, object_session, selectinload
from sqlalchemy.orm.exc import StaleDataError

from jtcheck.errors import InputError
from jtcheck.records import audit
from jtcheck.records.case_inputs import (
    CASE_DEFAULTS,
    CASE_FIELDS,
    case_values,
    none_to_default,
    parse_kind,
    site_margin,
    validate_case,
)
from jtcheck.records.errors import ConcurrentEditError, NotFound, UnderReview
from jtcheck.records.fields import parse_id, parse_text, refuse_unknown_keys
from jtcheck.records.guard import ALL_ROLES, EDIT_ROLES, require
from jtcheck.records.models import (
    ISSUED_STATUSES,
    Case,
    CaseKind,
    CaseResult,
    CaseRevision,
    PlantUnit,
    RevisionStatus,
    Site,
    User,
)
from jtcheck.records.transactions import lock_case_row, transaction
from jtcheck.records.versions import check_version
from jtcheck.records.workflow import current_revision, open_revision

#: ``list_cases(outcome=NOT_COMPUTED)`` lists cases that have no stored result.
NOT_COMPUTED = "not computed"


def create_case(session: Session, user: User, data: Mapping[str, Any]) -> Case:
    """Add a case (status "draft", version 1) with its first calculation record, revision A (a draft).

    Parameters
    ----------
    data : mapping
        Keys of :data:`CASE_FIELDS`: ``unit_id``, ``tag`` (1-64 characters), ``service``, ``kind``
        (a :class:`CaseKind` value), ``fluid_id``, ``inlet_pressure_pa`` [Pa abs],
        ``inlet_temperature_k`` [K], ``outlet_pressure_pa`` [Pa abs], optional credible extremes
        ``inlet_temperature_min_k`` [K] and ``inlet_pressure_max_pa`` [Pa abs], optional
        ``mass_flow_kg_per_s``, ``material_id``, ``mdmt_k`` [K] (copied from the material when not
        given), ``cold_limit_k`` [K], ``margin_k`` [K] (default 0, stored), ``basis``, ``references``,
        ``display_units`` and ``p_atm_pa`` [Pa] (default the standard atmosphere, stored).  None for a
        field with a default means the default.

    Raises
    ------
    jtcheck.errors.InputError
        Naming the first bad field and its allowed range; nothing is stored.
    PermissionDenied
        Unless the user is an active engineer or admin.
    """
    require(user, EDIT_ROLES, "create cases")
    with transaction(session):
        case = add_case(session, user, data)
    return case


def add_case(session: Session, user: User | None, data: Mapping[str, Any]) -> Case:
    """Add a case and its revision A within the caller's transaction (no permission check)."""
    refuse_unknown_keys(data, CASE_FIELDS, "case")
    loaded: dict[str, Any] = {}
    defaults = dict(CASE_DEFAULTS)
    unit_id = data.get("unit_id")
    unit = session.get(PlantUnit, unit_id) if isinstance(unit_id, int) and not isinstance(unit_id, bool) else None
    margin = site_margin(unit)
    if margin is not None:    # a case without a margin of its own takes its site's
        defaults["margin_k"] = margin
    values = validate_case(session, {**defaults, **none_to_default(data, defaults)}, loaded=loaded)
    if margin is not None and data.get("margin_k") is None:    # kept: the record names the site's reason
        site = loaded["unit"].site
        values["parameters"] = {**(values.get("parameters") or {}), "margin_source": (
            f"site default of {site.name}: {site.default_margin_basis}" if site.default_margin_basis
            else f"site default of {site.name}")}
    # the records just looked up (same ids as in values): the answer needs them, so no lazy load afterwards
    case = Case(**values, **loaded, status=RevisionStatus.DRAFT.value, created_by=user, updated_by=user)
    session.add(case)
    session.flush()
    audit.add_entry(session, user, "case", case.id, "create", new=case.tag)
    open_revision(session, user, case)   # revision A, a draft
    return case


def update_case(session: Session, user: User, case_id: int, changes: Mapping[str, Any],
                expected_version: int | None = None) -> Case:
    """Change a case's inputs; one audit entry per changed field with the old and new value.

    Parameters
    ----------
    changes : mapping
        Some keys of :data:`CASE_FIELDS`; the whole case is checked again after merging them.
        Setting ``mdmt_k`` to None with a material copies the material's limit.
    expected_version : int, optional
        The case version the user's edit started from (shown in the form).  If the stored case has
        another version, :class:`ConcurrentEditError` is raised and nothing is changed.

    Returns
    -------
    Case
        The case, with ``version`` incremented if anything changed.  If its current calculation record
        was issued (approved, superseded or voided), a changed case gets its next revision, a draft
        (:mod:`jtcheck.records.workflow`), in the same transaction.

    Raises
    ------
    UnderReview
        If the current revision is for check, checked or for approval: reject it first.
    """
    require(user, EDIT_ROLES, "edit case inputs")
    try:
        with transaction(session):
            refuse_unknown_keys(changes, CASE_FIELDS, "case")
            lock_case_row(session, case_id)   # orders this edit with the review steps of the case
            case = session.get(Case, case_id, populate_existing=True)
            if case is None:
                raise NotFound("case", case_id)
            check_version(session, "case", case, expected_version)
            revision = current_revision(session, case.id)
            if revision is not None and RevisionStatus(revision.status).under_review:
                raise UnderReview("edit case inputs", revision.label, RevisionStatus(revision.status).value)
            merged = {**case_values(case), **none_to_default(changes)}
            values = validate_case(session, merged, current=case, given=frozenset(changes))
            source = (case.parameters or {}).get("margin_source")
            if source and "margin_k" not in changes:     # the site's margin stays the site's until one is entered
                values["parameters"] = {**(values.get("parameters") or {}), "margin_source": source}
            changed = False
            for key, value in values.items():
                old = getattr(case, key)
                if isinstance(old, CaseKind):
                    old = CaseKind(old)
                if old != value:
                    setattr(case, key, value)
                    audit.add_entry(session, user, "case", case.id, "update", key, old, value)
                    changed = True
            if changed:
                case.updated_by = user
                if revision is None or RevisionStatus(revision.status).issued:   # the next revision, a draft
                    case.status = RevisionStatus.DRAFT.value
                    session.flush()
                    open_revision(session, user, case, "after an edit of the case inputs"
                                  + (f" (revision {revision.label} is {revision.status})" if revision else ""))
                session.flush()
                session.expire(case, ["unit", "fluid", "material"])   # reload relationships whose ids changed
    except StaleDataError:
        raise ConcurrentEditError("case", case_id, expected_version) from None
    return case


def case_has_issued_records(case: Case) -> bool:
    """True if ``case`` has a calculation record that was ever approved (approved, superseded or voided).

    Such a case cannot be deleted: the database refuses to delete issued records (and so the case).
    A case whose current revision is in review holds a frozen result that cannot be deleted either
    (reject the revision first).
    """
    session = object_session(case)
    if session is None or case.id is None:
        return False
    return session.scalar(select(func.count()).select_from(CaseRevision).where(
        CaseRevision.case_id == case.id, CaseRevision.status.in_(list(ISSUED_STATUSES)))) > 0


def case_loads() -> tuple[Any, ...]:
    """Loader options for a case with the records shown with it (unit and site, fluid, material): one query."""
    return (joinedload(Case.unit).joinedload(PlantUnit.site), joinedload(Case.fluid), joinedload(Case.material))


def get_case(session: Session, user: User, case_id: int) -> Case:
    """One case (any active user), with its unit, site, fluid and material; raise NotFound if there is none."""
    require(user, ALL_ROLES, "view cases")
    case = session.get(Case, case_id, options=case_loads())
    if case is None:
        raise NotFound("case", case_id)
    return case


def list_cases(session: Session, user: User, *, site_id: int | None = None, unit_id: int | None = None,
               kind: CaseKind | str | None = None, status: str | None = None, outcome: str | None = None,
               text: str | None = None, limit: int = 500, offset: int = 0) -> list[Case]:
    """Cases matching every filter given, by site, unit and tag.

    Parameters
    ----------
    outcome : str, optional
        The ``outcome`` of the case's latest result, or :data:`NOT_COMPUTED` for cases never computed.
    text : str, optional
        Case-insensitive search in tag and service description (taken literally: ``%`` and ``_``
        are not wildcards).
    limit, offset : int
        Paging; at most 1000 rows per call.
    """
    require(user, ALL_ROLES, "view cases")
    stmt = (select(Case).join(Case.unit).join(PlantUnit.site)
            .options(selectinload(Case.unit).selectinload(PlantUnit.site), selectinload(Case.fluid),
                     selectinload(Case.material)))
    if site_id is not None:
        stmt = stmt.where(PlantUnit.site_id == parse_id("site_id", site_id, "site"))
    if unit_id is not None:
        stmt = stmt.where(Case.unit_id == parse_id("unit_id", unit_id, "unit"))
    if kind is not None:
        stmt = stmt.where(Case.kind == parse_kind(kind))
    if status is not None:
        stmt = stmt.where(Case.status == parse_text("status", status, "status", 32, single_line=True))
    if outcome is not None:
        latest = (select(CaseResult.case_id, func.max(CaseResult.id).label("result_id"))
                  .group_by(CaseResult.case_id).subquery())
        if outcome == NOT_COMPUTED:
            stmt = stmt.outerjoin(latest, latest.c.case_id == Case.id).where(latest.c.result_id.is_(None))
        else:
            stmt = (stmt.join(latest, latest.c.case_id == Case.id)
                    .join(CaseResult, CaseResult.id == latest.c.result_id)
                    .where(CaseResult.outcome == parse_text("outcome", outcome, "outcome", 32, single_line=True)))
    if text is not None and text.strip():
        needle = parse_text("text", text, "search text", 200, single_line=True)
        escaped = needle.replace("\\", "\\\\").replace("%", "\\%").replace("_", "\\_")
        pattern = f"%{escaped}%"
        stmt = stmt.where(or_(Case.tag.ilike(pattern, escape="\\"), Case.service.ilike(pattern, escape="\\")))
    if isinstance(limit, bool) or not isinstance(limit, int) or not 1 <= limit <= 1000:
        raise InputError("limit", f"must be an integer from 1 to 1000, got {limit!r}")
    if isinstance(offset, bool) or not isinstance(offset, int) or offset < 0:
        raise InputError("offset", f"must be an integer >= 0, got {offset!r}")
    stmt = stmt.order_by(Site.name, PlantUnit.name, Case.tag, Case.id).limit(limit).offset(offset)
    return list(session.scalars(stmt))
