"""Checked files held server-side between the preview and the user's confirmation.

The browser keeps only a random token. Only a file that can be committed (no errors, and
something to add or replace) is kept, for ``STAGED_FOR``; a file with errors keeps only its
problem report (for the CSV download), never its bytes. Staging is capped per user (a user's
oldest previews make room for the newest) and in total (a new preview is then refused, the
check itself still shown). Expired rows are purged at app start-up and on every staging write
and every stored upload.
"""

from __future__ import annotations

import datetime as dt
import hashlib
import logging
import secrets
from dataclasses import dataclass

from sqlalchemy import delete, func, select
from sqlalchemy.exc import OperationalError, ProgrammingError
from sqlalchemy.orm import Session

from ...db.base import utcnow
from ...db.models import StagedUpload
from ..audit import Actor
from .parse import ReadOptions

log = logging.getLogger(__name__)
STAGED_FOR = dt.timedelta(hours=2)
FILE, REPORT = "file", "report"


@dataclass(frozen=True)
class StagingQuota:
    """``TANKBOOK_STAGING_MAX_BYTES_PER_USER`` and ``TANKBOOK_STAGING_MAX_BYTES_TOTAL``."""

    per_user_bytes: int = 64 * 1024 * 1024
    total_bytes: int = 1024 * 1024 * 1024


class StagingFullError(Exception):
    """The file cannot be kept for confirmation now; the message says why and what to do."""


def purge_expired(session: Session) -> int:
    """Delete every expired staged row; returns how many."""
    return session.execute(delete(StagedUpload).where(StagedUpload.expires_at < utcnow())).rowcount or 0


def purge_staging(db) -> None:
    """:func:`purge_expired` in its own transaction (app start-up); an unmigrated database is
    left alone."""
    try:
        with db.session() as session:
            purged = purge_expired(session)
    except (OperationalError, ProgrammingError) as exc:
        log.warning("expired staged uploads not purged (is the database migrated?): %s", exc)
        return
    if purged:
        log.info("purged %d expired staged upload(s)", purged)


def _held(session: Session, user_id: int | None = None) -> int:
    stmt = select(func.coalesce(func.sum(StagedUpload.size_bytes), 0))
    if user_id is not None:
        stmt = stmt.where(StagedUpload.created_by_id == user_id)
    return int(session.execute(stmt).scalar_one())


def _make_room(session: Session, actor: Actor, size: int, quota: StagingQuota) -> None:
    """Drop the user's oldest staged rows until ``size`` more fits their quota; refuse when the
    file is larger than the quota, or when the installation's total would pass its cap."""
    mib = 2**20
    if size > quota.per_user_bytes:
        raise StagingFullError(
            f"the file ({size / mib:,.1f} MiB) is larger than the {quota.per_user_bytes / mib:,.0f} MiB a "
            "user may keep waiting for confirmation; upload it through the API (it checks and stores in "
            "one request)"
        )
    held = session.execute(
        select(StagedUpload.id, StagedUpload.size_bytes)
        .where(StagedUpload.created_by_id == actor.user_id)
        .order_by(StagedUpload.created_at, StagedUpload.id)
    ).all()
    total_mine = sum(n for _, n in held)
    dropped = []
    for token, n in held:
        if total_mine + size <= quota.per_user_bytes:
            break
        dropped.append(token)
        total_mine -= n
    if dropped:
        session.execute(delete(StagedUpload).where(StagedUpload.id.in_(dropped)))
    if _held(session) + size > quota.total_bytes:
        raise StagingFullError(
            f"the server already holds {quota.total_bytes / mib:,.0f} MiB of checked files waiting for "
            "confirmation (its limit); this file was checked but cannot be kept: try again later, or upload "
            "it through the API"
        )


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
    quota: StagingQuota | None = None,
    content: str = FILE,
) -> str:
    """Keep ``data`` (a committable file, or a rejected file's report) and return its token.
    Raises :class:`StagingFullError` (nothing kept) when the quota cannot make room."""
    purge_expired(session)
    _make_room(session, actor, len(data), quota or StagingQuota())
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
            content=content,
        )
    )
    session.flush()
    return token


def load_staged(session: Session, token: str, actor: Actor, content: str = FILE) -> StagedUpload | None:
    """The staged row for ``token`` if it exists, holds ``content``, has not expired and belongs
    to ``actor``."""
    if not token or len(token) > 64:
        return None
    staged = session.get(StagedUpload, token)
    if staged is None or staged.created_by_id != actor.user_id or staged.content != content:
        return None
    expires = staged.expires_at if staged.expires_at.tzinfo else staged.expires_at.replace(tzinfo=dt.UTC)
    if expires < utcnow():
        return None
    return staged


def discard(session: Session, token: str) -> None:
    session.execute(delete(StagedUpload).where(StagedUpload.id == token))
