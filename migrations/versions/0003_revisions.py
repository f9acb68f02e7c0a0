"""Calculation records: case revisions with a four-eyes review, and their append-only review steps.

Revision ID: 0003
Revises: 0002
Create Date: 2026-12-03

Every existing case gets revision A as a draft (with a "create" review step by the case's creator).

Triggers keep the records trustworthy whatever client runs the statement:

* an issued revision (approved, superseded, voided) never changes its content columns, its status
  may only go from approved to superseded or voided, and it cannot be deleted;
* the case result reported by a submitted or issued revision can be neither updated nor deleted;
* review steps are append-only: never updated, deleted only together with their revision (which the
  foreign key cascades when a case that never had an issued record is deleted).
"""
from __future__ import annotations

from collections.abc import Sequence

import sqlalchemy as sa
from alembic import op

revision: str = "0003"
down_revision: str | None = "0002"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None

TS = sa.DateTime(timezone=True)

REVISION_STATUSES = ("draft", "for check", "checked", "for approval", "approved", "superseded", "voided")
REVIEW_ACTIONS = ("create", "submit", "check", "send for approval", "approve", "reject", "supersede", "void")
ISSUED = "('approved', 'superseded', 'voided')"
#: Columns of an issued revision that never change (the models' REVISION_CONTENT_COLUMNS).
CONTENT_COLUMNS = ("id", "case_id", "letter", "number", "result_id", "case_version", "snapshot", "snapshot_sha256",
                   "record_pdf", "record_sha256", "preparer_id", "checker_id", "approver_id", "submitted_at",
                   "checked_at", "approved_at", "created_at")


def _in(values: Sequence[str]) -> str:
    return "(" + ", ".join(f"'{v}'" for v in values) + ")"


# -- SQLite ---------------------------------------------------------------------------------------------
_SQLITE_CONTENT_CHANGED = " OR ".join(f"NEW.{c} IS NOT OLD.{c}" for c in CONTENT_COLUMNS)
SQLITE_TRIGGERS = (
    f"""
    CREATE TRIGGER case_revisions_issued_content BEFORE UPDATE ON case_revisions
    WHEN OLD.status IN {ISSUED} AND ({_SQLITE_CONTENT_CHANGED})
    BEGIN
        SELECT RAISE(ABORT, 'case_revisions: an issued revision is immutable: UPDATE of its content refused');
    END
    """,
    f"""
    CREATE TRIGGER case_revisions_issued_status BEFORE UPDATE ON case_revisions
    WHEN OLD.status IN {ISSUED}
        AND NOT ((NEW.status = OLD.status AND NEW.closed_at IS OLD.closed_at)
                 OR (OLD.status = 'approved' AND NEW.status IN ('superseded', 'voided')))
    BEGIN
        SELECT RAISE(ABORT, 'case_revisions: an issued revision is immutable: status change refused');
    END
    """,
    f"""
    CREATE TRIGGER case_revisions_issued_no_delete BEFORE DELETE ON case_revisions
    WHEN OLD.status IN {ISSUED}
    BEGIN
        SELECT RAISE(ABORT, 'case_revisions: an issued revision is immutable: DELETE refused');
    END
    """,
    """
    CREATE TRIGGER case_results_reported_no_update BEFORE UPDATE ON case_results
    WHEN EXISTS (SELECT 1 FROM case_revisions WHERE result_id = OLD.id)
    BEGIN
        SELECT RAISE(ABORT, 'case_results: a result reported by a calculation record is immutable: UPDATE refused');
    END
    """,
    """
    CREATE TRIGGER case_results_reported_no_delete BEFORE DELETE ON case_results
    WHEN EXISTS (SELECT 1 FROM case_revisions WHERE result_id = OLD.id)
    BEGIN
        SELECT RAISE(ABORT, 'case_results: a result reported by a calculation record is immutable: DELETE refused');
    END
    """,
    """
    CREATE TRIGGER review_steps_no_update BEFORE UPDATE ON review_steps
    BEGIN
        SELECT RAISE(ABORT, 'review_steps is append-only: UPDATE refused');
    END
    """,
    """
    CREATE TRIGGER review_steps_no_delete BEFORE DELETE ON review_steps
    WHEN EXISTS (SELECT 1 FROM case_revisions WHERE id = OLD.revision_id)
    BEGIN
        SELECT RAISE(ABORT, 'review_steps is append-only: DELETE refused');
    END
    """,
)
SQLITE_DROP_TRIGGERS = tuple(f"DROP TRIGGER IF EXISTS {name}" for name in (
    "review_steps_no_delete", "review_steps_no_update", "case_results_reported_no_delete",
    "case_results_reported_no_update", "case_revisions_issued_no_delete", "case_revisions_issued_status",
    "case_revisions_issued_content"))

# -- PostgreSQL -----------------------------------------------------------------------------------------
_PG_NEW = ", ".join(f"NEW.{c}" for c in CONTENT_COLUMNS)
_PG_OLD = ", ".join(f"OLD.{c}" for c in CONTENT_COLUMNS)
POSTGRES_TRIGGERS = (
    f"""
    CREATE FUNCTION case_revisions_immutable() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
        IF TG_OP = 'DELETE' AND OLD.status NOT IN {ISSUED} THEN
            RETURN OLD;
        ELSIF OLD.status NOT IN {ISSUED} THEN
            RETURN NEW;
        ELSIF TG_OP = 'DELETE' THEN
            RAISE EXCEPTION 'case_revisions: an issued revision is immutable: DELETE refused (id %)', OLD.id
                USING ERRCODE = 'insufficient_privilege';
        END IF;
        IF ROW({_PG_NEW}) IS DISTINCT FROM ROW({_PG_OLD}) THEN
            RAISE EXCEPTION 'case_revisions: an issued revision is immutable: UPDATE of its content refused (id %)',
                OLD.id
                USING ERRCODE = 'insufficient_privilege';
        END IF;
        IF NOT ((NEW.status = OLD.status AND NEW.closed_at IS NOT DISTINCT FROM OLD.closed_at)
                OR (OLD.status = 'approved' AND NEW.status IN ('superseded', 'voided'))) THEN
            RAISE EXCEPTION 'case_revisions: an issued revision is immutable: status change % -> % refused (id %)',
                OLD.status, NEW.status, OLD.id
                USING ERRCODE = 'insufficient_privilege';
        END IF;
        RETURN NEW;
    END
    $$
    """,
    """
    CREATE TRIGGER case_revisions_immutable BEFORE UPDATE OR DELETE ON case_revisions
    FOR EACH ROW EXECUTE FUNCTION case_revisions_immutable()
    """,
    """
    CREATE FUNCTION case_results_reported_immutable() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
        IF EXISTS (SELECT 1 FROM case_revisions WHERE result_id = OLD.id) THEN
            RAISE EXCEPTION 'case_results: a result reported by a calculation record is immutable: % refused (id %)',
                TG_OP, OLD.id
                USING ERRCODE = 'insufficient_privilege';
        END IF;
        IF TG_OP = 'DELETE' THEN
            RETURN OLD;
        END IF;
        RETURN NEW;
    END
    $$
    """,
    """
    CREATE TRIGGER case_results_reported_immutable BEFORE UPDATE OR DELETE ON case_results
    FOR EACH ROW EXECUTE FUNCTION case_results_reported_immutable()
    """,
    """
    CREATE FUNCTION review_steps_append_only() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
        -- a step goes only with its revision (ON DELETE CASCADE runs after the revision row is gone)
        IF TG_OP = 'DELETE' AND NOT EXISTS (SELECT 1 FROM case_revisions WHERE id = OLD.revision_id) THEN
            RETURN OLD;
        END IF;
        RAISE EXCEPTION 'review_steps is append-only: % refused', TG_OP
            USING ERRCODE = 'insufficient_privilege';
    END
    $$
    """,
    """
    CREATE TRIGGER review_steps_no_update_delete BEFORE UPDATE OR DELETE ON review_steps
    FOR EACH ROW EXECUTE FUNCTION review_steps_append_only()
    """,
    """
    CREATE TRIGGER review_steps_no_truncate BEFORE TRUNCATE ON review_steps
    FOR EACH STATEMENT EXECUTE FUNCTION review_steps_append_only()
    """,
)
POSTGRES_DROP_TRIGGERS = (
    "DROP TRIGGER IF EXISTS review_steps_no_truncate ON review_steps",
    "DROP TRIGGER IF EXISTS review_steps_no_update_delete ON review_steps",
    "DROP FUNCTION IF EXISTS review_steps_append_only()",
    "DROP TRIGGER IF EXISTS case_results_reported_immutable ON case_results",
    "DROP FUNCTION IF EXISTS case_results_reported_immutable()",
    "DROP TRIGGER IF EXISTS case_revisions_immutable ON case_revisions",
    "DROP FUNCTION IF EXISTS case_revisions_immutable()",
)


def upgrade() -> None:
    op.create_table(
        "case_revisions",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("case_id", sa.Integer(), nullable=False),
        sa.Column("letter", sa.String(8), nullable=False),
        sa.Column("number", sa.Integer(), nullable=True),
        sa.Column("status", sa.String(16), nullable=False),
        sa.Column("result_id", sa.Integer(), nullable=True),
        sa.Column("case_version", sa.Integer(), nullable=True),
        sa.Column("snapshot", sa.Text(), nullable=True),
        sa.Column("snapshot_sha256", sa.String(64), nullable=True),
        sa.Column("record_pdf", sa.LargeBinary(), nullable=True),
        sa.Column("record_sha256", sa.String(64), nullable=True),
        sa.Column("preparer_id", sa.Integer(), nullable=True),
        sa.Column("checker_id", sa.Integer(), nullable=True),
        sa.Column("approver_id", sa.Integer(), nullable=True),
        sa.Column("submitted_at", TS, nullable=True),
        sa.Column("checked_at", TS, nullable=True),
        sa.Column("approved_at", TS, nullable=True),
        sa.Column("closed_at", TS, nullable=True),
        sa.Column("created_at", TS, nullable=False),
        sa.Column("version", sa.Integer(), nullable=False),
        sa.PrimaryKeyConstraint("id", name="pk_case_revisions"),
        sa.UniqueConstraint("case_id", "letter", name="uq_case_revisions_case_id_letter"),
        sa.UniqueConstraint("case_id", "number", name="uq_case_revisions_case_id_number"),
        sa.CheckConstraint("number IS NULL OR number >= 0", name="ck_case_revisions_number_not_negative"),
        sa.CheckConstraint("(number IS NULL) = (status NOT IN ('approved', 'superseded', 'voided'))",
                           name="ck_case_revisions_number_when_issued"),
        sa.CheckConstraint("status = 'draft' OR (result_id IS NOT NULL AND case_version IS NOT NULL"
                           " AND snapshot IS NOT NULL AND snapshot_sha256 IS NOT NULL AND record_pdf IS NOT NULL"
                           " AND record_sha256 IS NOT NULL AND preparer_id IS NOT NULL AND submitted_at IS NOT NULL)",
                           name="ck_case_revisions_content_when_submitted"),
        sa.CheckConstraint(f"status IN {_in(REVISION_STATUSES)}", name="ck_case_revisions_revision_status"),
        sa.ForeignKeyConstraint(["case_id"], ["cases.id"], name="fk_case_revisions_case_id_cases",
                                ondelete="CASCADE"),
        sa.ForeignKeyConstraint(["result_id"], ["case_results.id"], name="fk_case_revisions_result_id_case_results"),
        sa.ForeignKeyConstraint(["preparer_id"], ["users.id"], name="fk_case_revisions_preparer_id_users"),
        sa.ForeignKeyConstraint(["checker_id"], ["users.id"], name="fk_case_revisions_checker_id_users"),
        sa.ForeignKeyConstraint(["approver_id"], ["users.id"], name="fk_case_revisions_approver_id_users"),
    )
    op.create_index("ix_case_revisions_case_id", "case_revisions", ["case_id"])
    op.create_index("ix_case_revisions_result_id", "case_revisions", ["result_id"])
    op.create_index("ix_case_revisions_record_sha256", "case_revisions", ["record_sha256"])   # file -> record
    op.create_table(
        "review_steps",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("revision_id", sa.Integer(), nullable=False),
        sa.Column("action", sa.String(24), nullable=False),
        sa.Column("from_status", sa.String(16), nullable=True),
        sa.Column("to_status", sa.String(16), nullable=False),
        sa.Column("user_id", sa.Integer(), nullable=False),
        sa.Column("at", TS, nullable=False),
        sa.Column("comment", sa.Text(), nullable=False),
        sa.PrimaryKeyConstraint("id", name="pk_review_steps"),
        sa.CheckConstraint(f"action IN {_in(REVIEW_ACTIONS)}", name="ck_review_steps_review_action"),
        sa.CheckConstraint(f"from_status IN {_in(REVISION_STATUSES)}", name="ck_review_steps_from_status"),
        sa.CheckConstraint(f"to_status IN {_in(REVISION_STATUSES)}", name="ck_review_steps_to_status"),
        sa.ForeignKeyConstraint(["revision_id"], ["case_revisions.id"],
                                name="fk_review_steps_revision_id_case_revisions", ondelete="CASCADE"),
        sa.ForeignKeyConstraint(["user_id"], ["users.id"], name="fk_review_steps_user_id_users"),
    )
    op.create_index("ix_review_steps_revision_id", "review_steps", ["revision_id"])

    # revision A (draft) of every existing case, created by the case's creator; the case list filters
    # by Case.status, which mirrors the current revision's status from now on
    op.execute("INSERT INTO case_revisions (case_id, letter, status, created_at, version) "
               "SELECT id, 'A', 'draft', CURRENT_TIMESTAMP, 1 FROM cases ORDER BY id")
    op.execute("INSERT INTO review_steps (revision_id, action, from_status, to_status, user_id, at, comment) "
               "SELECT r.id, 'create', NULL, 'draft', c.created_by_id, CURRENT_TIMESTAMP, "
               "'revision A of a case that existed before calculation records (migration 0003)' "
               "FROM case_revisions r JOIN cases c ON c.id = r.case_id ORDER BY r.id")
    op.execute("UPDATE cases SET status = 'draft' WHERE status <> 'draft'")

    dialect = op.get_bind().dialect.name
    if dialect == "postgresql":
        for sql in POSTGRES_TRIGGERS:
            op.execute(sql)
    elif dialect == "sqlite":
        for sql in SQLITE_TRIGGERS:
            op.execute(sql)
    else:  # issued records must not be left without their database-side protection
        raise NotImplementedError(f"record triggers are written for PostgreSQL and SQLite, not {dialect}")


def downgrade() -> None:
    dialect = op.get_bind().dialect.name
    for sql in POSTGRES_DROP_TRIGGERS if dialect == "postgresql" else SQLITE_DROP_TRIGGERS:
        op.execute(sql)
    op.drop_index("ix_review_steps_revision_id", table_name="review_steps")
    op.drop_table("review_steps")
    op.drop_index("ix_case_revisions_record_sha256", table_name="case_revisions")
    op.drop_index("ix_case_revisions_result_id", table_name="case_revisions")
    op.drop_index("ix_case_revisions_case_id", table_name="case_revisions")
    op.drop_table("case_revisions")
