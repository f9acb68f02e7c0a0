"""The audit log of the case register: one entry per change, with the old and the new value as text."""
from __future__ import annotations

import json
from typing import Any

from sqlalchemy import select
from sqlalchemy.orm import Session

from jtcheck.records.guard import ALL_ROLES, require
from jtcheck.records.models import AuditEntry, CaseKind, KijMode, Role, User


def audit_text(value: Any) -> str | None:
    """A value as audit text: exact for floats (repr round-trips), JSON for mappings and lists."""
    if value is None:
        return None
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, (Role, CaseKind, KijMode)):
        return value.value
    if isinstance(value, float):
        return repr(value)
    if isinstance(value, (dict, list, tuple)):
        return json.dumps(value, sort_keys=True, ensure_ascii=False)
    return str(value)


def add_entry(session: Session, user: User | None, entity: str, entity_id: int | None, action: str,
              field: str | None = None, old: Any = None, new: Any = None) -> AuditEntry:
    """Add an audit entry to the caller's transaction (``user`` None for a system action)."""
    entry = AuditEntry(user=user, entity=entity, entity_id=entity_id, action=action, field=field,
                       old_value=audit_text(old), new_value=audit_text(new))
    session.add(entry)
    return entry


def audit_trail(session: Session, user: User, entity: str, entity_id: int) -> list[AuditEntry]:
    """The audit entries of one record, oldest first."""
    require(user, ALL_ROLES, "view the audit log")
    stmt = (select(AuditEntry).where(AuditEntry.entity == entity, AuditEntry.entity_id == entity_id)
            .order_by(AuditEntry.id))
    return list(session.scalars(stmt))


def changes_since(session: Session, entity: str, entity_id: int, edits: int) -> list[AuditEntry]:
    """The audit entries of the last ``edits`` saves of one record, oldest first (what changed since a version).

    A save is one transaction: its entries are written by one user within a moment of each other, so the
    entries are grouped by user and by gaps of less than a second.
    """
    if edits <= 0:
        return []
    stmt = (select(AuditEntry).where(AuditEntry.entity == entity, AuditEntry.entity_id == entity_id,
                                     AuditEntry.action == "update").order_by(AuditEntry.id.desc()).limit(200))
    out: list[AuditEntry] = []
    groups = 0
    last: AuditEntry | None = None
    for entry in session.scalars(stmt):
        if last is None or entry.user_id != last.user_id or (last.at - entry.at).total_seconds() > 1.0:
            groups += 1
            if groups > edits:
                break
        out.append(entry)
        last = entry
    return out[::-1]


def changes_text(entries: list[AuditEntry]) -> str:
    """The fields of ``entries`` with who changed them, in plain words (for a 409 answer)."""
    seen: dict[str, str] = {}
    for e in entries:
        seen.setdefault(str(e.field), e.user.name if e.user is not None else "the system")
    return ", ".join(f"{field} (by {who})" for field, who in seen.items())
