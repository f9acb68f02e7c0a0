"""Screening: operating ranges, hydrate and relief-valve inputs on cases; the screening stored with each result.

Revision ID: 0002
Revises: 0001
Create Date: 2026-12-02
"""
from __future__ import annotations

from collections.abc import Sequence

import sqlalchemy as sa
from alembic import op

revision: str = "0002"
down_revision: str | None = "0001"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None

CASE_FLOATS = ("outlet_pressure_min_pa", "set_pressure_pa", "overpressure_fraction", "superimposed_back_pressure_pa",
               "built_up_back_pressure_pa", "header_limit_k")


def upgrade() -> None:
    with op.batch_alter_table("cases") as batch:
        for name in CASE_FLOATS:
            batch.add_column(sa.Column(name, sa.Float(), nullable=True))
        batch.add_column(sa.Column("water_saturated", sa.Boolean(), nullable=False, server_default=sa.false()))
        batch.add_column(sa.Column("hydrate_inhibitor", sa.String(32), nullable=False, server_default="methanol"))
    with op.batch_alter_table("case_results") as batch:
        batch.add_column(sa.Column("screening", sa.JSON(), nullable=True))


def downgrade() -> None:
    with op.batch_alter_table("case_results") as batch:
        batch.drop_column("screening")
    with op.batch_alter_table("cases") as batch:
        batch.drop_column("hydrate_inhibitor")
        batch.drop_column("water_saturated")
        for name in reversed(CASE_FLOATS):
            batch.drop_column(name)
