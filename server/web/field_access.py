"""A field named in a request's path, or a 404 (pages and the API alike; the permission
check has already limited the field to the user's assets)."""

from __future__ import annotations

from fastapi import HTTPException
from sqlalchemy.orm import Session

from ..db.models import Field
from ..services.portfolio import field_data as data_views


def field_or_404(session: Session, field_id: int) -> Field:
    field = session.get(Field, field_id)
    if field is None:
        raise HTTPException(status_code=404, detail="no such field")
    return field


def field_ref_or_404(session: Session, field_id: int) -> data_views.FieldRef:
    ref = data_views.field_ref(session, field_id)
    if ref is None:
        raise HTTPException(status_code=404, detail="no such field")
    return ref
