"""Stored results of cases: the latest per case, one by id, and whether one is still current."""
from __future__ import annotations

from collections.abc import Sequence

from sqlalchemy import func, select
from sqlalchemy.orm import Session

from jtcheck.records.errors import NotFound
from jtcheck.records.guard import ALL_ROLES, require
from jtcheck.records.json_values import json_safe
from jtcheck.records.models import Case, CaseResult, KijMode, User


def latest_results(session: Session, case_ids: Sequence[int]) -> dict[int, CaseResult]:
    """The latest stored result of each case that has one (one query), case id -> result."""
    if not case_ids:
        return {}
    latest = (select(func.max(CaseResult.id)).where(CaseResult.case_id.in_(list(case_ids)))
              .group_by(CaseResult.case_id))
    rows = session.scalars(select(CaseResult).where(CaseResult.id.in_(latest)))
    return {r.case_id: r for r in rows}


def result_is_current(case: Case, result: CaseResult) -> bool:
    """True if ``result`` was computed from the case and fluid as they are stored now."""
    if result.case_id != case.id or result.case_version != case.version:
        return False
    stored = result.inputs.get("fluid", {})
    record = case.fluid
    return (stored.get("composition") == json_safe(record.composition) and stored.get("eos") == record.eos
            and stored.get("kij_mode") == KijMode(record.kij_mode).value)


def get_result(session: Session, user: User, result_id: int) -> CaseResult:
    """One stored result (any active user); raise NotFound if there is none."""
    require(user, ALL_ROLES, "view results")
    result = session.get(CaseResult, result_id)
    if result is None:
        raise NotFound("result", result_id)
    return result
