"""The register's MDMT curve table: the shipped table until an admin changes a row (jtcheck.screening.mdmt).

The first change copies the shipped rows into ``mdmt_curve_points``; from then on the register's rows are the
table every computation uses.  Each change is checked as a whole table (curves rising with thickness, the
reduction zero at a ratio of 1 and growing as it falls, every rule given) and written to the audit log.
"""
from __future__ import annotations

import math
from typing import Any

from sqlalchemy import func, select
from sqlalchemy.orm import Session

from jtcheck.errors import InputError
from jtcheck.records import audit
from jtcheck.records.errors import NotFound
from jtcheck.records.fields import MAX_LONG_TEXT, parse_text
from jtcheck.records.guard import ADMIN_ROLES, ALL_ROLES, require
from jtcheck.records.models import CurvePoint, User
from jtcheck.records.transactions import transaction
from jtcheck.screening.mdmt import CurveTable, shipped_curve_table

REGISTER_LABEL = "register table (changed by an admin from the shipped table)"


def _row(p: CurvePoint) -> dict[str, Any]:
    return {"code": p.code, "table": p.table_name, "curve": p.curve, "x": "" if p.x is None else p.x,
            "value": p.value, "unit": p.unit, "source": p.source, "edition": p.edition, "provenance": p.provenance}


def curve_table(session: Session) -> CurveTable:
    """The curve table computations use: the register's rows, or the shipped table when there are none."""
    points = list(session.scalars(select(CurvePoint).order_by(CurvePoint.position)))
    if not points:
        return shipped_curve_table()
    return CurveTable(tuple(_row(p) for p in points), label=REGISTER_LABEL)


def curve_rows(session: Session, user: User) -> tuple[str, list[dict[str, Any]]]:
    """The table's label and its rows, each with its ``position`` (any active user)."""
    require(user, ALL_ROLES, "view the MDMT curve table")
    table = curve_table(session)
    return table.label, [{"position": i, **row} for i, row in enumerate(table.rows)]


def _copy_shipped(session: Session) -> None:
    for i, row in enumerate(shipped_curve_table().rows):
        session.add(CurvePoint(position=i, code=row["code"], table_name=row["table"], curve=row["curve"],
                               x=None if row["x"] in ("", None) else float(row["x"]), value=float(row["value"]),
                               unit=row["unit"], source=row["source"], edition=row["edition"],
                               provenance=row["provenance"]))
    session.flush()


def update_curve_point(session: Session, user: User, position: int, *, value: float,
                       provenance: str | None = None, edition: str | None = None) -> CurvePoint:
    """Change one row's value (in the row's unit) and optionally its provenance and edition (admins only).

    The whole table is checked with the change; a change that breaks it is refused and nothing is stored.
    """
    require(user, ADMIN_ROLES, "edit the MDMT curve table")
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(float(value)):
        raise InputError("value", f"the value must be a finite number in the row's unit, got {value!r}")
    with transaction(session):
        if not session.scalar(select(func.count()).select_from(CurvePoint)):
            _copy_shipped(session)
        point = session.scalar(select(CurvePoint).where(CurvePoint.position == position))
        if point is None:
            raise NotFound("curve table row", position)
        old = point.value
        point.value = float(value)
        if provenance is not None:
            point.provenance = parse_text("provenance", provenance, "provenance", MAX_LONG_TEXT, required=True)
        if edition is not None:
            point.edition = parse_text("edition", edition, "edition", 64, required=True, single_line=True)
        session.flush()
        curve_table(session)   # the whole table must still hold together
        audit.add_entry(session, user, "mdmt curve", position, "update",
                        f"{point.code} {point.table_name} {point.curve} {point.x if point.x is not None else ''}",
                        old, point.value)
    return point
