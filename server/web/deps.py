"""Dependency aliases that make route signatures read like prose.

Permission aliases (``Reader``, ``Uploader``, ...) and ``Require``/``Public`` live in ``auth.py``.
"""

from __future__ import annotations

from collections.abc import AsyncIterator
from typing import Annotated

import anyio
from fastapi import Depends, Request
from sqlalchemy.orm import Session

from ..db.session import Database
from ..services import team_settings
from ..settings import Settings


def get_settings(request: Request) -> Settings:
    return request.app.state.settings


def get_database(request: Request) -> Database:
    return request.app.state.db


UNSAFE = frozenset({"POST", "PUT", "PATCH", "DELETE"})


async def get_session(request: Request) -> AsyncIterator[Session]:
    """The one session of a route call: committed when the route returns and before the
    response is sent (scope="function"), rolled back on error. With FastAPI's default
    "request" scope the commit would run after the response left, so a client could be
    told "stored" (or follow a login redirect) before the transaction had committed.

    Unsafe methods will write: on SQLite their transactions begin IMMEDIATE. Everything
    else in the request that needs the database (the team settings, the display units)
    uses this session too, so a request never holds two connections (issue 18: thirty
    requests each waiting for a second connection emptied the pool).

    A request holds its session only with one of the app's admission tickets (as many as
    route threads, fewer than pooled connections). Dependencies and the route run in
    separate thread-pool calls, and a dependency that read leaves its connection checked
    out while the request waits for the next thread: without the tickets, a hundred
    requests could each hold a connection while the threads that would finish them wait
    for one (the pool's 30 s timeout). Requests beyond the tickets wait on the event loop,
    holding nothing."""
    db = request.app.state.db
    async with request.app.state.admission:
        maker = db.write_sessionmaker if request.method in UNSAFE else db.sessionmaker
        session = maker()
        request.state.db_session = session
        try:
            yield session
            await _in_thread(session.commit)
        except BaseException:
            with anyio.CancelScope(shield=True):
                await _in_thread(session.rollback)
            raise
        finally:
            request.state.db_session = None
            with anyio.CancelScope(shield=True):
                await _in_thread(session.close)


async def _in_thread(call) -> None:
    """Run a session's commit, rollback or close off the event loop, outside the route
    threads' limit (a request finishing must never wait for a route thread)."""
    await anyio.to_thread.run_sync(call, limiter=anyio.CapacityLimiter(1))


def team_settings_for(request: Request) -> team_settings.TeamSettings:
    """The team settings in force for this request (read once per request, with the
    request's own session; a short session of its own only when the route's has ended)."""
    cached = getattr(request.state, "team_settings", None)
    if cached is None:
        session = getattr(request.state, "db_session", None)
        if session is not None:
            cached = team_settings.current(session, request.app.state.settings)
        else:
            with request.app.state.db.session() as own:
                cached = team_settings.current(own, request.app.state.settings)
        request.state.team_settings = cached
    return cached


SettingsDep = Annotated[Settings, Depends(get_settings)]
DatabaseDep = Annotated[Database, Depends(get_database)]
SessionDep = Annotated[Session, Depends(get_session, scope="function")]
TeamDep = Annotated[team_settings.TeamSettings, Depends(team_settings_for)]
