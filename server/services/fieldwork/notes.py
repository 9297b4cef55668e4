"""Interpretation notes the team writes on a field: plain text (pages escape it), audited."""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

from sqlalchemy import select
from sqlalchemy.orm import Session

from ...db.models import Estimate, Field, FieldNote
from ...db.models.portfolio import NOTE_MAX_CHARS
from .. import audit
from .choices import FieldWorkError, NotFoundError, field_survey


@dataclass(frozen=True)
class NoteRow:
    id: int
    author: str
    author_id: int | None
    created_at: dt.datetime
    body: str
    survey_id: int | None
    estimate_id: int | None


def field_notes(session: Session, field_id: int, limit: int = 200) -> list[NoteRow]:
    """The field's notes, newest first."""
    rows = session.execute(
        select(FieldNote).where(FieldNote.field_id == field_id).order_by(FieldNote.id.desc()).limit(limit)
    ).scalars()
    return [
        NoteRow(
            n.id,
            n.author_username or "(deleted user)",
            n.author_id,
            n.created_at,
            n.body,
            n.survey_id,
            n.estimate_id,
        )
        for n in rows
    ]


def add_note(
    session: Session,
    actor: audit.Actor,
    field: Field,
    body: str,
    *,
    survey_id: int | None = None,
    estimate_id: int | None = None,
) -> NoteRow:
    """Store a note (1 to NOTE_MAX_CHARS characters after trimming); it may name a survey or
    an estimate of this field. Raises FieldWorkError with the reason otherwise."""
    text = (body or "").replace("\r\n", "\n").strip()
    if not text:
        raise FieldWorkError({"body": "write something first: the note is empty"})
    if len(text) > NOTE_MAX_CHARS:
        raise FieldWorkError({"body": f"at most {NOTE_MAX_CHARS:,} characters, got {len(text):,}"})
    if survey_id is not None:
        try:
            field_survey(session, field.id, survey_id)
        except NotFoundError:
            raise FieldWorkError({"survey_id": f"no survey {survey_id} on this field"}) from None
    if estimate_id is not None:
        est = session.get(Estimate, estimate_id)
        if est is None or est.field_id != field.id:
            raise FieldWorkError({"estimate_id": f"no estimate {estimate_id} of this field"})
    note = FieldNote(
        field_id=field.id,
        author_id=actor.user_id,
        author_username=actor.name[:120],
        body=text,
        survey_id=survey_id,
        estimate_id=estimate_id,
    )
    session.add(note)
    session.flush()
    audit.record(
        session,
        actor,
        "create",
        "field_note",
        note.id,
        after={"body": text[:200]},
        field_id=field.id,
        summary=f"note added ({len(text):,} characters)",
    )
    return field_notes(session, field.id, limit=1)[0]


class NotYoursError(PermissionError):
    """Only a note's author may delete it."""


def delete_note(session: Session, actor: audit.Actor, field: Field, note_id: int) -> None:
    """Delete one's own note (audited with its text)."""
    note = session.get(FieldNote, note_id)
    if note is None or note.field_id != field.id:
        raise NotFoundError(f"no note {note_id} on this field")
    if note.author_id is None or note.author_id != actor.user_id:
        raise NotYoursError("only the note's author may delete it")
    audit.record(
        session,
        actor,
        "delete",
        "field_note",
        note.id,
        before={"body": note.body[:200]},
        field_id=field.id,
        summary="note deleted",
    )
    session.delete(note)
    session.flush()
