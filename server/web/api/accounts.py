"""The JSON API of accounts: who am I, API tokens, users (read), and the audit trail."""

from __future__ import annotations

import dataclasses
from typing import Annotated, Any, Literal

from fastapi import APIRouter, HTTPException, Path, Query, Request
from pydantic import BaseModel, Field
from sqlalchemy import select

from ...db.models import User
from ...services import audit
from ...services.access import accounts, admin_scope, credentials
from ..auth import AccountHolder, Auditor, Reader, UserAdmin, now
from ..deps import SessionDep
from ..schemas.common import ErrorRead, FieldId, UtcDatetime

router = APIRouter(prefix="/api", tags=["accounts"])


class MeRead(BaseModel):
    username: str
    display_name: str
    role: str
    permissions: list[str]
    all_assets: bool
    asset_ids: list[int]
    via: str
    unit_system: Literal["oilfield", "si"] | None = Field(
        description="the user's own display units; null: the team's default"
    )


class UnitsUpdate(BaseModel):
    unit_system: Literal["oilfield", "si"] | None = Field(
        description="oilfield or si; null to follow the team's default"
    )


class TokenRead(BaseModel):
    id: int
    name: str
    prefix: str
    scopes: list[str]
    created_at: UtcDatetime
    last_used_at: UtcDatetime | None
    expires_at: UtcDatetime | None
    revoked_at: UtcDatetime | None


class TokenCreate(BaseModel):
    name: str = Field(min_length=1, max_length=120)
    scopes: list[str] = Field(min_length=1, max_length=10)
    expires_days: int | None = Field(default=None, ge=1, le=3660)


class TokenCreated(TokenRead):
    token: str = Field(description="the token itself, shown only this once")


class UserRead(BaseModel):
    id: int
    username: str
    display_name: str
    role: str
    is_active: bool
    all_assets: bool
    asset_ids: list[int]
    must_change_password: bool
    created_at: UtcDatetime
    last_login_at: UtcDatetime | None


class AuditRead(BaseModel):
    id: int
    at: UtcDatetime
    actor: str
    action: str
    entity_type: str
    entity_id: int | None
    field_id: int | None
    before: dict[str, Any] | None
    after: dict[str, Any] | None
    summary: str


@router.get("/me", response_model=MeRead)
def me(user: Reader):
    return MeRead(
        username=user.username,
        display_name=user.display_name,
        role=user.role,
        permissions=sorted(p.value for p in user.permissions),
        all_assets=user.asset_ids is None,
        asset_ids=sorted(user.asset_ids or ()),
        via=user.via,
        unit_system=user.unit_system,
    )


@router.put("/me/units", response_model=MeRead)
def choose_units(body: UnitsUpdate, request: Request, session: SessionDep, user: AccountHolder):
    """Choose one's own display units (pages, charts and exports); null follows the team."""
    accounts.set_unit_system(session, user_id=user.user_id, unit_system=body.unit_system)
    return me(dataclasses.replace(user, unit_system=body.unit_system))


@router.get("/tokens", response_model=list[TokenRead])
def list_tokens(session: SessionDep, user: AccountHolder):
    """Your API tokens (needs a logged-in session: tokens cannot manage tokens)."""
    return [dataclasses.asdict(t) for t in credentials.user_tokens(session, user.user_id)]


@router.post(
    "/tokens",
    response_model=TokenCreated,
    status_code=201,
    responses={422: {"description": "bad name, scopes or expiry"}},
)
def create_token(body: TokenCreate, request: Request, session: SessionDep, user: AccountHolder):
    """Make a token (send the session's form token as ``X-CSRF-Token``)."""
    try:
        raw, row = credentials.create_api_token(
            session,
            session.get(User, user.user_id),
            name=body.name,
            scopes=body.scopes,
            now=now(request),
            expires_days=body.expires_days,
        )
    except credentials.CredentialError as exc:
        raise HTTPException(status_code=422, detail=str(exc)) from None
    return {**dataclasses.asdict(row), "token": raw}


@router.delete(
    "/tokens/{token_id}",
    status_code=204,
    responses={404: {"model": ErrorRead, "description": "no such token"}},
)
def revoke_token(
    token_id: Annotated[int, Path(ge=1, le=2**31 - 1)],
    request: Request,
    session: SessionDep,
    user: AccountHolder,
):
    if not credentials.revoke_api_token(session, user.actor, user.user_id, token_id, now(request)):
        raise HTTPException(status_code=404, detail="no such token")


@router.get("/users", response_model=list[UserRead])
def list_users(session: SessionDep, user: UserAdmin):
    """Every account, or (an administrator limited to some assets) the accounts within them."""
    managed = admin_scope.manageable_user_ids(user.asset_ids)
    everyone = select(User.id) if managed is None else managed
    visible = set(session.execute(everyone).scalars()) | {user.user_id}
    return [
        UserRead(
            **{k: v for k, v in dataclasses.asdict(u).items() if k in UserRead.model_fields}
            | {"asset_ids": sorted(u.asset_ids)}
        )
        for u in accounts.users(session)
        if u.id in visible
    ]


@router.get("/audit", response_model=list[AuditRead])
def audit_trail(
    session: SessionDep,
    user: Auditor,
    entity_type: Annotated[str | None, Query(max_length=60)] = None,
    actor: Annotated[str | None, Query(max_length=120)] = None,
    field_id: Annotated[int | None, Query(ge=1, le=2**31 - 1)] = None,
    before_id: Annotated[int | None, Query(ge=1, le=2**31 - 1)] = None,
    limit: Annotated[int, Query(ge=1, le=500)] = 100,
):
    """The audit trail, newest first; page with ``before_id`` (the last id you got)."""
    rows = audit.events(
        session,
        entity_type=entity_type,
        username=actor,
        field_id=field_id,
        before_id=before_id,
        limit=limit,
        asset_ids=user.asset_ids,
        user_ids=admin_scope.manageable_user_ids(user.asset_ids),
    )
    return [dataclasses.asdict(r) for r in rows]


@router.get(
    "/fields/{field_id}/audit",
    response_model=list[AuditRead],
    tags=["fields"],
    responses={404: {"model": ErrorRead, "description": "no such field (or not in your assets)"}},
)
def field_audit(field_id: FieldId, session: SessionDep, user: Reader):
    """Changes recorded against one field, newest first."""
    from ...db.models import Field as FieldRow

    if session.get(FieldRow, field_id) is None:
        raise HTTPException(status_code=404, detail="no such field")
    return [dataclasses.asdict(r) for r in audit.field_events(session, field_id)]
