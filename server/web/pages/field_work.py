"""Working on a field from its page: set surveys aside, change the analysis choices, write
notes. Each form posts here; a change is audited, recomputes the field and redirects back to
the page (redirect-after-post) with the change's summary; a bad value re-renders the page
with the reason beside the form (422) and changes nothing."""

from __future__ import annotations

import math
from typing import Annotated

from fastapi import APIRouter, Form, HTTPException, Request
from fastapi.responses import HTMLResponse, RedirectResponse

from ...db.models import Field
from ...services.fieldwork import choices as field_work
from ...services.fieldwork import notes as field_notes
from ...services.fieldwork import plan as field_plan
from ..auth import Analyst, NoteWriter
from ..background import recompute_now
from ..deps import SessionDep, TeamDep
from ..display import DisplayUnits, units_for_request
from ..field_access import field_or_404
from ..templating import render
from .field_context import field_context

router = APIRouter(include_in_schema=False)


def _done(request: Request, session, field_id: int, outcome_audit_id: int | None, job_id, anchor: str):
    session.commit()  # the change and its queued job must be visible to the runner
    recompute_now(request, job_id)
    query = f"?changed={outcome_audit_id}" if outcome_audit_id else ""
    return RedirectResponse(f"/fields/{field_id}{query}#{anchor}", status_code=303)


def _problem_page(request: Request, session, field_id: int, problems: dict, submitted: dict, form: str):
    session.rollback()
    context = field_context(
        session, field_id, units_for_request(request), problems={form: problems}, submitted={form: submitted}
    )
    return render(request, "field.html", context, status_code=422)


@router.post("/fields/{field_id}/surveys/{survey_id}/exclusion", response_class=HTMLResponse)
def survey_exclusion(
    request: Request,
    field_id: int,
    survey_id: int,
    session: SessionDep,
    user: Analyst,
    action: Annotated[str, Form(max_length=10)],
    reason: Annotated[str, Form(max_length=2000)] = "",
):
    field = field_or_404(session, field_id)
    if action not in ("exclude", "include"):
        raise HTTPException(status_code=422, detail="action must be 'exclude' or 'include'")
    try:
        outcome = field_work.set_survey_exclusion(
            session, user.actor, field, survey_id, excluded=action == "exclude", reason=reason
        )
    except field_work.NotFoundError as exc:
        raise HTTPException(status_code=404, detail=str(exc)) from None
    except field_work.FieldWorkError as exc:
        return _problem_page(
            request, session, field_id, exc.problems, {"survey_id": survey_id, "reason": reason}, "survey"
        )
    return _done(request, session, field_id, outcome.audit_id, outcome.job_id, f"survey-{survey_id}")


def _stored_from_display(du: DisplayUnits, kind: str, text: str, current: float | None, shown_as: str):
    """A value typed in display units, in stored units; None when it equals the value the form
    showed (``format(value, shown_as)``), so resubmitting a rounded value changes nothing.
    Raises ValueError."""
    text = (text or "").strip().replace(",", "")
    if not text:
        raise ValueError("enter a number")
    try:
        typed = float(text)
    except ValueError:
        raise ValueError(f"must be a number, got {text[:40]!r}") from None
    if not math.isfinite(typed):
        raise ValueError("must be a finite number")
    if current is not None and format(typed, shown_as) == format(du.value(kind, current), shown_as):
        return None
    return typed / du.value(kind, 1.0)


def choices_from_form(du: DisplayUnits, field: Field, current: dict, form: dict, atmosphere_psia: float):
    """(values in stored units, problems) from the choices form (display units)."""
    values, problems = {}, {}
    try:
        p_a = _stored_from_display(
            du,
            "pressure",
            form["abandonment_pressure"],
            current["abandonment_pressure_psia"],
            PRESSURE_SHOWN_AS,
        )
        if p_a is not None:
            values["abandonment_pressure_psia"] = p_a
            if not atmosphere_psia < p_a < field.initial_pressure_psia:
                atm = du.show_with_unit("pressure", atmosphere_psia)
                p_i = du.show_with_unit("pressure", field.initial_pressure_psia)
                problems["abandonment_pressure_psia"] = (
                    f"abandonment pressure must lie above the atmosphere ({atm}) "
                    f"and below the initial pressure ({p_i})"
                )
    except ValueError as exc:
        problems["abandonment_pressure_psia"] = f"abandonment pressure: {exc}"
    ce_text = (form.get("ce") or "").strip()
    if ce_text:
        try:
            ce = _stored_from_display(
                du,
                "compressibility_per_psi",
                ce_text,
                current["effective_compressibility_per_psi"],
                CE_SHOWN_AS,
            )
            if ce is not None:
                values["effective_compressibility_per_psi"] = ce
        except ValueError as exc:
            problems["effective_compressibility_per_psi"] = f"ce: {exc}"
    elif current["effective_compressibility_per_psi"] is not None:
        values["effective_compressibility_per_psi"] = None
    for key in ("z_method", "overpressure_mode", "basis_model", "basis_reason"):
        values[key] = form.get(key, "")
    for key in field_work.BOOLEAN_CHOICES:
        values[key] = bool(form.get(key))
    return values, problems


PRESSURE_SHOWN_AS = ".1f"  # how the choices form shows its values (templates/_field_work.html)
CE_SHOWN_AS = ".6g"


@router.post("/fields/{field_id}/choices", response_class=HTMLResponse)
def change_choices(
    request: Request,
    field_id: int,
    session: SessionDep,
    user: Analyst,
    team: TeamDep,
    abandonment_pressure: Annotated[str, Form(max_length=40)] = "",
    z_method: Annotated[str, Form(max_length=40)] = "",
    overpressure_mode: Annotated[str, Form(max_length=20)] = "",
    basis_model: Annotated[str, Form(max_length=40)] = "automatic",
    basis_reason: Annotated[str, Form(max_length=2000)] = "",
    ce: Annotated[str, Form(max_length=40)] = "",
    datum_correction: Annotated[bool, Form()] = False,
    condensate_correction: Annotated[bool, Form()] = False,
    use_lab_table: Annotated[bool, Form()] = False,
    anchor_initial: Annotated[bool, Form()] = False,
):
    field = field_or_404(session, field_id)
    du = units_for_request(request)
    form = {
        "abandonment_pressure": abandonment_pressure,
        "z_method": z_method,
        "overpressure_mode": overpressure_mode,
        "basis_model": basis_model,
        "basis_reason": basis_reason,
        "ce": ce,
        "datum_correction": datum_correction,
        "condensate_correction": condensate_correction,
        "use_lab_table": use_lab_table,
        "anchor_initial": anchor_initial,
    }
    current = field_work.current_choices(field)
    values, problems = choices_from_form(du, field, current, form, team.atmosphere_psia)
    if not problems:
        try:
            outcome = field_work.update_choices(
                session, user.actor, field, values, atmosphere_psia=team.atmosphere_psia
            )
        except field_work.FieldWorkError as exc:
            problems = exc.problems
    if problems:
        return _problem_page(request, session, field_id, problems, form, "choices")
    return _done(request, session, field_id, outcome.audit_id, outcome.job_id, "choices")


#: The plan form's inputs: (form name, stored key, display kind; None: shown as stored).
PLAN_FORM = (
    ("plateau_rate", "plateau_rate_mscf_per_day", "rate_mscf_per_day"),
    ("uptime", "uptime_frac", None),
    ("min_flowing_pressure", "min_flowing_bhp_psia", "pressure"),
    ("compression_date", "compression_start_date", "date"),
    ("compression_min_flowing_pressure", "compression_min_flowing_bhp_psia", "pressure"),
    ("economic_limit_rate", "economic_limit_mscf_per_day", "rate_mscf_per_day"),
    ("licence_end", "licence_end_date", "date"),
    ("deliverability_exponent", "deliverability_exponent", None),
    ("deliverability_form", "deliverability_form", "choice"),
)
PLAN_SHOWN_AS = ".6g"  # as templates/_field_forecast.html shows the plan's numbers


def plan_from_form(du: DisplayUnits, current: dict, form: dict) -> tuple[dict, dict]:
    """(values in stored units, problems) from the plan form (display units). A number equal to
    the one the form showed keeps the stored value; a blank clears an optional value."""
    values, problems = {}, {}
    for name, key, kind in PLAN_FORM:
        text = (form.get(name) or "").strip()
        stored = current[key]
        if kind == "choice":  # a select: blank (an older form) or the stored value keeps it
            if text and text != stored:
                values[key] = text
            continue
        if kind == "date" or not text:
            values[key] = text
            continue
        try:
            if kind is None:
                shown = "" if stored is None else format(stored, PLAN_SHOWN_AS)
                if text.replace(",", "") == shown:
                    continue
                values[key] = text
            else:
                value = _stored_from_display(du, kind, text, stored, PLAN_SHOWN_AS)
                if value is not None:
                    values[key] = value
        except ValueError as exc:
            problems[key] = f"{field_plan.WORDS[key]}: {exc}"
    return values, problems


@router.post("/fields/{field_id}/plan", response_class=HTMLResponse)
def change_plan(
    request: Request,
    field_id: int,
    session: SessionDep,
    user: Analyst,
    plateau_rate: Annotated[str, Form(max_length=40)] = "",
    uptime: Annotated[str, Form(max_length=40)] = "",
    min_flowing_pressure: Annotated[str, Form(max_length=40)] = "",
    compression_date: Annotated[str, Form(max_length=40)] = "",
    compression_min_flowing_pressure: Annotated[str, Form(max_length=40)] = "",
    economic_limit_rate: Annotated[str, Form(max_length=40)] = "",
    licence_end: Annotated[str, Form(max_length=40)] = "",
    deliverability_exponent: Annotated[str, Form(max_length=40)] = "",
    deliverability_form: Annotated[str, Form(max_length=40)] = "",
):
    field = field_or_404(session, field_id)
    du = units_for_request(request)
    form = {
        "plateau_rate": plateau_rate,
        "uptime": uptime,
        "min_flowing_pressure": min_flowing_pressure,
        "compression_date": compression_date,
        "compression_min_flowing_pressure": compression_min_flowing_pressure,
        "economic_limit_rate": economic_limit_rate,
        "licence_end": licence_end,
        "deliverability_exponent": deliverability_exponent,
        "deliverability_form": deliverability_form,
    }
    current = field_plan.stored_plan(field_plan.plan_row(session, field_id))
    values, problems = plan_from_form(du, current, form)
    if not problems:
        try:
            outcome = field_plan.update_plan(session, user.actor, field, values)
        except field_work.FieldWorkError as exc:
            problems = exc.problems
    if problems:
        return _problem_page(request, session, field_id, _words(problems), form, "plan")
    return _done(request, session, field_id, outcome.audit_id, outcome.job_id, "forecast")


def _words(problems: dict) -> dict:
    """Each problem names its input in words ("licence end: must be ...")."""
    return {
        k: v if v.startswith(field_plan.WORDS.get(k, "\0")) else f"{field_plan.WORDS.get(k, k)}: {v}"
        for k, v in problems.items()
    }


@router.post("/fields/{field_id}/notes", response_class=HTMLResponse)
def add_note(
    request: Request,
    field_id: int,
    session: SessionDep,
    user: NoteWriter,
    body: Annotated[str, Form(max_length=20000)] = "",
    survey_id: Annotated[str, Form(max_length=12)] = "",
):
    field = field_or_404(session, field_id)
    sid = int(survey_id) if survey_id.strip().isdigit() else None
    try:
        note = field_notes.add_note(session, user.actor, field, body, survey_id=sid)
    except field_work.FieldWorkError as exc:
        return _problem_page(
            request, session, field_id, exc.problems, {"body": body, "survey_id": survey_id}, "note"
        )
    session.commit()
    return RedirectResponse(f"/fields/{field_id}?noted={note.id}#note-{note.id}", status_code=303)


@router.post("/fields/{field_id}/notes/{note_id}/delete", response_class=HTMLResponse)
def delete_note(request: Request, field_id: int, note_id: int, session: SessionDep, user: NoteWriter):
    field = field_or_404(session, field_id)
    try:
        field_notes.delete_note(session, user.actor, field, note_id)
    except field_work.NotFoundError as exc:
        raise HTTPException(status_code=404, detail=str(exc)) from None
    except field_notes.NotYoursError as exc:
        raise HTTPException(status_code=403, detail=str(exc)) from None
    session.commit()
    return RedirectResponse(f"/fields/{field_id}#notes", status_code=303)
