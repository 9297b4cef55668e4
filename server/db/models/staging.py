"""Uploaded files held between the check (preview) and the user's confirmation."""

from __future__ import annotations

import datetime as dt

from sqlalchemy import JSON, Boolean, ForeignKey, Integer, LargeBinary, String
from sqlalchemy.orm import Mapped, mapped_column

from ..base import Base, utcnow


class StagedUpload(Base):
    """The bytes of a checked file; ``id`` is a random token, rows expire."""

    __tablename__ = "staged_upload"
    id: Mapped[str] = mapped_column(String(64), primary_key=True)
    kind: Mapped[str] = mapped_column(String(30))
    filename: Mapped[str] = mapped_column(String(255), default="")
    data: Mapped[bytes] = mapped_column(LargeBinary)
    size_bytes: Mapped[int] = mapped_column(Integer)
    sha256: Mapped[str] = mapped_column(String(64))
    options: Mapped[dict] = mapped_column(JSON, default=dict)
    replace: Mapped[bool] = mapped_column(Boolean, default=False)
    digest: Mapped[str] = mapped_column(String(64), default="")
    created_by_id: Mapped[int | None] = mapped_column(
        ForeignKey("user_account.id", ondelete="CASCADE"), index=True
    )
    # "file": the bytes of a file that can be committed; "report": the problem list (CSV) of a
    # file that cannot (its bytes are never kept)
    content: Mapped[str] = mapped_column(String(10), default="file", server_default="file")
    created_at: Mapped[dt.datetime] = mapped_column(default=utcnow)
    expires_at: Mapped[dt.datetime] = mapped_column(index=True)
