"""Administration's settings page: the team settings (units, flag thresholds, the reserves
review's rules; edited here) and the deployment's settings (read from the environment)."""

from __future__ import annotations

import dataclasses
import math
from typing import Annotated

from fastapi import APIRouter, Form, Request
from fastapi.concurrency import run_in_threadpool
from fastapi.responses import HTMLResponse

from ...engine.thresholds import THRESHOLD_LIMITS, FlagThresholds
from ...engine.units import STANDARD_CONDITIONS
from ...services import team_settings
from ...services.reserves import rules as reserves_rules
from ...services.reserves import sales_gas
from ..auth import SettingsAdmin
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
        "sales_gas": sales_gas.sales_gas_settings(session),
        "sales_gas_fields": sales_gas.field_choices(session),
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
    sales_gas_pct: Annotated[str | None, Form(max_length=40)] = None,
    sales_field_id: Annotated[list[int], Form(max_length=10_000)] = [],  # noqa: B006 (FastAPI copies it)
    sales_field_pct: Annotated[list[str], Form(max_length=10_000)] = [],  # noqa: B006
):
    """The reserves review's team settings: four eyes, the 2P change (in %) above which a
    booking needs a written justification (stored as a fraction), and the sales-gas factor (in
    %): the team default and each field's own (blank: the team default)."""
    submitted = {
        "justify_2p_change_pct": justify_2p_change_pct,
        "four_eyes": four_eyes,
        "sales_gas_pct": sales_gas_pct,
        "sales_field_pct": dict(zip(sales_field_id, sales_field_pct, strict=False)),
    }
    problems = {}
    sales_default, by_field = _sales_gas_form(sales_gas_pct, sales_field_id, sales_field_pct, problems)
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
            gas_before = sales_gas.sales_gas_settings(session)
            gas_after = sales_gas.set_sales_gas_settings(
                session, user.actor, sales_gas_frac=sales_default, by_field=by_field
            )
        except reserves_rules.ReservesError as exc:
            key = "sales_gas_pct" if str(exc).startswith("reserves.sales_gas") else "justify_2p_change_pct"
            problems[key] = str(exc)
    if problems:
        session.rollback()
        context = _settings_context(
            session, settings, reserves_problems=problems, reserves_submitted=submitted
        )
        return render(request, "admin_settings.html", context, 422)
    session.commit()
    changed = [k for k in ("four_eyes", "justify_2p_change_frac") if getattr(before, k) != getattr(after, k)]
    changed += ["sales_gas_frac"] if gas_before.sales_gas_frac != gas_after.sales_gas_frac else []
    changed += ["sales_gas_frac_by_field"] if gas_before.by_field != gas_after.by_field else []
    context = _settings_context(session, settings, reserves_saved={"changed": changed})
    return render(request, "admin_settings.html", context)


def _pct(text: str) -> float:
    """A per cent typed in a form as a fraction; ValueError when it is not in (0, 100]."""
    frac = float(text.strip().rstrip("%").strip()) / 100.0
    if sales_gas.check_frac(frac) is None:
        raise ValueError(text)
    return frac


def _sales_gas_form(default_pct, ids, pcts, problems: dict):
    """The team default (None: not sent) and {field id: fraction or None (blank)} from the form."""
    default = None
    if default_pct is not None:
        try:
            default = _pct(default_pct)
        except ValueError:
            problems["sales_gas_pct"] = "must be a per cent above 0 and at most 100, e.g. 95"
    by_field = {}
    for fid, text in zip(ids, pcts, strict=False):
        try:
            by_field[fid] = _pct(text) if text.strip() else None
        except ValueError:
            problems[f"sales_field_{fid}"] = (
                "a per cent above 0 and at most 100, or blank for the team default"
            )
    return default, by_field


def _without_password(url: str) -> str:
    from sqlalchemy.engine import make_url

    return make_url(url).render_as_string(hide_password=True)
