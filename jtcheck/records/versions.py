"""Optimistic concurrency of the editable records (cases, fluids, materials, sites, units, users).

Every such table has a ``version`` column that SQLAlchemy checks and increments with each UPDATE
(``version_id_col``).  An edit names the version it was based on; :func:`check_version` refuses a stale one
with :class:`~jtcheck.records.errors.ConcurrentEditError`, which says what changed since and who changed it
(from the audit log).
"""
from __future__ import annotations

from typing import Any

from sqlalchemy.orm import Session

from jtcheck.errors import InputError
from jtcheck.records.audit import changes_since, changes_text
from jtcheck.records.errors import ConcurrentEditError


def parse_version(value: Any, *, required: bool) -> int | None:
    """The ``version`` an edit names: a whole number >= 1 (None when absent and not ``required``)."""
    if value is None or value == "":
        if required:
            raise InputError("version", "required: send the version you edited (it is in the record you read), so "
                                        "that a save made by someone else meanwhile is not overwritten")
        return None
    if isinstance(value, bool):
        raise InputError("version", f"must be the whole-number version you edited, got {value!r}")
    try:
        number = int(value) if isinstance(value, int) else int(str(value).strip())
    except ValueError:
        raise InputError("version", f"must be the whole-number version you edited, got {value!r}") from None
    if not 1 <= number <= 2**31 - 1:
        raise InputError("version", f"must be between 1 and {2**31 - 1}, got {number}")
    return number


def check_version(session: Session, entity: str, record: Any, expected: int | None) -> None:
    """Raise ConcurrentEditError if ``record`` is no longer at version ``expected`` (nothing to check for None)."""
    if expected is None or record.version == expected:
        return
    changed = ""
    if record.version > expected:
        changed = changes_text(changes_since(session, entity, record.id, record.version - expected))
    raise ConcurrentEditError(entity, record.id, expected, record.version, changed)
