"""The rules of a field's plan that need no database: its keys and defaults, the checks of a
complete plan, typed values from text, the values in words, and the engine's
:class:`~server.engine.plan.FieldPlan` from stored rows (any objects with the stored
attribute names). ``plan.py`` (database side), the ``field_plans`` upload and the offline
``tankbook analyse`` all use these, so a value refused in one is refused in all.
Values are in stored units: Mscf/d of separator gas, psia, fractions, dates.
"""

from __future__ import annotations

import datetime as dt
import math

from ...engine import plan as engine_plan
from ...engine.forecast.deliverability import FORMS
from ..timebase import days_from_date

#: Stored keys in the order the form and the summaries show them.
PLAN_KEYS = (
    "plateau_rate_mscf_per_day",
    "uptime_frac",
    "min_flowing_bhp_psia",
    "compression_start_date",
    "compression_min_flowing_bhp_psia",
    "economic_limit_mscf_per_day",
    "licence_end_date",
    "deliverability_exponent",
    "deliverability_form",
)
DATE_KEYS = ("compression_start_date", "licence_end_date")
OPTIONAL_KEYS = (
    "plateau_rate_mscf_per_day",
    "min_flowing_bhp_psia",
    "compression_start_date",
    "compression_min_flowing_bhp_psia",
    "licence_end_date",
)
#: Keys whose value is one of a few words, and those words.
CHOICE_KEYS = {"deliverability_form": FORMS}
#: The back-pressure equation's forms in words (pages, summaries).
FORM_WORDS = {
    "pressure_squared": "pressure squared, q = C (p̄² − p_wf²)^n",
    "pseudo_pressure": "pseudo-pressure, q = C [m(p̄) − m(p_wf)]^n",
}
_ENGINE_DEFAULT = engine_plan.FieldPlan()
DEFAULT_PLAN = {
    "plateau_rate_mscf_per_day": None,
    "uptime_frac": _ENGINE_DEFAULT.uptime_frac,
    "min_flowing_bhp_psia": None,
    "compression_start_date": None,
    "compression_min_flowing_bhp_psia": None,
    "economic_limit_mscf_per_day": _ENGINE_DEFAULT.economic_limit_mscf_per_day,
    "licence_end_date": None,
    "deliverability_exponent": _ENGINE_DEFAULT.deliverability_exponent,
    "deliverability_form": _ENGINE_DEFAULT.deliverability_form,
}
#: What each key is called in words (messages, audit summaries).
WORDS = {
    "plateau_rate_mscf_per_day": "plateau rate",
    "uptime_frac": "uptime",
    "min_flowing_bhp_psia": "minimum flowing pressure",
    "compression_start_date": "compression start",
    "compression_min_flowing_bhp_psia": "minimum flowing pressure with compression",
    "economic_limit_mscf_per_day": "economic limit",
    "licence_end_date": "licence end",
    "deliverability_exponent": "deliverability exponent n",
    "deliverability_form": "deliverability form",
}
EXPONENT_MIN, EXPONENT_MAX = 0.5, 1.0  # back-pressure n (Rawlins & Schellhardt 1936)
MAX_RATE_MSCF_PER_DAY = 1e9


#: Stored plan key -> the column of a field_plans file.
PLAN_COLUMNS = (
    ("plateau_rate_mscf_per_day", "plateau_rate"),
    ("uptime_frac", "uptime"),
    ("min_flowing_bhp_psia", "min_flowing_pressure"),
    ("compression_start_date", "compression_date"),
    ("compression_min_flowing_bhp_psia", "compression_min_flowing_pressure"),
    ("economic_limit_mscf_per_day", "economic_limit_rate"),
    ("licence_end_date", "licence_end"),
    ("deliverability_exponent", "deliverability_exponent"),
    ("deliverability_form", "deliverability_form"),
)


def plan_problems(field, values: dict) -> dict[str, str]:
    """What is wrong with a complete plan (stored units), by key; empty when acceptable."""
    p: dict[str, str] = {}
    p_i = field.initial_pressure_psia
    q = values["plateau_rate_mscf_per_day"]
    if q is not None and not 0 < q <= MAX_RATE_MSCF_PER_DAY:
        p["plateau_rate_mscf_per_day"] = f"must be above 0 and at most {MAX_RATE_MSCF_PER_DAY:,.0f} Mscf/d"
    up = values["uptime_frac"]
    if up is None or not 0 < up <= 1:
        p["uptime_frac"] = "must be above 0 and at most 1 (a fraction of calendar time)"
    pwf = values["min_flowing_bhp_psia"]
    if pwf is not None and not 0 < pwf < p_i:
        p["min_flowing_bhp_psia"] = f"must be above 0 and below the initial pressure ({p_i:,.1f} psia)"
    c_date, c_p = values["compression_start_date"], values["compression_min_flowing_bhp_psia"]
    if (c_date is None) != (c_p is None):
        missing = "compression_min_flowing_bhp_psia" if c_p is None else "compression_start_date"
        p[missing] = "compression needs both its start date and its minimum flowing pressure"
    elif c_p is not None:
        upper = pwf if pwf is not None else p_i
        if not 0 < c_p < upper:
            what = "the minimum flowing pressure without it" if pwf is not None else "the initial pressure"
            p["compression_min_flowing_bhp_psia"] = (
                f"must be above 0 and below {what} ({upper:,.1f} psia); compression lowers it"
            )
    el = values["economic_limit_mscf_per_day"]
    if el is None or not 0 <= el <= MAX_RATE_MSCF_PER_DAY:
        p["economic_limit_mscf_per_day"] = "must be 0 or more Mscf/d"
    elif q is not None and el >= q and "plateau_rate_mscf_per_day" not in p:
        p["economic_limit_mscf_per_day"] = f"must be below the plateau rate ({q:,.0f} Mscf/d)"
    n = values["deliverability_exponent"]
    if n is None or not EXPONENT_MIN <= n <= EXPONENT_MAX:
        p["deliverability_exponent"] = f"must lie between {EXPONENT_MIN} and {EXPONENT_MAX}"
    form = values.get("deliverability_form")
    if form not in FORMS:
        p["deliverability_form"] = f"must be one of {', '.join(FORMS)}"
    end = values["licence_end_date"]
    if end is not None and c_date is not None and c_date >= end:
        p["compression_start_date"] = f"must be before the licence end ({end.isoformat()})"
    return p


def _number(raw, what: str) -> float | None:
    if raw is None or (isinstance(raw, str) and not raw.strip()):
        return None
    if isinstance(raw, bool):
        raise ValueError(f"{what} must be a number")
    try:
        value = float(str(raw).strip().replace(",", "")) if isinstance(raw, str) else float(raw)
    except (TypeError, ValueError):
        raise ValueError(f"{what} must be a number, got {str(raw)[:40]!r}") from None
    if not math.isfinite(value):
        raise ValueError(f"{what} must be a finite number")
    return value


def _date(raw, what: str) -> dt.date | None:
    if raw is None or (isinstance(raw, str) and not raw.strip()):
        return None
    if isinstance(raw, dt.date):
        return raw
    try:
        return dt.date.fromisoformat(str(raw).strip())
    except ValueError:
        raise ValueError(f"{what} must be a date written YYYY-MM-DD, got {str(raw)[:40]!r}") from None


def parse_plan(given: dict) -> tuple[dict, dict[str, str]]:
    """Typed values (numbers or text; blank clears an optional value) to stored types."""
    parsed, problems = {}, {}
    for key, raw in given.items():
        if key not in PLAN_KEYS:
            problems[key] = "not part of a field plan"
            continue
        if key in CHOICE_KEYS:
            value = str(raw or "").strip().lower().replace("-", "_").replace(" ", "_")
            if value not in CHOICE_KEYS[key]:
                problems[key] = f"{WORDS[key]} must be one of {', '.join(CHOICE_KEYS[key])}"
                continue
            parsed[key] = value
            continue
        try:
            value = _date(raw, WORDS[key]) if key in DATE_KEYS else _number(raw, WORDS[key])
        except ValueError as exc:
            problems[key] = str(exc)
            continue
        if value is None and key not in OPTIONAL_KEYS:
            problems[key] = f"{WORDS[key]} is required"
            continue
        parsed[key] = value
    return parsed, problems


def show(key: str, value) -> str:
    """A stored plan value in words (stored units)."""
    if value is None:
        return "none"
    if key in DATE_KEYS:
        return value.isoformat() if isinstance(value, dt.date) else str(value)
    if key in CHOICE_KEYS:
        return FORM_WORDS.get(value, str(value))
    if key.endswith("_mscf_per_day"):
        return f"{value:,.0f} Mscf/d"
    if key.endswith("_psia"):
        return f"{value:,.1f} psia"
    return f"{value:g}"


def engine_field_plan(row, wells: list) -> engine_plan.FieldPlan | None:
    """The engine's plan from the stored rows; None (no forecast) when the field has no plan."""
    if row is None:
        return None

    def t(d):
        return None if d is None else days_from_date(d)

    return engine_plan.FieldPlan(
        plateau_rate_mscf_per_day=row.plateau_rate_mscf_per_day,
        uptime_frac=row.uptime_frac,
        min_flowing_bhp_psia=row.min_flowing_bhp_psia,
        compression_start_t_days=t(row.compression_start_date),
        compression_min_flowing_bhp_psia=row.compression_min_flowing_bhp_psia,
        economic_limit_mscf_per_day=row.economic_limit_mscf_per_day,
        licence_end_t_days=t(row.licence_end_date),
        planned_wells=tuple(
            engine_plan.PlannedWell(
                w.name, days_from_date(w.start_date), w.compartment, w.c_mscf_per_day_psi2n, w.n
            )
            for w in sorted(wells, key=lambda w: (w.start_date, w.name))
        ),
        deliverability_exponent=row.deliverability_exponent,
        deliverability_form=getattr(row, "deliverability_form", None) or _ENGINE_DEFAULT.deliverability_form,
    )
