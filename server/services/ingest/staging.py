"""Checked files held server-side between the preview and the user's confirmation.

The browser keeps only a random token; the bytes stay here until they are stored,
replaced by a new check, or expire.
"""

from __future__ import annotations

import datetime as dt
import hashlib
import secrets

from sqlalchemy import delete
from sqlalchemy.orm import Session

from ...db.base import utcnow
from ...db.models import StagedUpload
from ..audit import Actor
from .parse import ReadOptions

STAGED_FOR = dt.timedelta(hours=2)


def stage(
    session: Session,
    *,
    kind: str,
    data: bytes,
    filename: str,
    options: ReadOptions,
    replace: bool,
    digest: str,
    actor: Actor,
) -> str:
    """Keep the file and return its token; expired files are removed on the way."""
    session.execute(delete(StagedUpload).where(StagedUpload.expires_at < utcnow()))
    token = secrets.token_urlsafe(32)
    session.add(
        StagedUpload(
            id=token,
            kind=kind,
            filename=filename[:255],
            data=data,
            size_bytes=len(data),
            sha256=hashlib.sha256(data).hexdigest(),
            options=options.as_dict(),
            replace=replace,
            digest=digest,
            created_by_id=actor.user_id,
            expires_at=utcnow() + STAGED_FOR,
        )
    )
    session.flush()
    return token


def load_staged(session: Session, token: str, actor: Actor) -> StagedUpload | None:
    """The staged file for ``token`` if it exists, has not expired and belongs to ``actor``."""
    if not token or len(token) > 64:
        return None
    staged = session.get(StagedUpload, token)
    if staged is None or staged.created_by_id != actor.user_id:
        return None
    expires = staged.expires_at if staged.expires_at.tzinfo else staged.expires_at.replace(tzinfo=dt.UTC)
    if expires < utcnow():
        return None
    return staged


def discard(session: Session, token: str) -> None:
    session.execute(delete(StagedUpload).where(StagedUpload.id == token))
