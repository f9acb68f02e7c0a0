"""Vessel depressuring cases: ``cases.kind`` may be ``vessel_depressuring``.

The kind column is a VARCHAR with a CHECK constraint listing the devices (``ck_cases_case_kind``); this widens
the list.  A depressuring case keeps its vessel, orifices, heat input and run in ``cases.parameters`` (0005).
Downgrading makes the depressuring cases "other" (the older register has no such device); their inputs stay in
``cases.parameters``.

Revision ID: 0008
Revises: 0007
Create Date: 2026-12-05
"""
from __future__ import annotations

from collections.abc import Sequence

import sqlalchemy as sa
from alembic import op

revision: str = "0008"
down_revision: str | None = "0007"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None

OLD = ("control_valve", "relief_valve", "blowdown_valve", "choke", "other")
NEW = (*OLD, "vessel_depressuring")


def _check(kinds: tuple[str, ...]) -> str:
    return "kind IN (" + ", ".join(f"'{k}'" for k in kinds) + ")"


def _replace_check(kinds: tuple[str, ...]) -> None:
    """The kind CHECK constraint with ``kinds``.  SQLite: the table is copied (batch mode does not reflect CHECK
    constraints, so the copy drops the old one) and the new one added; elsewhere the constraint is replaced."""
    if op.get_bind().dialect.name == "sqlite":
        # names as stored: the reflected constraints already carry their full names (ck_cases_...)
        with op.batch_alter_table("cases", recreate="always",
                                  naming_convention={"ck": "%(constraint_name)s"}) as batch:
            batch.drop_constraint("ck_cases_case_kind", type_="check")
            batch.create_check_constraint("ck_cases_case_kind", _check(kinds))
        return
    # the name as the database holds it (the naming convention of 0001 doubled its prefix: ck_cases_ck_cases_...)
    names = [c["name"] for c in sa.inspect(op.get_bind()).get_check_constraints("cases")
             if "kind" in str(c.get("sqltext", "")) and "control_valve" in str(c.get("sqltext", ""))]
    with op.batch_alter_table("cases") as batch:
        for name in names:
            batch.drop_constraint(op.f(name), type_="check")
        batch.create_check_constraint(op.f(names[0] if names else "ck_cases_case_kind"), _check(kinds))


def upgrade() -> None:
    _replace_check(NEW)


def downgrade() -> None:
    # an older register has no such device: its depressuring cases become "other" (their vessel, orifices, heat
    # input and run stay in cases.parameters, and their results and records are kept as they are)
    op.get_bind().execute(sa.text("UPDATE cases SET kind = 'other' WHERE kind = 'vessel_depressuring'"))
    _replace_check(OLD)
