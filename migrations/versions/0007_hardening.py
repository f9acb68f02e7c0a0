"""Hardening: versions on every editable record, a session generation per user, restarts of batch jobs.

``version`` on users, sites, units, fluids and materials is the optimistic-concurrency counter (as on cases):
an update names the version it was based on and is refused when someone saved in between.
``users.session_generation`` ends every session of a user at once (sign-out, password change): a session
carries the generation it was signed in with and is valid only while it is the user's current one.
``batch_jobs.attempts`` counts how often a job was started, so that a job whose worker died is requeued once
and then marked failed with the reason.

Revision ID: 0007
Revises: 0006
Create Date: 2026-12-04
"""
from __future__ import annotations

from collections.abc import Sequence

import sqlalchemy as sa
from alembic import op

revision: str = "0007"
down_revision: str | None = "0006"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None

VERSIONED = ("users", "sites", "units", "fluids", "materials")


def upgrade() -> None:
    for table in VERSIONED:
        with op.batch_alter_table(table) as batch:
            batch.add_column(sa.Column("version", sa.Integer(), nullable=False, server_default="1"))
    with op.batch_alter_table("users") as batch:
        batch.add_column(sa.Column("session_generation", sa.Integer(), nullable=False, server_default="0"))
    with op.batch_alter_table("batch_jobs") as batch:
        batch.add_column(sa.Column("attempts", sa.Integer(), nullable=False, server_default="0"))


def downgrade() -> None:
    with op.batch_alter_table("batch_jobs") as batch:
        batch.drop_column("attempts")
    with op.batch_alter_table("users") as batch:
        batch.drop_column("session_generation")
    for table in reversed(VERSIONED):
        with op.batch_alter_table(table) as batch:
            batch.drop_column("version")
