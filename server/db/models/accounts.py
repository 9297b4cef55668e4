"""Users, their asset access, sessions, API tokens, login throttling and the audit trail."""

from __future__ import annotations

import datetime as dt

from sqlalchemy import JSON, Boolean, CheckConstraint, ForeignKey, Integer, String, Text, false, true
from sqlalchemy.orm import Mapped, mapped_column

from ..base import Base, utcnow

ROLES = ("viewer", "engineer", "approver", "admin")


class User(Base):
    """A person. ``all_assets`` (the default for a team) lets them see every asset; otherwise
    only the assets listed in ``user_asset``."""

    __tablename__ = "user_account"
    __table_args__ = (
        CheckConstraint("role IN ('viewer', 'engineer', 'approver', 'admin')", name="role_known"),
        CheckConstraint("unit_system IS NULL OR unit_system IN ('oilfield', 'si')", name="unit_system_known"),
    )
    id: Mapped[int] = mapped_column(primary_key=True)
    username: Mapped[str] = mapped_column(String(80), unique=True)
    display_name: Mapped[str] = mapped_column(String(120), default="")
    password_hash: Mapped[str | None] = mapped_column(String(255))
    role: Mapped[str] = mapped_column(String(20), default="viewer")
    is_active: Mapped[bool] = mapped_column(Boolean, default=True)
    failed_logins: Mapped[int] = mapped_column(Integer, default=0)
    created_at: Mapped[dt.datetime] = mapped_column(default=utcnow)
    password_changed_at: Mapped[dt.datetime | None] = mapped_column()
    all_assets: Mapped[bool] = mapped_column(Boolean, default=True, server_default=true())
    must_change_password: Mapped[bool] = mapped_column(Boolean, default=False, server_default=false())
    last_login_at: Mapped[dt.datetime | None] = mapped_column()
    unit_system: Mapped[str | None] = mapped_column(String(10))  # None: the team's default


class UserAsset(Base):
    """An asset a user may access when the user is not allowed all assets."""

    __tablename__ = "user_asset"
    user_id: Mapped[int] = mapped_column(ForeignKey("user_account.id", ondelete="CASCADE"), primary_key=True)
    asset_id: Mapped[int] = mapped_column(ForeignKey("asset.id", ondelete="CASCADE"), primary_key=True)


class AuthSession(Base):
    """A server-side login session; only the token's hash is stored."""

    __tablename__ = "auth_session"
    id: Mapped[int] = mapped_column(primary_key=True)
    token_hash: Mapped[str] = mapped_column(String(64), unique=True)
    user_id: Mapped[int] = mapped_column(ForeignKey("user_account.id", ondelete="CASCADE"), index=True)
    csrf_token: Mapped[str] = mapped_column(String(64))
    created_at: Mapped[dt.datetime] = mapped_column(default=utcnow)
    last_seen_at: Mapped[dt.datetime] = mapped_column(default=utcnow)
    revoked_at: Mapped[dt.datetime | None] = mapped_column()
    client_address: Mapped[str] = mapped_column(String(64), default="", server_default="")
    user_agent: Mapped[str] = mapped_column(String(200), default="", server_default="")


class ApiToken(Base):
    """A bearer token for scripts: scoped, revocable, stored as a hash."""

    __tablename__ = "api_token"
    id: Mapped[int] = mapped_column(primary_key=True)
    user_id: Mapped[int] = mapped_column(ForeignKey("user_account.id", ondelete="CASCADE"), index=True)
    name: Mapped[str] = mapped_column(String(120))
    token_hash: Mapped[str] = mapped_column(String(64), unique=True)
    scopes: Mapped[list] = mapped_column(JSON, default=list)
    created_at: Mapped[dt.datetime] = mapped_column(default=utcnow)
    last_used_at: Mapped[dt.datetime | None] = mapped_column()
    revoked_at: Mapped[dt.datetime | None] = mapped_column()
    token_prefix: Mapped[str] = mapped_column(String(16), default="", server_default="")
    expires_at: Mapped[dt.datetime | None] = mapped_column()


class LoginAttempt(Base):
    """A failed login, kept for a while to slow down guessing (per account and per address)."""

    __tablename__ = "login_attempt"
    id: Mapped[int] = mapped_column(primary_key=True)
    at: Mapped[dt.datetime] = mapped_column(default=utcnow, index=True)
    username: Mapped[str] = mapped_column(String(80), index=True)
    client_address: Mapped[str] = mapped_column(String(64), index=True)


class AuditEvent(Base):
    """Who changed what, when, with the values before and after."""

    __tablename__ = "audit_event"
    id: Mapped[int] = mapped_column(primary_key=True)
    at: Mapped[dt.datetime] = mapped_column(default=utcnow, index=True)
    user_id: Mapped[int | None] = mapped_column(ForeignKey("user_account.id", ondelete="SET NULL"))
    actor: Mapped[str] = mapped_column(String(120), default="system")
    action: Mapped[str] = mapped_column(String(60))
    entity_type: Mapped[str] = mapped_column(String(60))
    entity_id: Mapped[int | None] = mapped_column(Integer)
    field_id: Mapped[int | None] = mapped_column(ForeignKey("field.id", ondelete="SET NULL"), index=True)
    before: Mapped[dict | None] = mapped_column(JSON)
    after: Mapped[dict | None] = mapped_column(JSON)
    summary: Mapped[str] = mapped_column(Text, default="")
