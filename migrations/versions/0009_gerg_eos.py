"""GERG-2008 as an equation of state of a stored fluid: the CHECK on ``fluids.eos`` admits 'GERG2008'.

``eos`` is VARCHAR(8), which holds "GERG2008" exactly.  SQLite cannot alter a CHECK constraint in place: the
batch operation recreates the table (the named constraint is reflected, dropped and created anew).

Revision ID: 0009
Revises: 0008
Create Date: 2026-12-05
"""
from __future__ import annotations

from collections.abc import Sequence

from alembic import op

revision: str = "0009"
down_revision: str | None = "0008"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None

_WITH_GERG = "eos IN ('PR', 'SRK', 'RK', 'VDW', 'GERG2008')"
_CUBIC_ONLY = "eos IN ('PR', 'SRK', 'RK', 'VDW')"


def upgrade() -> None:
    with op.batch_alter_table("fluids") as batch:
        batch.drop_constraint("ck_fluids_eos", type_="check")
        batch.create_check_constraint("ck_fluids_eos", _WITH_GERG)


def downgrade() -> None:
    # a database before 0009 does not know GERG-2008: its fluids take PR, and each says so in its notes
    op.execute("UPDATE fluids SET eos = 'PR', notes = notes || ' [equation of state GERG2008 changed to PR by the "
               "downgrade of migration 0009]' WHERE eos = 'GERG2008'")
    with op.batch_alter_table("fluids") as batch:
        batch.drop_constraint("ck_fluids_eos", type_="check")
        batch.create_check_constraint("ck_fluids_eos", _CUBIC_ONLY)
