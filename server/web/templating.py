"""Jinja environment (autoescaped) and number formatting filters."""

from __future__ import annotations

import datetime as dt
import json
import math

from fastapi import Request
from fastapi.responses import HTMLResponse
from fastapi.templating import Jinja2Templates
from jinja2 import Environment, FileSystemLoader, StrictUndefined, select_autoescape
from markupsafe import Markup

from ..services import words
from ..settings import PROJECT_ROOT

DASH = "–"


def fmt(value, digits: int = 1) -> str:
    """A number with fixed decimals and thousands separators; a dash for missing values."""
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return DASH
    return f"{value:,.{digits}f}"


def pct(value, digits: int = 0) -> str:
    """A fraction shown as a percentage."""
    return DASH if value is None else f"{100 * value:.{digits}f} %"


def date_from_days(t_days) -> str:
    """ISO date of an engine time (days since 1970-01-01)."""
    if t_days is None:
        return DASH
    return (dt.date(1970, 1, 1) + dt.timedelta(days=round(t_days))).isoformat()


#: What an estimate's stored status reads as on every page and in every export (the JSON API
#: keeps the stored value: ``ok``, ``refused``, ``error``).
STATUS_TEXT = {"ok": "estimated", "refused": "refused", "error": "failed"}
NOT_COMPUTED = "not computed"


def status_text(status: str | None) -> str:
    """An estimate's status in words, the same on screen and in exports."""
    if status is None:
        return NOT_COMPUTED
    return STATUS_TEXT.get(status, status)


#: Audit actions in words where the stored verb does not read on its own ("password user 3").
AUDIT_ACTIONS = {"password": "set the password of"}


def plural(n: int, singular: str, plural_form: str | None = None) -> str:
    """``1 error``, ``2 errors``, ``1,250 rows`` (an irregular plural is given)."""
    return f"{n:,} {singular if n == 1 else (plural_form or singular + 's')}"


def chart_json(figure: dict) -> Markup:
    """Figure JSON that is safe inside <script type="application/json">."""
    text = json.dumps(figure, separators=(",", ":"))
    text = text.replace("<", "\\u003c").replace(">", "\\u003e").replace("&", "\\u0026")
    return Markup(text)  # noqa: S704 - escaped above for an HTML data block


def make_templates() -> Jinja2Templates:
    env = Environment(
        loader=FileSystemLoader(str(PROJECT_ROOT / "templates")),
        autoescape=select_autoescape(default=True),
        undefined=StrictUndefined,  # a missing value in a template is a bug, not a blank
    )
    templates = Jinja2Templates(env=env)
    templates.env.filters.update(
        fmt=fmt,
        pct=pct,
        chart_json=chart_json,
        date_from_days=date_from_days,
        status_text=status_text,
        plural=plural,
        plain=words.plain,
        model_title=words.model_title,
        parameter_words=words.parameter_words,
        method_words=words.method_words,
        choice_name=words.choice_name,
    )
    templates.env.globals["DASH"] = DASH
    templates.env.globals["choice_words"] = words.audit_value
    templates.env.globals["AUDIT_ACTIONS"] = AUDIT_ACTIONS
    return templates


def render(request: Request, template: str, context: dict, status_code: int = 200) -> HTMLResponse:
    """Render a page (the logged-in user and the session's form token come from ``app.py``)."""
    response = request.app.state.templates.TemplateResponse(
        request, template, context, status_code=status_code
    )
    response.headers["Cache-Control"] = "no-store"
    return response
