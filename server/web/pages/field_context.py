"""The field page's context: the stored estimate and diagnosis, the time charts, the surveys
with what the estimate did with each, the analysis choices, notes and history.

Plain data for ``templates/field.html``; every number there goes through ``du``."""

from __future__ import annotations

import dataclasses

from sqlalchemy import or_, select
from sqlalchemy.orm import Session

from ...db.models import AuditEvent, Field, Job
from ...engine.headline.types import AUTOMATIC
from ...services import words
from ...services.audit import field_events
from ...services.fieldwork import choices as field_work
from ...services.fieldwork import plan as field_plan
from ...services.fieldwork.history import estimate_history, field_surveys, production_series
from ...services.fieldwork.notes import field_notes
from ...services.forecast import CAUTION, stop_words
from ...services.jobs.failures import stale_estimate
from ...services.jobs.queue import FIELD_JOB, PORTFOLIO_JOB, job_view
from ...services.portfolio.headline import Headline, headline
from ...services.portfolio.produced import produced_to_date
from ...services.portfolio.rows import FieldDetail, field_detail
from ..charts.field_time import history_figure, pressure_time_figure, production_figure
from ..charts.forecast import deliverability_figure, forecast_figure
from ..charts.pz import cole_figure, counts_wet_gas, model_fits_figure, pz_figure
from ..display import DisplayUnits

HISTORY_ROWS_SHOWN = 20


def survey_rows(detail: dict, surveys) -> list[dict]:
    """Each stored survey with what the current estimate did with it (by survey id): the
    prepared values, and "used", "outlier", "excluded", or "pending" (stored after the
    estimate was computed, or not usable by it)."""
    prepared = {p.get("survey_id"): p for p in (detail.get("prepared") or {}).get("points") or []}
    status = {s["index"]: s for s in (detail.get("pz") or {}).get("points") or []}
    rows = []
    for s in surveys:
        p = prepared.get(s.id)
        st = status.get(p["index"]) if p else None
        if p is None:
            kind = "excluded" if s.excluded else "pending"
        elif st is not None:
            kind = st["status"]
        else:
            kind = "used" if p["included"] else "excluded"
        rows.append(
            {
                "survey": s,
                "point": p,
                "kind": kind,
                "reason": (st or {}).get("reason") or (p or {}).get("reason") or s.exclusion_reason,
                "corrected_pz_psia": (st or {}).get("corrected_pz_psia"),
                "residual_pz_psia": (st or {}).get("residual_pz_psia"),
            }
        )
    return rows


def pending_jobs(session: Session, field_id: int) -> list:
    """Recomputes that will change this page: the field's own, or a portfolio recompute."""
    stmt = (
        select(Job)
        .where(
            Job.status.in_(("queued", "running")),
            or_((Job.kind == FIELD_JOB) & (Job.field_id == field_id), Job.kind == PORTFOLIO_JOB),
        )
        .order_by(Job.id)
    )
    return [job_view(j) for j in session.execute(stmt).scalars()]


def flash_message(session: Session, field_id: int, audit_id: int | None) -> str:
    """The summary of a change just made on this field (redirect-after-post), or ""."""
    if audit_id is None:
        return ""
    event = session.get(AuditEvent, audit_id)
    if event is None or event.field_id != field_id:
        return ""
    return f"Saved: {event.summary}" if event.summary else "Saved."


def choice_lists() -> dict:
    return {
        "z_methods": field_work.Z_METHOD_CHOICES,
        "overpressure_modes": field_work.OVERPRESSURE_CHOICES,
    }


def basis_options(head: Headline, chosen: str) -> list[tuple[str, str]]:
    """(value, words) of the basis choice: automatic with what the rule recommends, then every
    model of the current estimate with results; the stored choice stays listed even when the
    current estimate has no result for it (its recompute has not run, or it failed)."""
    rec = head.recommended_title or (head.title if head.source == "automatic" else "")
    options = [(AUTOMATIC, f"Automatic (recommended: {rec})" if rec else words.AUTOMATIC_TITLE)]
    options += [(o.model, o.title) for o in head.choosable]
    if chosen not in {v for v, _ in options}:
        options.append((chosen, words.model_title(chosen)))
    return options


def field_context(
    session: Session,
    field_id: int,
    du: DisplayUnits,
    *,
    detail: FieldDetail | None = None,
    flash: str = "",
    problems: dict | None = None,
    submitted: dict | None = None,
) -> dict | None:
    """Everything ``field.html`` shows, or None for an unknown field."""
    detail = detail or field_detail(session, field_id)
    if detail is None:
        return None
    field = session.get(Field, field_id)
    vol = dataclasses.asdict(detail.summary.volumetric) if detail.summary.volumetric else None
    dg = detail.detail.get("diagnosis")
    cole = (dg or {}).get("cole_plots")
    history = estimate_history(session, field_id)
    surveys = field_surveys(session, field_id)
    e = detail.summary.estimate
    produced = produced_to_date(session, {field_id: e.cumulative_gas_bscf if e else None})[field_id]
    wet = counts_wet_gas(detail.detail.get("prepared") or {})  # what the stored estimate counted
    series = production_series(session, field_id)
    head = headline(e, detail.detail)
    choices = field_work.current_choices(field)
    return {
        **forecast_context(session, field, detail.detail, series, du),
        "head": head,
        "basis_options": basis_options(head, choices["basis_model"]),
        "f": detail,
        "pz_figure": pz_figure(detail.detail, vol, du),
        "dg": dg,
        "model_fits_figure": model_fits_figure(dg, du, wet_gas=wet) if dg else None,
        "cole_figure": cole_figure(cole, du, wet_gas=wet) if cole else None,
        "produced": produced,
        "wet_gas": wet,
        "pressure_figure": pressure_time_figure(detail.detail, surveys, du),
        "production_figure": production_figure(series, du),
        "history_figure": history_figure(history, du),
        "history_rows": history[::-1][:HISTORY_ROWS_SHOWN],
        "history_count": len(history),
        "survey_rows": survey_rows(detail.detail, surveys),
        "choices": choices,
        **choice_lists(),
        "notes": field_notes(session, field_id),
        "pending_jobs": pending_jobs(session, field_id),
        "stale": stale_estimate(session, field_id),
        "flash": flash,
        "problems": problems or {},
        "submitted": submitted or {},
        "title": detail.summary.name,
        "audit_events": field_events(session, field_id),
    }


def forecast_context(session: Session, field: Field, detail: dict, series, du: DisplayUnits) -> dict:
    """The forecast section: the stored forecast (None without a plan or before the engine made
    one), its charts, the plan in force, planned wells and the wells' test data."""
    forecast = detail.get("forecast")
    row = field_plan.plan_row(session, field.id)
    tests = field_plan.well_tests_by_well(session, field.id)
    fits = (forecast or {}).get("deliverability") or []
    cases = {p["case"]: p for p in (forecast or {}).get("profiles") or []}
    return {
        "forecast": forecast,
        "forecast_cases": cases,
        "forecast_figure": forecast_figure(forecast, series, du) if forecast else None,
        "deliverability_figure": deliverability_figure(fits, tests, du) if (fits or tests) else None,
        "well_tests": tests,
        "plan": field_plan.stored_plan(row),
        "plan_form_words": field_plan.FORM_WORDS,
        "plan_exists": row is not None,
        "planned_wells": field_plan.planned_well_rows(session, field.id),
        "stop_words": stop_words,
        "forecast_caution": CAUTION,
    }
