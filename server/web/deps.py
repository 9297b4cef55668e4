"""Dependency aliases that make route signatures read like prose."""

from __future__ import annotations

from collections.abc import Iterator
from typing import Annotated

from fastapi import Depends, Form, HTTPException, Request
from sqlalchemy.orm import Session

from ..db.session import Database
from ..settings import Settings
from .security import CSRF_COOKIE


def get_settings(request: Request) -> Settings:
    return request.app.state.settings


def get_database(request: Request) -> Database:
    return request.app.state.db


def get_session(request: Request) -> Iterator[Session]:
    """A request-scoped session: committed when the route returns, rolled back on error."""
    with request.app.state.db.session() as session:
        yield session


def check_form_token(request: Request, csrf_token: Annotated[str, Form()] = "") -> None:
    """Double-submit check: the form's token must match the cookie set with the form."""
    cookie = request.cookies.get(CSRF_COOKIE, "")
    if not cookie or not csrf_token or cookie != csrf_token:
        raise HTTPException(status_code=403, detail="the form has expired or was not sent by Tankbook")


SettingsDep = Annotated[Settings, Depends(get_settings)]
DatabaseDep = Annotated[Database, Depends(get_database)]
SessionDep = Annotated[Session, Depends(get_session)]
FormTokenChecked = Depends(check_form_token)
