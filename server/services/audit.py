"""The audit trail: one function that every change calls, and read models of the trail.

``record`` is the only writer of ``audit_event``. Values are stored as JSON (dates as ISO
text). Secrets never go in: callers record that a password changed, not the password.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

from sqlalchemy import and_, or_, select
from sqlalchemy.orm import Session

from ..db.models import AuditEvent, Field


@dataclass(frozen=True)
class Actor:
    """Who made a change: a user (id and username), or the system."""

    user_id: int | None
    name: str


SYSTEM = Actor(None, "system")


def jsonable(value):
    """A value as JSON can hold it (dates and times as ISO text)."""
    if isinstance(value, dt.datetime | dt.date):
        return value.isoformat()
    if isinstance(value, dict):
        return {str(k): jsonable(v) for k, v in value.items()}
    if isinstance(value, list | tuple | set | frozenset):
        items = [jsonable(v) for v in value]
        return sorted(items, key=str) if isinstance(value, set | frozenset) else items
    return value


def snapshot(obj, columns) -> dict:
    """The named attributes of a row, JSON-ready."""
    return {c: jsonable(getattr(obj, c)) for c in columns}


def changed(before: dict, after: dict) -> tuple[dict, dict]:
    """Only the keys whose values differ, from each side."""
    keys = [k for k in after if before.get(k) != after.get(k)]
    return {k: before.get(k) for k in keys}, {k: after[k] for k in keys}


def record(
    session: Session,
    actor: Actor,
    action: str,
    entity_type: str,
    entity_id: int | None = None,
    *,
    before: dict | None = None,
    after: dict | None = None,
    field_id: int | None = None,
    summary: str = "",
) -> AuditEvent:
    """Add one audit event in the caller's transaction and return it."""
    event = AuditEvent(
        user_id=actor.user_id,
        actor=actor.name[:120],
        action=action[:60],
        entity_type=entity_type[:60],
        entity_id=entity_id,
        field_id=field_id,
        before=jsonable(before) if before is not None else None,
        after=jsonable(after) if after is not None else None,
        summary=summary,
    )
    session.add(event)
    return event


@dataclass(frozen=True)
class AuditRow:
    id: int
    at: dt.datetime
    actor: str
    action: str
    entity_type: str
    entity_id: int | None
    field_id: int | None
    before: dict | None
    after: dict | None
    summary: str


def _row(e: AuditEvent) -> AuditRow:
    return AuditRow(
        e.id, e.at, e.actor, e.action, e.entity_type, e.entity_id, e.field_id, e.before, e.after, e.summary
    )


def field_events(session: Session, field_id: int, limit: int = 50) -> list[AuditRow]:
    """The newest changes recorded against one field."""
    stmt = (
        select(AuditEvent).where(AuditEvent.field_id == field_id).order_by(AuditEvent.id.desc()).limit(limit)
    )
    return [_row(e) for e in session.execute(stmt).scalars()]


def events(
    session: Session,
    *,
    entity_type: str | None = None,
    entity_id: int | None = None,
    username: str | None = None,
    field_id: int | None = None,
    before_id: int | None = None,
    limit: int = 100,
    asset_ids: frozenset[int] | None = None,
    user_ids=None,
) -> list[AuditRow]:
    """Audit events newest first, optionally filtered; page with ``before_id``.

    ``asset_ids`` (a reader limited to some assets): only events of fields of those assets,
    and of the accounts in ``user_ids`` (a SELECT of user ids; none if omitted)."""
    stmt = select(AuditEvent).order_by(AuditEvent.id.desc()).limit(limit)
    if asset_ids is not None:
        fields = select(Field.id).where(Field.asset_id.in_(sorted(asset_ids)))
        mine = AuditEvent.field_id.in_(fields)
        if user_ids is not None:
            mine = or_(mine, and_(AuditEvent.entity_type == "user", AuditEvent.entity_id.in_(user_ids)))
        stmt = stmt.where(mine)
    if entity_type:
        stmt = stmt.where(AuditEvent.entity_type == entity_type)
    if entity_id is not None:
        stmt = stmt.where(AuditEvent.entity_id == entity_id)
    if username:
        stmt = stmt.where(AuditEvent.actor == username)
    if field_id is not None:
        stmt = stmt.where(AuditEvent.field_id == field_id)
    if before_id is not None:
        stmt = stmt.where(AuditEvent.id < before_id)
    return [_row(e) for e in session.execute(stmt).scalars()]


def entity_types(session: Session) -> list[str]:
    return list(session.execute(select(AuditEvent.entity_type).distinct().order_by("entity_type")).scalars())
