"""Case-kind parameters and a site's default margin.

``cases.parameters`` holds the inputs a case kind declares that have no column of their own: scalar
fields (SI) and structured inputs (flare header sections, other relief sources, settle-out volumes, the
generated credible cases switched off with their reasons).  ``sites.default_margin_k`` is the margin a
new case of the site takes when none is entered, with the site's reason in ``default_margin_basis``.

Revision ID: 0005
Revises: 0004
Create Date: 2026-12-04
"""
from __future__ import annotations

from collections.abc import Sequence

import sqlalchemy as sa
from alembic import op

revision: str = "0005"
down_revision: str | None = "0004"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None


def upgrade() -> None:
    with op.batch_alter_table("cases") as batch:
        batch.add_column(sa.Column("parameters", sa.JSON(), nullable=True))
    with op.batch_alter_table("sites") as batch:
        batch.add_column(sa.Column("default_margin_k", sa.Float(), nullable=True))
        batch.add_column(sa.Column("default_margin_basis", sa.Text(), nullable=False, server_default=""))


def downgrade() -> None:
    with op.batch_alter_table("sites") as batch:
        batch.drop_column("default_margin_basis")
        batch.drop_column("default_margin_k")
    with op.batch_alter_table("cases") as batch:
        batch.drop_column("parameters")
