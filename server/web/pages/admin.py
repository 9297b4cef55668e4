"""Administration: users (roles, asset access, status, password resets) and the audit trail.
The settings pages are in :mod:`.admin_settings`."""

from __future__ import annotations

from typing import Annotated

from fastapi import APIRouter, Form, HTTPException, Request
from fastapi.responses import HTMLResponse, RedirectResponse

from ...db.models import User
from ...services import audit
from ...services.access import accounts, admin_scope
from ...services.access.passwords import PasswordPolicyError
from ...services.access.permissions import ROLE_ORDER, ROLE_TITLES
from ..auth import Auditor, Principal, UserAdmin, now
from ..deps import SessionDep
from ..templating import render

router = APIRouter(prefix="/admin", include_in_schema=False)


def _users_context(session, admin: Principal, **extra) -> dict:
    mine = admin.asset_ids
    managed = admin_scope.manageable_user_ids(mine)
    ids = None if managed is None else set(session.execute(managed).scalars()) | {admin.user_id}
    base = {
        "title": "Users",
        "users": [u for u in accounts.users(session) if ids is None or u.id in ids],
        "roles": [(r, ROLE_TITLES[r]) for r in ROLE_ORDER],
        "assets": [(i, n) for i, n in accounts.assets(session) if mine is None or i in mine],
        "error": "",
        "issued": None,
    }
    return {**base, **extra}


@router.get("/users", response_class=HTMLResponse, name="admin_users")
def users_page(request: Request, session: SessionDep, user: UserAdmin):
    return render(request, "admin_users.html", _users_context(session, user))


@router.post("/users", response_class=HTMLResponse)
def create_user(
    request: Request,
    session: SessionDep,
    user: UserAdmin,
    username: Annotated[str, Form(max_length=200)],
    role: Annotated[str, Form(max_length=20)],
    display_name: Annotated[str, Form(max_length=200)] = "",
    all_assets: Annotated[bool, Form()] = False,
    asset_ids: Annotated[list[int], Form()] = [],  # noqa: B006 - FastAPI copies defaults
):
    password = accounts.one_time_password()
    try:
        admin_scope.check_grant(user.asset_ids, all_assets, asset_ids)
        created = accounts.create_user(
            session,
            user.actor,
            username=username,
            role=role,
            display_name=display_name,
            all_assets=all_assets,
            asset_ids=asset_ids,
            now=now(request),
        )
        accounts.set_password(
            session, user.actor, created, password, now=now(request), must_change=True, check=False
        )
    except admin_scope.OutOfScopeError as exc:
        raise HTTPException(status_code=403, detail=str(exc)) from None
    except (accounts.AccountError, ValueError) as exc:
        session.rollback()
        return render(request, "admin_users.html", _users_context(session, user, error=str(exc)), 422)
    issued = {"username": created.username, "password": password}
    return render(request, "admin_users.html", _users_context(session, user, issued=issued))


def _user_or_404(session, user_id: int, admin: Principal) -> User:
    """The account, if this administrator manages it (or it is their own), else 404."""
    target = session.get(User, user_id)
    mine = target is not None and target.id == admin.user_id
    if target is None or not (mine or admin_scope.within(session, target, admin.asset_ids)):
        raise HTTPException(status_code=404, detail="no such user")
    return target


@router.get("/users/{user_id}", response_class=HTMLResponse, name="admin_user")
def user_page(request: Request, user_id: int, session: SessionDep, user: UserAdmin):
    _user_or_404(session, user_id, user)
    row = next(u for u in accounts.users(session) if u.id == user_id)
    history = audit.events(session, entity_type="user", entity_id=user_id, limit=50)
    context = _users_context(session, user, title=f"User {row.username}", target=row, history=history)
    return render(request, "admin_user.html", context)


@router.post("/users/{user_id}", response_class=HTMLResponse)
def update_user(
    request: Request,
    user_id: int,
    session: SessionDep,
    user: UserAdmin,
    role: Annotated[str, Form(max_length=20)],
    display_name: Annotated[str, Form(max_length=200)] = "",
    is_active: Annotated[bool, Form()] = False,
    all_assets: Annotated[bool, Form()] = False,
    asset_ids: Annotated[list[int], Form()] = [],  # noqa: B006 - FastAPI copies defaults
):
    target = _user_or_404(session, user_id, user)
    try:
        admin_scope.check_user_change(
            session,
            user.user_id,
            user.asset_ids,
            target,
            role=role,
            is_active=is_active,
            all_assets=all_assets,
            asset_ids=[] if all_assets else asset_ids,
        )
        accounts.update_user(
            session,
            user.actor,
            target,
            now=now(request),
            role=role,
            display_name=display_name,
            is_active=is_active,
            all_assets=all_assets,
            asset_ids=[] if all_assets else asset_ids,
        )
    except admin_scope.OutOfScopeError as exc:
        raise HTTPException(status_code=403, detail=str(exc)) from None
    except (accounts.AccountError, ValueError) as exc:
        session.rollback()
        row = next(u for u in accounts.users(session) if u.id == user_id)
        context = _users_context(
            session, user, title=f"User {row.username}", target=row, history=[], error=str(exc)
        )
        return render(request, "admin_user.html", context, 422)
    return RedirectResponse(f"/admin/users/{user_id}?saved=1", status_code=303)


@router.post("/users/{user_id}/reset-password", response_class=HTMLResponse)
def reset_password(request: Request, user_id: int, session: SessionDep, user: UserAdmin):
    target = _user_or_404(session, user_id, user)
    password = accounts.one_time_password()
    try:
        accounts.set_password(
            session, user.actor, target, password, now=now(request), must_change=True, check=False
        )
    except PasswordPolicyError as exc:  # pragma: no cover - generated passwords are not checked
        raise HTTPException(status_code=422, detail=str(exc)) from None
    issued = {"username": target.username, "password": password}
    return render(request, "admin_users.html", _users_context(session, user, issued=issued))


@router.get("/audit", response_class=HTMLResponse, name="admin_audit")
def audit_page(
    request: Request,
    session: SessionDep,
    user: Auditor,
    entity_type: str = "",
    actor: str = "",
    field_id: str = "",
    before_id: int | None = None,
):
    field_id = int(field_id) if field_id.strip().isdigit() else None
    rows = audit.events(
        session,
        entity_type=entity_type or None,
        username=actor or None,
        field_id=field_id,
        before_id=before_id,
        limit=100,
        asset_ids=user.asset_ids,
        user_ids=admin_scope.manageable_user_ids(user.asset_ids),
    )
    context = {
        "title": "Audit trail",
        "rows": rows,
        "entity_types": audit.entity_types(session),
        "filters": {"entity_type": entity_type, "actor": actor, "field_id": field_id},
        "next_before": rows[-1].id if len(rows) == 100 else None,
    }
    return render(request, "admin_audit.html", context)
