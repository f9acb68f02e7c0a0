"""Materials carry what the codes use for their cold limit, and the register's MDMT curve table.

``materials``: the exemption curve and its code, the governing thickness, the impact test temperature, the
PWHT credit, and for the coincident stress ratio the allowable stress, outside diameter, corrosion allowance,
joint efficiency and the stress from other loads; the typed minimum metal temperature may now be empty (a material known by its curve).
``mdmt_curve_points``: the curve table as admins changed it (empty: the shipped table is used).

Revision ID: 0006
Revises: 0005
Create Date: 2026-12-04
"""
from __future__ import annotations

from collections.abc import Sequence

import sqlalchemy as sa
from alembic import op

revision: str = "0006"
down_revision: str | None = "0005"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None


def upgrade() -> None:
    with op.batch_alter_table("materials") as batch:
        batch.alter_column("min_metal_temperature_k", existing_type=sa.Float(), nullable=True)
        batch.add_column(sa.Column("exemption_curve", sa.String(4), nullable=False, server_default=""))
        batch.add_column(sa.Column("curve_code", sa.String(16), nullable=False, server_default="VIII-1"))
        batch.add_column(sa.Column("thickness_m", sa.Float(), nullable=True))
        batch.add_column(sa.Column("impact_test_temperature_k", sa.Float(), nullable=True))
        batch.add_column(sa.Column("pwht_credit", sa.Boolean(), nullable=False, server_default=sa.false()))
        batch.add_column(sa.Column("allowable_stress_pa", sa.Float(), nullable=True))
        batch.add_column(sa.Column("outside_diameter_m", sa.Float(), nullable=True))
        batch.add_column(sa.Column("corrosion_allowance_m", sa.Float(), nullable=False, server_default="0"))
        batch.add_column(sa.Column("joint_efficiency", sa.Float(), nullable=False, server_default="1"))
        batch.add_column(sa.Column("other_stress_pa", sa.Float(), nullable=False, server_default="0"))
    op.create_table(
        "mdmt_curve_points",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("position", sa.Integer(), nullable=False),
        sa.Column("code", sa.String(16), nullable=False),
        sa.Column("table_name", sa.String(16), nullable=False),
        sa.Column("curve", sa.String(32), nullable=False),
        sa.Column("x", sa.Float(), nullable=True),
        sa.Column("value", sa.Float(), nullable=False),
        sa.Column("unit", sa.String(8), nullable=False),
        sa.Column("source", sa.Text(), nullable=False),
        sa.Column("edition", sa.String(64), nullable=False),
        sa.Column("provenance", sa.Text(), nullable=False),
        sa.Column("updated_at", sa.DateTime(timezone=True), nullable=False),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_mdmt_curve_points")),
    )


def downgrade() -> None:
    op.drop_table("mdmt_curve_points")
    # a material known only by its curve gets the warmest limit allowed (200 degC): without its curve it would
    # otherwise pass anything, and a downgrade must fail closed
    op.execute("UPDATE materials SET min_metal_temperature_k = 473.15 WHERE min_metal_temperature_k IS NULL")
    with op.batch_alter_table("materials") as batch:
        for name in ("other_stress_pa", "joint_efficiency", "corrosion_allowance_m", "outside_diameter_m", "allowable_stress_pa",
                     "pwht_credit", "impact_test_temperature_k", "thickness_m", "curve_code", "exemption_curve"):
            batch.drop_column(name)
        batch.alter_column("min_metal_temperature_k", existing_type=sa.Float(), nullable=False)
