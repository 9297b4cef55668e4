"""Administration: users (roles, asset access, status, password resets), the audit trail, the
team settings (edited here) and the deployment's settings (read from the environment)."""

from __future__ import annotations

import dataclasses
from typing import Annotated

from fastapi import APIRouter, Form, HTTPException, Request
from fastapi.concurrency import run_in_threadpool
from fastapi.responses import HTMLResponse, RedirectResponse

from ..db.models import User
from ..engine.flags import THRESHOLD_LIMITS, FlagThresholds
from ..engine.units import STANDARD_CONDITIONS
from ..services import accounts, audit, team_settings
from ..services.passwords import PasswordPolicyError
from ..services.permissions import ROLE_ORDER, ROLE_TITLES
from .api_uploads import jobs_queued
from .auth import Auditor, SettingsAdmin, UserAdmin, now
from .deps import SessionDep, SettingsDep
from .pages import render

router = APIRouter(prefix="/admin", include_in_schema=False)
SHOWN_SETTINGS = (
    "environment",
    "database_url",
    "behind_tls",
    "forwarded_allow_ips",
    "standard_conditions",
    "display_units",
    "atmosphere_psia",
    "max_upload_bytes",
    "session_idle_minutes",
    "session_absolute_hours",
    "password_min_length",
    "login_free_failures_per_account",
    "login_free_failures_per_address",
    "login_throttle_window_minutes",
    "login_max_delay_seconds",
)


def _users_context(session, **extra) -> dict:
    base = {
        "title": "Users",
        "users": accounts.users(session),
        "roles": [(r, ROLE_TITLES[r]) for r in ROLE_ORDER],
        "assets": accounts.assets(session),
        "error": "",
        "issued": None,
    }
    return {**base, **extra}


@router.get("/users", response_class=HTMLResponse, name="admin_users")
def users_page(request: Request, session: SessionDep, user: UserAdmin):
    return render(request, "admin_users.html", _users_context(session))


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
    except (accounts.AccountError, ValueError) as exc:
        session.rollback()
        return render(request, "admin_users.html", _users_context(session, error=str(exc)), 422)
    issued = {"username": created.username, "password": password}
    return render(request, "admin_users.html", _users_context(session, issued=issued))


def _user_or_404(session, user_id: int) -> User:
    target = session.get(User, user_id)
    if target is None:
        raise HTTPException(status_code=404, detail="no such user")
    return target


@router.get("/users/{user_id}", response_class=HTMLResponse, name="admin_user")
def user_page(request: Request, user_id: int, session: SessionDep, user: UserAdmin):
    _user_or_404(session, user_id)
    row = next(u for u in accounts.users(session) if u.id == user_id)
    history = audit.events(session, entity_type="user", entity_id=user_id, limit=50)
    context = _users_context(session, title=f"User {row.username}", target=row, history=history)
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
    target = _user_or_404(session, user_id)
    try:
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
    except (accounts.AccountError, ValueError) as exc:
        session.rollback()
        row = next(u for u in accounts.users(session) if u.id == user_id)
        context = _users_context(
            session, title=f"User {row.username}", target=row, history=[], error=str(exc)
        )
        return render(request, "admin_user.html", context, 422)
    return RedirectResponse(f"/admin/users/{user_id}?saved=1", status_code=303)


@router.post("/users/{user_id}/reset-password", response_class=HTMLResponse)
def reset_password(request: Request, user_id: int, session: SessionDep, user: UserAdmin):
    target = _user_or_404(session, user_id)
    password = accounts.one_time_password()
    try:
        accounts.set_password(
            session, user.actor, target, password, now=now(request), must_change=True, check=False
        )
    except PasswordPolicyError as exc:  # pragma: no cover - generated passwords are not checked
        raise HTTPException(status_code=422, detail=str(exc)) from None
    issued = {"username": target.username, "password": password}
    return render(request, "admin_users.html", _users_context(session, issued=issued))


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
    )
    context = {
        "title": "Audit trail",
        "rows": rows,
        "entity_types": audit.entity_types(session),
        "filters": {"entity_type": entity_type, "actor": actor, "field_id": field_id},
        "next_before": rows[-1].id if len(rows) == 100 else None,
    }
    return render(request, "admin_audit.html", context)


@router.get("/settings", response_class=HTMLResponse, name="admin_settings")
def settings_page(request: Request, session: SessionDep, settings: SettingsDep, user: SettingsAdmin):
    return render(request, "admin_settings.html", _settings_context(session, settings))


@router.post("/settings", response_class=HTMLResponse)
async def save_settings(request: Request, session: SessionDep, settings: SettingsDep, user: SettingsAdmin):
    """Store the changed team settings (every value of the form is checked; nothing is stored
    unless all are acceptable)."""
    form = await request.form()
    keys = (*team_settings.UNIT_KEYS, *team_settings.THRESHOLD_KEYS)
    values = {k: form[k] for k in keys if isinstance(form.get(k), str)}
    return await run_in_threadpool(_save_settings, request, session, settings, user, values)


def _save_settings(request, session, settings, user, values: dict):
    try:
        outcome = team_settings.update(session, user.actor, settings, values)
    except team_settings.TeamSettingsError as exc:
        session.rollback()
        context = _settings_context(session, settings, problems=exc.problems, submitted=values)
        return render(request, "admin_settings.html", context, 422)
    session.commit()
    request.state.team_settings = None  # this request's display units were read before the change
    if outcome.recompute_job_id is not None:
        jobs_queued(request)
    return render(request, "admin_settings.html", _settings_context(session, settings, saved=outcome))


def _settings_context(session, settings, **extra) -> dict:
    team = team_settings.current(session, settings)
    rows = []
    for f in dataclasses.fields(FlagThresholds):
        key = team_settings.THRESHOLD_PREFIX + f.name
        lim = THRESHOLD_LIMITS[f.name]
        rows.append(
            {
                "key": key,
                "name": f.name,
                "value": team.value(key),
                "default": f.default,
                "limits": lim,
                "step": "1" if lim.integer else "any",
                "source": team.sources[key],
            }
        )
    env = []
    for key in SHOWN_SETTINGS:
        value = getattr(settings, key)
        if key == "database_url":
            value = _without_password(value)
        env.append((key, value, type(settings).model_fields[key].description or ""))
    base = {
        "title": "Settings",
        "team": team,
        "basis_label": team.storage_basis.label,
        "basis_choices": [(k, v.label) for k, v in STANDARD_CONDITIONS.items()],
        "basis_lock": team_settings.standard_conditions_lock(session),
        "threshold_rows": rows,
        "settings": env,
        "secret_key_set": settings.secret_key is not None,
        "problems": {},
        "submitted": {},
        "saved": None,
    }
    return {**base, **extra}


def _without_password(url: str) -> str:
    from sqlalchemy.engine import make_url

    return make_url(url).render_as_string(hide_password=True)
