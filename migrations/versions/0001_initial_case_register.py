"""Initial case register: users, sites, units, fluids, materials, cases, case results, append-only audit log.

Revision ID: 0001
Revises:
Create Date: 2026-12-01

The audit log is made append-only in the database itself: triggers refuse UPDATE and DELETE (and
TRUNCATE on PostgreSQL) of its rows, whatever client runs the statement.
"""
from __future__ import annotations

from collections.abc import Sequence

import sqlalchemy as sa
from alembic import op

revision: str = "0001"
down_revision: str | None = None
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None

TS = sa.DateTime(timezone=True)

POSTGRES_TRIGGERS = (
    """
    CREATE FUNCTION audit_log_append_only() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
        RAISE EXCEPTION 'audit_log is append-only: % refused', TG_OP
            USING ERRCODE = 'insufficient_privilege';
    END
    $$
    """,
    """
    CREATE TRIGGER audit_log_no_update_delete BEFORE UPDATE OR DELETE ON audit_log
    FOR EACH ROW EXECUTE FUNCTION audit_log_append_only()
    """,
    """
    CREATE TRIGGER audit_log_no_truncate BEFORE TRUNCATE ON audit_log
    FOR EACH STATEMENT EXECUTE FUNCTION audit_log_append_only()
    """,
)
POSTGRES_DROP_TRIGGERS = (
    "DROP TRIGGER IF EXISTS audit_log_no_truncate ON audit_log",
    "DROP TRIGGER IF EXISTS audit_log_no_update_delete ON audit_log",
    "DROP FUNCTION IF EXISTS audit_log_append_only()",
)
SQLITE_TRIGGERS = (
    """
    CREATE TRIGGER audit_log_no_update BEFORE UPDATE ON audit_log
    BEGIN
        SELECT RAISE(ABORT, 'audit_log is append-only: UPDATE refused');
    END
    """,
    """
    CREATE TRIGGER audit_log_no_delete BEFORE DELETE ON audit_log
    BEGIN
        SELECT RAISE(ABORT, 'audit_log is append-only: DELETE refused');
    END
    """,
)
SQLITE_DROP_TRIGGERS = (
    "DROP TRIGGER IF EXISTS audit_log_no_delete",
    "DROP TRIGGER IF EXISTS audit_log_no_update",
)


def upgrade() -> None:
    op.create_table(
        "users",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("email", sa.String(254), nullable=False),
        sa.Column("name", sa.String(200), nullable=False),
        sa.Column("role", sa.String(16), nullable=False),
        sa.Column("password_hash", sa.String(255), nullable=False),
        sa.Column("api_token_hash", sa.String(255), nullable=True),
        sa.Column("active", sa.Boolean(), nullable=False),
        sa.Column("created_at", TS, nullable=False),
        sa.PrimaryKeyConstraint("id", name="pk_users"),
        sa.UniqueConstraint("email", name="uq_users_email"),
        sa.UniqueConstraint("api_token_hash", name="uq_users_api_token_hash"),
        sa.CheckConstraint("role IN ('engineer', 'checker', 'approver', 'admin')", name="ck_users_user_role"),
    )
    op.create_table(
        "sites",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("name", sa.String(200), nullable=False),
        sa.Column("description", sa.Text(), nullable=False),
        sa.Column("created_at", TS, nullable=False),
        sa.PrimaryKeyConstraint("id", name="pk_sites"),
        sa.UniqueConstraint("name", name="uq_sites_name"),
    )
    op.create_table(
        "units",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("site_id", sa.Integer(), nullable=False),
        sa.Column("name", sa.String(200), nullable=False),
        sa.Column("description", sa.Text(), nullable=False),
        sa.Column("created_at", TS, nullable=False),
        sa.PrimaryKeyConstraint("id", name="pk_units"),
        sa.UniqueConstraint("site_id", "name", name="uq_units_site_id_name"),
        sa.ForeignKeyConstraint(["site_id"], ["sites.id"], name="fk_units_site_id_sites"),
    )
    op.create_index("ix_units_site_id", "units", ["site_id"])
    op.create_table(
        "fluids",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("name", sa.String(200), nullable=False),
        sa.Column("composition", sa.JSON(), nullable=False),
        sa.Column("eos", sa.String(8), nullable=False),
        sa.Column("kij_mode", sa.String(8), nullable=False),
        sa.Column("notes", sa.Text(), nullable=False),
        sa.Column("created_by_id", sa.Integer(), nullable=False),
        sa.Column("updated_by_id", sa.Integer(), nullable=False),
        sa.Column("created_at", TS, nullable=False),
        sa.Column("updated_at", TS, nullable=False),
        sa.PrimaryKeyConstraint("id", name="pk_fluids"),
        sa.UniqueConstraint("name", name="uq_fluids_name"),
        sa.CheckConstraint("eos IN ('PR', 'SRK', 'RK', 'VDW')", name="ck_fluids_eos"),
        sa.CheckConstraint("kij_mode IN ('table', 'zero')", name="ck_fluids_kij_mode"),
        sa.ForeignKeyConstraint(["created_by_id"], ["users.id"], name="fk_fluids_created_by_id_users"),
        sa.ForeignKeyConstraint(["updated_by_id"], ["users.id"], name="fk_fluids_updated_by_id_users"),
    )
    op.create_table(
        "materials",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("name", sa.String(200), nullable=False),
        sa.Column("specification", sa.Text(), nullable=False),
        sa.Column("min_metal_temperature_k", sa.Float(), nullable=False),
        sa.Column("notes", sa.Text(), nullable=False),
        sa.Column("source", sa.Text(), nullable=False),
        sa.Column("seeded", sa.Boolean(), nullable=False),
        sa.Column("editable", sa.Boolean(), nullable=False),
        sa.Column("created_at", TS, nullable=False),
        sa.Column("updated_at", TS, nullable=False),
        sa.PrimaryKeyConstraint("id", name="pk_materials"),
        sa.UniqueConstraint("name", name="uq_materials_name"),
    )
    op.create_table(
        "cases",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("unit_id", sa.Integer(), nullable=False),
        sa.Column("tag", sa.String(64), nullable=False),
        sa.Column("service", sa.Text(), nullable=False),
        sa.Column("kind", sa.String(32), nullable=False),
        sa.Column("fluid_id", sa.Integer(), nullable=False),
        sa.Column("inlet_pressure_pa", sa.Float(), nullable=False),
        sa.Column("inlet_temperature_k", sa.Float(), nullable=False),
        sa.Column("outlet_pressure_pa", sa.Float(), nullable=False),
        sa.Column("inlet_temperature_min_k", sa.Float(), nullable=True),
        sa.Column("inlet_pressure_max_pa", sa.Float(), nullable=True),
        sa.Column("mass_flow_kg_per_s", sa.Float(), nullable=True),
        sa.Column("material_id", sa.Integer(), nullable=True),
        sa.Column("mdmt_k", sa.Float(), nullable=True),
        sa.Column("mdmt_source", sa.String(250), nullable=False),
        sa.Column("cold_limit_k", sa.Float(), nullable=True),
        sa.Column("margin_k", sa.Float(), nullable=False),
        sa.Column("basis", sa.Text(), nullable=False),
        sa.Column("references", sa.Text(), nullable=False),
        sa.Column("display_units", sa.JSON(), nullable=False),
        sa.Column("p_atm_pa", sa.Float(), nullable=False),
        sa.Column("status", sa.String(32), nullable=False),
        sa.Column("created_by_id", sa.Integer(), nullable=False),
        sa.Column("updated_by_id", sa.Integer(), nullable=False),
        sa.Column("created_at", TS, nullable=False),
        sa.Column("updated_at", TS, nullable=False),
        sa.Column("version", sa.Integer(), nullable=False),
        sa.PrimaryKeyConstraint("id", name="pk_cases"),
        sa.CheckConstraint("inlet_pressure_pa > 0", name="ck_cases_inlet_pressure_positive"),
        sa.CheckConstraint("inlet_temperature_k > 0", name="ck_cases_inlet_temperature_positive"),
        sa.CheckConstraint("outlet_pressure_pa > 0", name="ck_cases_outlet_pressure_positive"),
        sa.CheckConstraint("outlet_pressure_pa <= inlet_pressure_pa", name="ck_cases_outlet_not_above_inlet"),
        sa.CheckConstraint("margin_k >= 0", name="ck_cases_margin_not_negative"),
        sa.CheckConstraint("p_atm_pa > 0", name="ck_cases_p_atm_positive"),
        sa.CheckConstraint("kind IN ('control_valve', 'relief_valve', 'blowdown_valve', 'choke', 'other')",
                           name="ck_cases_case_kind"),
        sa.ForeignKeyConstraint(["unit_id"], ["units.id"], name="fk_cases_unit_id_units"),
        sa.ForeignKeyConstraint(["fluid_id"], ["fluids.id"], name="fk_cases_fluid_id_fluids"),
        sa.ForeignKeyConstraint(["material_id"], ["materials.id"], name="fk_cases_material_id_materials"),
        sa.ForeignKeyConstraint(["created_by_id"], ["users.id"], name="fk_cases_created_by_id_users"),
        sa.ForeignKeyConstraint(["updated_by_id"], ["users.id"], name="fk_cases_updated_by_id_users"),
    )
    op.create_index("ix_cases_unit_id", "cases", ["unit_id"])
    op.create_index("ix_cases_fluid_id", "cases", ["fluid_id"])
    op.create_index("ix_cases_tag", "cases", ["tag"])
    op.create_index("ix_cases_status", "cases", ["status"])
    op.create_table(
        "case_results",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("case_id", sa.Integer(), nullable=False),
        sa.Column("case_version", sa.Integer(), nullable=False),
        sa.Column("computed_at", TS, nullable=False),
        sa.Column("computed_by_id", sa.Integer(), nullable=False),
        sa.Column("inputs", sa.JSON(), nullable=False),
        sa.Column("eos", sa.String(8), nullable=False),
        sa.Column("kij_basis", sa.Text(), nullable=False),
        sa.Column("component_data_version", sa.String(100), nullable=False),
        sa.Column("kij_data_version", sa.String(100), nullable=False),
        sa.Column("software_version", sa.String(50), nullable=False),
        sa.Column("converged", sa.Boolean(), nullable=False),
        sa.Column("message", sa.Text(), nullable=False),
        sa.Column("warnings", sa.JSON(), nullable=False),
        sa.Column("results", sa.JSON(), nullable=False),
        sa.Column("t_out_min_k", sa.Float(), nullable=True),
        sa.Column("outcome", sa.String(32), nullable=True),
        sa.PrimaryKeyConstraint("id", name="pk_case_results"),
        sa.ForeignKeyConstraint(["case_id"], ["cases.id"], name="fk_case_results_case_id_cases"),
        sa.ForeignKeyConstraint(["computed_by_id"], ["users.id"], name="fk_case_results_computed_by_id_users"),
    )
    op.create_index("ix_case_results_case_id", "case_results", ["case_id"])
    op.create_index("ix_case_results_outcome", "case_results", ["outcome"])
    op.create_table(
        "audit_log",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("at", TS, nullable=False),
        sa.Column("user_id", sa.Integer(), nullable=True),
        sa.Column("entity", sa.String(64), nullable=False),
        sa.Column("entity_id", sa.Integer(), nullable=True),
        sa.Column("action", sa.String(32), nullable=False),
        sa.Column("field", sa.String(64), nullable=True),
        sa.Column("old_value", sa.Text(), nullable=True),
        sa.Column("new_value", sa.Text(), nullable=True),
        sa.PrimaryKeyConstraint("id", name="pk_audit_log"),
        sa.ForeignKeyConstraint(["user_id"], ["users.id"], name="fk_audit_log_user_id_users"),
    )
    op.create_index("ix_audit_log_at", "audit_log", ["at"])
    op.create_index("ix_audit_log_entity_entity_id", "audit_log", ["entity", "entity_id"])

    dialect = op.get_bind().dialect.name
    if dialect == "postgresql":
        for sql in POSTGRES_TRIGGERS:
            op.execute(sql)
    elif dialect == "sqlite":
        for sql in SQLITE_TRIGGERS:
            op.execute(sql)
    else:  # the audit log must not be left without its database-side protection
        raise NotImplementedError(f"append-only audit triggers are written for PostgreSQL and SQLite, not {dialect}")


def downgrade() -> None:
    dialect = op.get_bind().dialect.name
    for sql in POSTGRES_DROP_TRIGGERS if dialect == "postgresql" else SQLITE_DROP_TRIGGERS:
        op.execute(sql)
    op.drop_index("ix_audit_log_entity_entity_id", table_name="audit_log")
    op.drop_index("ix_audit_log_at", table_name="audit_log")
    op.drop_table("audit_log")
    op.drop_index("ix_case_results_outcome", table_name="case_results")
    op.drop_index("ix_case_results_case_id", table_name="case_results")
    op.drop_table("case_results")
    op.drop_index("ix_cases_status", table_name="cases")
    op.drop_index("ix_cases_tag", table_name="cases")
    op.drop_index("ix_cases_fluid_id", table_name="cases")
    op.drop_index("ix_cases_unit_id", table_name="cases")
    op.drop_table("cases")
    op.drop_table("materials")
    op.drop_table("fluids")
    op.drop_index("ix_units_site_id", table_name="units")
    op.drop_table("units")
    op.drop_table("sites")
    op.drop_table("users")
