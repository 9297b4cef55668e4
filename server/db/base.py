"""Declarative base with a constraint naming convention (stable names for Alembic)."""

from __future__ import annotations

import datetime as dt

from sqlalchemy import DateTime, MetaData
from sqlalchemy.orm import DeclarativeBase

NAMING_CONVENTION = {
    "ix": "ix_%(column_0_label)s",
    "uq": "uq_%(table_name)s_%(column_0_name)s",
    "ck": "ck_%(table_name)s_%(constraint_name)s",
    "fk": "fk_%(table_name)s_%(column_0_name)s_%(referred_table_name)s",
    "pk": "pk_%(table_name)s",
}


class Base(DeclarativeBase):
    metadata = MetaData(naming_convention=NAMING_CONVENTION)
    type_annotation_map = {dt.datetime: DateTime(timezone=True)}


def utcnow() -> dt.datetime:
    """Timezone-aware current time in UTC."""
    return dt.datetime.now(dt.UTC)
