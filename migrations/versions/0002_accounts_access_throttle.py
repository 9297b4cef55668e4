"""accounts: asset access, login throttling, token and session details

users may be limited to some assets (user_asset; all_assets is the default), failed logins are
kept to slow guessing, sessions keep their client, tokens their prefix and expiry.

Revision ID: 0002
Revises: 0001
Create Date: 2026-12-02 01:14:52.154509

Every revision must:
- run on both SQLite and PostgreSQL (use op.batch_alter_table for ALTERs);
- be reversible: downgrade() undoes upgrade() exactly;
- not import the application's models (copy the table shapes it needs);
- name constraints through the metadata naming convention (op.f(...)).
"""

from __future__ import annotations

from collections.abc import Sequence

import sqlalchemy as sa
from alembic import op

revision: str = "0002"
down_revision: str | Sequence[str] | None = "0001"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None


def upgrade() -> None:
    op.create_table(
        "login_attempt",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("at", sa.DateTime(timezone=True), nullable=False),
        sa.Column("username", sa.String(length=80), nullable=False),
        sa.Column("client_address", sa.String(length=64), nullable=False),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_login_attempt")),
    )
    with op.batch_alter_table("login_attempt", schema=None) as batch_op:
        batch_op.create_index(batch_op.f("ix_login_attempt_at"), ["at"], unique=False)
        batch_op.create_index(batch_op.f("ix_login_attempt_client_address"), ["client_address"], unique=False)
        batch_op.create_index(batch_op.f("ix_login_attempt_username"), ["username"], unique=False)

    op.create_table(
        "user_asset",
        sa.Column("user_id", sa.Integer(), nullable=False),
        sa.Column("asset_id", sa.Integer(), nullable=False),
        sa.ForeignKeyConstraint(
            ["asset_id"], ["asset.id"], name=op.f("fk_user_asset_asset_id_asset"), ondelete="CASCADE"
        ),
        sa.ForeignKeyConstraint(
            ["user_id"],
            ["user_account.id"],
            name=op.f("fk_user_asset_user_id_user_account"),
            ondelete="CASCADE",
        ),
        sa.PrimaryKeyConstraint("user_id", "asset_id", name=op.f("pk_user_asset")),
    )
    with op.batch_alter_table("api_token", schema=None) as batch_op:
        batch_op.add_column(
            sa.Column("token_prefix", sa.String(length=16), server_default="", nullable=False)
        )
        batch_op.add_column(sa.Column("expires_at", sa.DateTime(timezone=True), nullable=True))

    with op.batch_alter_table("auth_session", schema=None) as batch_op:
        batch_op.add_column(
            sa.Column("client_address", sa.String(length=64), server_default="", nullable=False)
        )
        batch_op.add_column(sa.Column("user_agent", sa.String(length=200), server_default="", nullable=False))

    with op.batch_alter_table("user_account", schema=None) as batch_op:
        batch_op.add_column(sa.Column("all_assets", sa.Boolean(), server_default=sa.true(), nullable=False))
        batch_op.add_column(
            sa.Column("must_change_password", sa.Boolean(), server_default=sa.false(), nullable=False)
        )
        batch_op.add_column(sa.Column("last_login_at", sa.DateTime(timezone=True), nullable=True))


def downgrade() -> None:
    with op.batch_alter_table("user_account", schema=None) as batch_op:
        batch_op.drop_column("last_login_at")
        batch_op.drop_column("must_change_password")
        batch_op.drop_column("all_assets")

    with op.batch_alter_table("auth_session", schema=None) as batch_op:
        batch_op.drop_column("user_agent")
        batch_op.drop_column("client_address")

    with op.batch_alter_table("api_token", schema=None) as batch_op:
        batch_op.drop_column("expires_at")
        batch_op.drop_column("token_prefix")

    op.drop_table("user_asset")
    with op.batch_alter_table("login_attempt", schema=None) as batch_op:
        batch_op.drop_index(batch_op.f("ix_login_attempt_username"))
        batch_op.drop_index(batch_op.f("ix_login_attempt_client_address"))
        batch_op.drop_index(batch_op.f("ix_login_attempt_at"))

    op.drop_table("login_attempt")
