"""Administration: users (roles, asset access, status, password resets), the audit trail, the
team settings (edited here) and the deployment's settings (read from the environment)."""

from __future__ import annotations

import dataclasses
import math
from typing import Annotated

from fastapi import APIRouter, Form, HTTPException, Request
from fastapi.concurrency import run_in_threadpool
from fastapi.responses import HTMLResponse, RedirectResponse

from ...db.models import User
from ...engine.thresholds import THRESHOLD_LIMITS, FlagThresholds
from ...engine.units import STANDARD_CONDITIONS
from ...services import audit, team_settings
from ...services.access import accounts, admin_scope
from ...services.access.passwords import PasswordPolicyError
from ...services.access.permissions import ROLE_ORDER, ROLE_TITLES
from ...services.reserves import rules as reserves_rules
from ..auth import Auditor, Principal, SettingsAdmin, UserAdmin, now
from ..background import jobs_queued
from ..deps import SessionDep, SettingsDep
from ..templating import render

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
        "reserves": reserves_rules.reserves_settings(session),
        "reserves_problems": {},
        "reserves_submitted": {},
        "reserves_saved": None,
    }
    return {**base, **extra}


@router.post("/settings/reserves", response_class=HTMLResponse, name="admin_reserves_settings")
def save_reserves_settings(
    request: Request,
    session: SessionDep,
    settings: SettingsDep,
    user: SettingsAdmin,
    justify_2p_change_pct: Annotated[str, Form(max_length=40)] = "",
    four_eyes: Annotated[bool, Form()] = False,
):
    """The reserves review's team settings: four eyes, and the 2P change (in %) above which a
    booking needs a written justification (stored as a fraction)."""
    submitted = {"justify_2p_change_pct": justify_2p_change_pct, "four_eyes": four_eyes}
    problems = {}
    try:
        frac = float(justify_2p_change_pct.strip().rstrip("%").strip()) / 100.0
    except ValueError:
        problems["justify_2p_change_pct"] = "must be a number of per cent, e.g. 10"
    else:
        lo, hi = reserves_rules.JUSTIFY_RANGE
        if not (math.isfinite(frac) and lo < frac <= hi):
            problems["justify_2p_change_pct"] = f"must be above {100 * lo:g} % and at most {100 * hi:,.0f} %"
    if not problems:
        try:
            before = reserves_rules.reserves_settings(session)
            after = reserves_rules.set_reserves_settings(
                session, user.actor, four_eyes=four_eyes, justify_2p_change_frac=frac
            )
        except reserves_rules.ReservesError as exc:
            problems["justify_2p_change_pct"] = str(exc)
    if problems:
        session.rollback()
        context = _settings_context(
            session, settings, reserves_problems=problems, reserves_submitted=submitted
        )
        return render(request, "admin_settings.html", context, 422)
    session.commit()
    changed = [k for k in ("four_eyes", "justify_2p_change_frac") if getattr(before, k) != getattr(after, k)]
    context = _settings_context(session, settings, reserves_saved={"changed": changed})
    return render(request, "admin_settings.html", context)


def _without_password(url: str) -> str:
    from sqlalchemy.engine import make_url

    return make_url(url).render_as_string(hide_password=True)
