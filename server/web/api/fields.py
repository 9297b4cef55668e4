"""The JSON twins of the field page's work: set a survey aside, change the analysis choices,
read the estimate history, read and write notes. Values in stored units (names say which).

A change answers once the field's recompute has run (inline or thread runners), with the
estimate then current; with external workers ``job_id`` is the recompute still to come."""

from __future__ import annotations

import dataclasses
import datetime as dt
from typing import Annotated, Literal

from fastapi import APIRouter, HTTPException, Path, Query, Request, Response
from pydantic import BaseModel, ConfigDict, Field
from sqlalchemy.orm import Session

from ...db.models.portfolio import NOTE_MAX_CHARS
from ...engine.headline.types import BASIS_CHOICES
from ...services.fieldwork import choices as field_work
from ...services.fieldwork import fluid as fluid_work
from ...services.fieldwork import notes as field_notes
from ...services.fieldwork import plan as field_plan
from ...services.fieldwork.history import estimate_history, field_surveys, production_series
from ...services.forecast import CAUTION, remaining_after, stop_words
from ...services.jobs.recompute import current_estimate
from ..auth import Analyst, NoteWriter, Reader
from ..background import recompute_now
from ..deps import SessionDep, TeamDep
from ..field_access import field_or_404
from ..schemas.common import ChoicesRead, ErrorRead, EstimateRead, FieldId, HistoryRead, NoteRead
from ..schemas.forecast import ForecastRead, PlanRead, PlanUpdate

router = APIRouter(prefix="/api/fields", tags=["fields"])
NOT_FOUND = {404: {"model": ErrorRead, "description": "no such field or survey (or not in your assets)"}}
REFUSED = {409: {"model": ErrorRead, "description": "a value is not acceptable (the reason says which)"}}
_STRICT = ConfigDict(extra="forbid", allow_inf_nan=False)
ItemId = Annotated[int, Path(ge=1, le=2**31 - 1, description="a survey's or note's id")]


class ExclusionUpdate(BaseModel):
    model_config = _STRICT
    excluded: bool = Field(description="true: set the survey aside; false: take it back into the fit")
    reason: str = Field("", max_length=field_work.REASON_MAX_CHARS, description="required to set aside")


class ChoicesUpdate(BaseModel):
    """Only the values given change; a value equal to the one in force changes nothing."""

    model_config = _STRICT
    abandonment_pressure_psia: float | None = Field(None, gt=0, description="above the atmosphere, below p_i")
    z_method: str | None = None
    datum_correction: bool | None = None
    condensate_correction: bool | None = None
    use_lab_table: bool | None = None
    anchor_initial: bool | None = None
    overpressure_mode: str | None = None
    effective_compressibility_per_psi: float | None = Field(None, ge=0, lt=field_work.CE_MAX_PER_PSI)
    basis_model: Literal[BASIS_CHOICES] | None = Field(  # type: ignore[valid-type]
        None, description='"automatic" (the evidence rule) or a model with results in the current estimate'
    )
    basis_reason: str | None = Field(
        None, max_length=field_work.REASON_MAX_CHARS, description="required when basis_model is a model"
    )


class FluidUpdate(BaseModel):
    """The gravities as the team has them; only the keys given change, null clears one. At
    least one of the two gravities must remain (the fluids upload's bounds apply)."""

    model_config = _STRICT
    gas_gravity: float | None = Field(None, description="separator (sales) gas gravity, air = 1")
    wellstream_gravity: float | None = Field(
        None, description="well-stream (reservoir) gas gravity, air = 1; when given z uses it as it is"
    )
    condensate_api: float | None = Field(None, description="condensate API gravity [°API]")


class FieldChangeRead(BaseModel):
    changed: list[str] = Field(description="what this request changed (empty: nothing to change)")
    summary: str
    audit_id: int | None
    job_id: int | None = Field(description="the field's recompute")
    estimate: EstimateRead | None = Field(description="the field's current estimate after the recompute")


class NoteCreate(BaseModel):
    model_config = _STRICT
    body: str = Field(min_length=1, max_length=NOTE_MAX_CHARS, description="plain text, shown escaped")
    survey_id: int | None = Field(None, ge=1, le=2**31 - 1)
    estimate_id: int | None = Field(None, ge=1, le=2**31 - 1)


def field_extras(session: Session, field_id: int) -> dict:
    """What the field page shows besides the estimate: choices, surveys, history, notes."""
    return {
        "choices": field_work.current_choices(field_or_404(session, field_id)),
        "surveys": [dataclasses.asdict(s) for s in field_surveys(session, field_id)],
        "history": [dataclasses.asdict(h) for h in estimate_history(session, field_id)],
        "notes": [dataclasses.asdict(n) for n in field_notes.field_notes(session, field_id)],
        "production": dataclasses.asdict(production_series(session, field_id)),
    }


def _answer(request: Request, session: Session, field_id: int, outcome) -> dict:
    session.commit()
    recompute_now(request, outcome.job_id)
    session.expire_all()
    return {
        "changed": list(outcome.changed),
        "summary": outcome.summary,
        "audit_id": outcome.audit_id,
        "job_id": outcome.job_id,
        "estimate": current_estimate(session, field_id),
    }


@router.put(
    "/{field_id}/surveys/{survey_id}/exclusion",
    response_model=FieldChangeRead,
    responses=NOT_FOUND | REFUSED,
)
def put_exclusion(
    request: Request,
    field_id: FieldId,
    survey_id: ItemId,
    body: ExclusionUpdate,
    session: SessionDep,
    user: Analyst,
):
    """Set a survey aside with a reason, or take it back; the field is recomputed."""
    field = field_or_404(session, field_id)
    try:
        outcome = field_work.set_survey_exclusion(
            session, user.actor, field, survey_id, excluded=body.excluded, reason=body.reason
        )
    except field_work.NotFoundError as exc:
        raise HTTPException(status_code=404, detail=str(exc)) from None
    except field_work.FieldWorkError as exc:
        raise HTTPException(status_code=409, detail=str(exc)) from None
    return _answer(request, session, field_id, outcome)


@router.get("/{field_id}/choices", response_model=ChoicesRead, responses=NOT_FOUND)
def get_choices(field_id: FieldId, session: SessionDep, user: Reader):
    """The field's abandonment pressure and analysis choices."""
    return field_work.current_choices(field_or_404(session, field_id))


@router.patch("/{field_id}/choices", response_model=FieldChangeRead, responses=NOT_FOUND | REFUSED)
def patch_choices(
    request: Request,
    field_id: FieldId,
    body: ChoicesUpdate,
    session: SessionDep,
    team: TeamDep,
    user: Analyst,
):
    """Change the abandonment pressure and analysis choices; audited, then recomputed."""
    field = field_or_404(session, field_id)
    values = body.model_dump(exclude_unset=True)
    values = {k: v for k, v in values.items() if v is not None or k == "effective_compressibility_per_psi"}
    try:
        outcome = field_work.update_choices(
            session, user.actor, field, values, atmosphere_psia=team.atmosphere_psia
        )
    except field_work.FieldWorkError as exc:
        raise HTTPException(status_code=409, detail=str(exc)) from None
    return _answer(request, session, field_id, outcome)


def _plan_read(session: Session, field_id: int) -> dict:
    row = field_plan.plan_row(session, field_id)
    return {
        "exists": row is not None,
        **field_plan.stored_plan(row),
        "planned_wells": field_plan.planned_well_rows(session, field_id),
    }


@router.get("/{field_id}/plan", response_model=PlanRead, responses=NOT_FOUND)
def get_plan(field_id: FieldId, session: SessionDep, user: Reader):
    """The field's plan (how it will be produced) and its planned wells."""
    field_or_404(session, field_id)
    return _plan_read(session, field_id)


@router.put("/{field_id}/plan", response_model=FieldChangeRead, responses=NOT_FOUND | REFUSED)
def put_plan(request: Request, field_id: FieldId, body: PlanUpdate, session: SessionDep, user: Analyst):
    """Change the field's plan (only the values given; null clears an optional one); audited in
    words, then the field is recomputed. A refusal names each value and changes nothing."""
    field = field_or_404(session, field_id)
    values = body.model_dump(exclude_unset=True)
    try:
        outcome = field_plan.update_plan(session, user.actor, field, values)
    except field_work.FieldWorkError as exc:
        raise HTTPException(status_code=409, detail=str(exc)) from None
    return _answer(request, session, field_id, outcome)


@router.patch("/{field_id}/fluid", response_model=FieldChangeRead, responses=NOT_FOUND | REFUSED)
def patch_fluid(request: Request, field_id: FieldId, body: FluidUpdate, session: SessionDep, user: Analyst):
    """Correct the gas gravities (separator gas, well stream, or both) or the API gravity; audited,
    then recomputed. The fluid's full description is GET /api/fields/{id}/fluid."""
    field = field_or_404(session, field_id)
    values = fluid_work.current_fluid(field) | body.model_dump(exclude_unset=True)
    try:
        outcome = fluid_work.update_fluid(session, user.actor, field, values)
    except field_work.FieldWorkError as exc:
        raise HTTPException(status_code=409, detail=str(exc)) from None
    return _answer(request, session, field_id, outcome)


@router.get("/{field_id}/forecast", response_model=ForecastRead, responses=NOT_FOUND)
def get_forecast(
    field_id: FieldId,
    session: SessionDep,
    user: Reader,
    remaining_from: Annotated[
        dt.date | None, Query(description="also give each case's remaining after this date")
    ] = None,
):
    """The forecast stored with the current estimate: each case's monthly and yearly profile,
    end date, stop reason (and in words), EUR at the commercial limit and remaining; the wells'
    deliverability fits. Empty profiles when the field has no plan (or no estimate)."""
    field_or_404(session, field_id)
    est = current_estimate(session, field_id)
    fc = (est.detail or {}).get("forecast") if est is not None else None
    profiles = []
    for p in (fc or {}).get("profiles") or []:
        extra = {"stop_words": stop_words(p.get("stop_reason"))}
        if remaining_from is not None:
            extra["remaining_after_date_bscf"] = remaining_after(p, remaining_from)
        profiles.append(p | extra)
    return {
        "estimate_id": est.id if est is not None else None,
        "basis_model": (fc or {}).get("basis_model"),
        # Forecasts stored before the form was a choice were all in the p² form.
        "deliverability_form": ((fc.get("deliverability_form") or "pressure_squared") if fc else None),
        "deliverability": (fc or {}).get("deliverability") or [],
        "water": (fc or {}).get("water"),
        "profiles": profiles,
        "notes": (fc or {}).get("notes") or [],
        "remaining_from": remaining_from,
        "caution": CAUTION,
    }


@router.get("/{field_id}/history", response_model=list[HistoryRead], responses=NOT_FOUND)
def get_history(field_id: FieldId, session: SessionDep, user: Reader):
    """Every stored estimate of the field, oldest first, with what triggered it where known."""
    field_or_404(session, field_id)
    return [dataclasses.asdict(h) for h in estimate_history(session, field_id)]


@router.get("/{field_id}/notes", response_model=list[NoteRead], responses=NOT_FOUND)
def get_notes(field_id: FieldId, session: SessionDep, user: Reader):
    """The team's notes on the field, newest first."""
    field_or_404(session, field_id)
    return [dataclasses.asdict(n) for n in field_notes.field_notes(session, field_id)]


@router.post("/{field_id}/notes", response_model=NoteRead, status_code=201, responses=NOT_FOUND | REFUSED)
def post_note(field_id: FieldId, body: NoteCreate, session: SessionDep, user: NoteWriter):
    """Add a note (plain text), optionally about one survey or estimate of this field."""
    field = field_or_404(session, field_id)
    try:
        note = field_notes.add_note(
            session, user.actor, field, body.body, survey_id=body.survey_id, estimate_id=body.estimate_id
        )
    except field_work.FieldWorkError as exc:
        raise HTTPException(status_code=409, detail=str(exc)) from None
    return dataclasses.asdict(note)


@router.delete(
    "/{field_id}/notes/{note_id}",
    status_code=204,
    response_class=Response,
    responses=NOT_FOUND | {403: {"model": ErrorRead, "description": "not your note"}},
)
def remove_note(field_id: FieldId, note_id: ItemId, session: SessionDep, user: NoteWriter):
    """Delete one of your own notes."""
    field = field_or_404(session, field_id)
    try:
        field_notes.delete_note(session, user.actor, field, note_id)
    except field_work.NotFoundError as exc:
        raise HTTPException(status_code=404, detail=str(exc)) from None
    except field_notes.NotYoursError as exc:
        raise HTTPException(status_code=403, detail=str(exc)) from None
    return Response(status_code=204)
