"""Batch screening jobs: an uploaded letdown list, its progress and its results.

Revision ID: 0004
Revises: 0003
Create Date: 2026-12-04
"""
from __future__ import annotations

from collections.abc import Sequence

import sqlalchemy as sa
from alembic import op

revision: str = "0004"
down_revision: str | None = "0003"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None

TS = sa.DateTime(timezone=True)
BATCH_STATUSES = ("queued", "running", "done", "failed")


def upgrade() -> None:
    op.create_table(
        "batch_jobs",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("created_by_id", sa.Integer(), nullable=False),
        sa.Column("created_at", TS, nullable=False),
        sa.Column("started_at", TS, nullable=True),
        sa.Column("finished_at", TS, nullable=True),
        sa.Column("heartbeat_at", TS, nullable=True),
        sa.Column("filename", sa.String(255), nullable=False),
        sa.Column("status", sa.String(16), nullable=False),
        sa.Column("total", sa.Integer(), nullable=False),
        sa.Column("done", sa.Integer(), nullable=False),
        sa.Column("options", sa.JSON(), nullable=False),
        sa.Column("input_file", sa.LargeBinary(), nullable=False),
        sa.Column("bad_rows", sa.LargeBinary(), nullable=True),
        sa.Column("results", sa.JSON(), nullable=True),
        sa.Column("counts", sa.JSON(), nullable=True),
        sa.Column("reading", sa.JSON(), nullable=True),
        sa.Column("message", sa.Text(), nullable=False),
        sa.Column("runner", sa.String(8), nullable=False),
        sa.PrimaryKeyConstraint("id", name="pk_batch_jobs"),
        sa.CheckConstraint("runner IN ('thread', 'rq')", name="ck_batch_jobs_runner"),
        sa.CheckConstraint("total >= 0 AND done >= 0", name="ck_batch_jobs_counters_not_negative"),
        sa.CheckConstraint("status IN ('" + "', '".join(BATCH_STATUSES) + "')", name="ck_batch_jobs_batch_status"),
        sa.ForeignKeyConstraint(["created_by_id"], ["users.id"], name="fk_batch_jobs_created_by_id_users"),
    )
    op.create_index("ix_batch_jobs_created_by_id", "batch_jobs", ["created_by_id"])
    op.create_index("ix_batch_jobs_status", "batch_jobs", ["status"])


def downgrade() -> None:
    op.drop_index("ix_batch_jobs_status", table_name="batch_jobs")
    op.drop_index("ix_batch_jobs_created_by_id", table_name="batch_jobs")
    op.drop_table("batch_jobs")
