"""Team settings edited by administrators in the app (one row per setting that was set)."""

from __future__ import annotations

import datetime as dt

from sqlalchemy import JSON, ForeignKey, String
from sqlalchemy.orm import Mapped, mapped_column

from ..base import Base, utcnow


class TeamSetting(Base):
    """A setting's value as JSON. A key without a row falls back to the environment's setting
    (``server/settings.py``) or the code's default; see ``services/team_settings.py``."""

    __tablename__ = "team_setting"
    key: Mapped[str] = mapped_column(String(80), primary_key=True)
    value: Mapped[object] = mapped_column(JSON)
    updated_at: Mapped[dt.datetime] = mapped_column(default=utcnow)
    updated_by_id: Mapped[int | None] = mapped_column(ForeignKey("user_account.id", ondelete="SET NULL"))
