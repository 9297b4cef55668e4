"""Dependency aliases that make route signatures read like prose.

Permission aliases (``Reader``, ``Uploader``, ...) and ``Require``/``Public`` live in ``auth.py``.
"""

from __future__ import annotations

from collections.abc import Iterator
from typing import Annotated

from fastapi import Depends, Request
from sqlalchemy.orm import Session

from ..db.session import Database
from ..services import team_settings
from ..settings import Settings


def get_settings(request: Request) -> Settings:
    return request.app.state.settings


def get_database(request: Request) -> Database:
    return request.app.state.db


def get_session(request: Request) -> Iterator[Session]:
    """A session for one route call: committed when the route returns and before the
    response is sent (scope="function"), rolled back on error. With FastAPI's default
    "request" scope the commit would run after the response left, so a client could be
    told "stored" (or follow a login redirect) before the transaction had committed."""
    with request.app.state.db.session() as session:
        yield session


def team_settings_for(request: Request) -> team_settings.TeamSettings:
    """The team settings in force for this request (read once per request)."""
    cached = getattr(request.state, "team_settings", None)
    if cached is None:
        with request.app.state.db.session() as session:
            cached = team_settings.current(session, request.app.state.settings)
        request.state.team_settings = cached
    return cached


SettingsDep = Annotated[Settings, Depends(get_settings)]
DatabaseDep = Annotated[Database, Depends(get_database)]
SessionDep = Annotated[Session, Depends(get_session, scope="function")]
TeamDep = Annotated[team_settings.TeamSettings, Depends(team_settings_for)]
