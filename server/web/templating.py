"""Jinja environment (autoescaped) and number formatting filters."""

from __future__ import annotations

import datetime as dt
import json
import math

from fastapi.templating import Jinja2Templates
from jinja2 import Environment, FileSystemLoader, StrictUndefined, select_autoescape
from markupsafe import Markup

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
    templates.env.filters.update(fmt=fmt, pct=pct, chart_json=chart_json, date_from_days=date_from_days)
    templates.env.globals["DASH"] = DASH
    return templates
