"""The JSON API of the annual reserves review (issue 14): every action of the workflow.

Engineers (``analyse``) create reviews, refresh a field, book and reconcile, submit and return
a review to draft; reserves approvers (``sign_off``) approve and reopen. Actions on the whole
review need access to every asset (a review books the whole portfolio). Volumes in Bscf
(gas at the storage basis) and stb (condensate). A refused action is a 409 whose ``detail``
says why and changes nothing; a submitted or approved review answers 409 to any change.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
from typing import Annotated, Literal

from fastapi import APIRouter, HTTPException, Path
from fastapi.responses import Response
from pydantic import BaseModel, ConfigDict, Field
from sqlalchemy import select
from sqlalchemy.orm import Session

from ...db.models import Booking, ReviewField
from ...services.audit import jsonable
from ...services.reserves import booking as bk
from ...services.reserves import reconcile, rules, views, workflow
from ...services.reserves_report import content
from ..auth import Analyst, Approver, Principal, Reader
from ..deps import SessionDep
from ..report_files import XLSX, report_response
from ..schemas.common import ErrorRead, FieldId

router = APIRouter(prefix="/api/reserves", tags=["reserves"])
ReviewId = Annotated[int, Path(ge=1, le=2**31 - 1, description="a review's id (one revision)")]
NOT_FOUND = {404: {"model": ErrorRead, "description": "no such review or field"}}
REFUSED = {409: {"model": ErrorRead, "description": "the action is refused (the reason says why)"}}
FORBIDDEN = {403: {"model": ErrorRead, "description": "not allowed for this user"}}
_STRICT = ConfigDict(extra="forbid", allow_inf_nan=False)
Bscf = Annotated[float, Field(ge=0, lt=1e6)]


RowId = Annotated[int, Field(ge=1, le=2**31 - 1)]


class ReviewCreate(BaseModel):
    """Without ``asset_ids`` and ``field_ids`` the review books the whole portfolio; with either,
    the fields of those assets and those fields (e.g. leaving out a field not yet discovered or
    not yet held at the effective date)."""

    model_config = _STRICT
    name: str = Field(min_length=1, max_length=120)
    effective_date: dt.date = Field(description="as at the end of this day (YYYY-MM-DD)")
    asset_ids: list[RowId] | None = Field(None, max_length=10_000, description="every field of these assets")
    field_ids: list[RowId] | None = Field(None, max_length=10_000, description="and these fields")


class BookingUpdate(BaseModel):
    """Only the keys given change; ``clear_overrides`` goes back to the computed volumes."""

    model_config = _STRICT
    resource_class: Literal["reserves", "contingent"] | None = None
    status: str | None = Field(None, max_length=30)
    override_low_bscf: Bscf | None = None
    override_best_bscf: Bscf | None = None
    override_high_bscf: Bscf | None = None
    override_reason: str | None = Field(None, max_length=4000)
    clear_overrides: bool = False
    justification: str | None = Field(None, max_length=4000)


Signed = Annotated[float, Field(gt=-1e6, lt=1e6)]


class LineUpdate(BaseModel):
    """How the field's change in the category splits; ``reset`` gives it back to the default."""

    model_config = _STRICT
    revisions_bscf: Signed | None = None
    extensions_discoveries_bscf: Bscf | None = None
    improved_recovery_bscf: Bscf | None = None
    acquisitions_bscf: Bscf | None = None
    disposals_bscf: Bscf | None = None
    reset: bool = False


class Reason(BaseModel):
    model_config = _STRICT
    reason: str = Field(min_length=1, max_length=4000)


class Comment(BaseModel):
    model_config = _STRICT
    comment: str = Field("", max_length=4000)


def _plain(value):
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        return {f.name: _plain(getattr(value, f.name)) for f in dataclasses.fields(value)}
    if isinstance(value, dt.datetime) and value.tzinfo is None:
        value = value.replace(tzinfo=dt.UTC)
    if isinstance(value, list | tuple):
        return [_plain(v) for v in value]
    if isinstance(value, dict):
        return {k: _plain(v) for k, v in value.items()}
    return jsonable(value)


def _review(session: Session, review_id: int):
    try:
        return workflow.get_review(session, review_id)
    except rules.ReviewNotFoundError as e:
        raise HTTPException(status_code=404, detail=str(e)) from None


def _whole_portfolio(user: Principal) -> None:
    if user.asset_ids is not None:
        raise HTTPException(
            status_code=403, detail="a review books the whole portfolio: it needs access to every asset"
        )


def _refused(e: Exception):
    return HTTPException(status_code=409, detail=str(e))


def _detail(session: Session, review, user: Principal) -> dict:
    return _plain(views.review_detail(session, review, user.asset_ids))


@router.get("/reviews", summary="every review and revision, newest first")
def list_reviews(session: SessionDep, user: Reader):
    return _plain(views.list_reviews(session))


@router.post(
    "/reviews",
    status_code=201,
    responses=REFUSED | FORBIDDEN,
    summary="a draft with every field in scope frozen (the whole portfolio, or chosen assets and fields)",
)
def create_review(body: ReviewCreate, session: SessionDep, user: Analyst):
    _whole_portfolio(user)
    try:
        review = workflow.create_review(
            session,
            user.actor,
            body.name,
            body.effective_date,
            field_ids=body.field_ids,
            asset_ids=body.asset_ids,
            permitted_asset_ids=user.asset_ids,
        )
    except rules.ReservesError as e:
        raise _refused(e) from None
    session.commit()
    return _detail(session, review, user)


@router.get(
    "/reviews/{review_id}", responses=NOT_FOUND, summary="the review: bookings, totals, reconciliation"
)
def get_review(review_id: ReviewId, session: SessionDep, user: Reader):
    return _detail(session, _review(session, review_id), user)


PDF_FILE = {200: {"description": "the PDF", "content": {"application/pdf": {}}}, **NOT_FOUND}
XLSX_FILE = {200: {"description": "the workbook", "content": {XLSX: {}}}, **NOT_FOUND}


@router.get(
    "/reviews/{review_id}/report.pdf",
    responses=PDF_FILE,
    response_class=Response,
    summary="the reserves report (PDF; a draft is marked DRAFT on every page)",
)
def report_pdf(review_id: ReviewId, session: SessionDep, user: Reader):
    review = _review(session, review_id)
    return report_response(content.build_report(session, review, user.asset_ids), "pdf")


@router.get(
    "/reviews/{review_id}/report.xlsx",
    responses=XLSX_FILE,
    response_class=Response,
    summary="the review as a workbook (XLSX; every column's unit on the columns sheet)",
)
def report_xlsx(review_id: ReviewId, session: SessionDep, user: Reader):
    review = _review(session, review_id)
    return report_response(content.build_report(session, review, user.asset_ids), "xlsx")


def _snap(session: Session, review, field_id: int):
    snap = session.execute(
        select(ReviewField).where(ReviewField.review_id == review.id, ReviewField.field_id == field_id)
    ).scalar_one_or_none()
    if snap is None:
        raise HTTPException(status_code=404, detail=f"field {field_id} is not in review {review.name!r}")
    return snap, session.execute(select(Booking).where(Booking.review_field_id == snap.id)).scalar_one()


def _field_row(session, review, field_id, user) -> dict:
    rows = [r for r in views.field_bookings(session, review, user.asset_ids) if r.field_id == field_id]
    return _plain(rows[0]) if rows else {}


@router.post(
    "/reviews/{review_id}/fields/{field_id}/refresh",
    responses=NOT_FOUND | REFUSED,
    summary="copy the field's newest estimate and production into the draft",
)
def refresh_field(review_id: ReviewId, field_id: FieldId, session: SessionDep, user: Analyst):
    review = _review(session, review_id)
    _snap(session, review, field_id)
    try:
        workflow.refresh_field(session, user.actor, review, field_id)
    except rules.ReservesError as e:
        raise _refused(e) from None
    session.commit()
    return _field_row(session, review, field_id, user)


@router.get("/reviews/{review_id}/fields/{field_id}", responses=NOT_FOUND, summary="one field's booking")
def get_field(review_id: ReviewId, field_id: FieldId, session: SessionDep, user: Reader):
    review = _review(session, review_id)
    _snap(session, review, field_id)
    row = _field_row(session, review, field_id, user)
    if not row:
        raise HTTPException(status_code=404, detail="no such field")
    lines = [views.line_dict(ln) for ln in reconcile.lines_of(session, review.id) if ln.field_id == field_id]
    return row | {"reconciliation": _plain(lines)}


@router.patch(
    "/reviews/{review_id}/fields/{field_id}/booking",
    responses=NOT_FOUND | REFUSED,
    summary="class, status, overrides (with a reason) and justification",
)
def patch_booking(
    review_id: ReviewId, field_id: FieldId, body: BookingUpdate, session: SessionDep, user: Analyst
):
    review = _review(session, review_id)
    snap, booking = _snap(session, review, field_id)
    try:
        bk.change_booking(session, user.actor, review, snap, booking, bk.BookingChange(**body.model_dump()))
        reconcile.rebuild(session, review)
    except rules.ReservesError as e:
        session.rollback()
        raise _refused(e) from None
    session.commit()
    return _field_row(session, review, field_id, user)


@router.put(
    "/reviews/{review_id}/fields/{field_id}/reconciliation/{category}",
    responses=NOT_FOUND | REFUSED,
    summary="assign a field's change in one category (or reset it to the default)",
)
def put_line(
    review_id: ReviewId,
    field_id: FieldId,
    category: Literal["1P", "2P", "3P"],
    body: LineUpdate,
    session: SessionDep,
    user: Analyst,
):
    review = _review(session, review_id)
    try:
        if body.reset:
            reconcile.reset(session, user.actor, review, field_id, category)
        else:
            values = {k: v for k, v in body.model_dump(exclude={"reset"}).items() if v is not None}
            reconcile.assign(session, user.actor, review, field_id, category, values)
    except rules.ReservesError as e:
        session.rollback()
        raise _refused(e) from None
    session.commit()
    lines = [
        views.line_dict(ln)
        for ln in reconcile.lines_of(session, review.id)
        if ln.field_id == field_id and ln.category == category
    ]
    return _plain(lines[0])


def _act(session: Session, review_id: int, user: Principal, action, *args) -> dict:
    _whole_portfolio(user)
    review = _review(session, review_id)
    try:
        out = action(session, user.actor, review, *args)
    except rules.FourEyesError as e:
        session.rollback()
        raise HTTPException(status_code=403, detail=str(e)) from None
    except rules.ReservesError as e:
        session.rollback()
        raise _refused(e) from None
    session.commit()
    return _detail(session, out, user)


@router.post(
    "/reviews/{review_id}/submit",
    responses=NOT_FOUND | REFUSED | FORBIDDEN,
    summary="submit for approval (refused with every reason it cannot be)",
)
def submit(review_id: ReviewId, session: SessionDep, user: Analyst):
    return _act(session, review_id, user, workflow.submit)


@router.post(
    "/reviews/{review_id}/return",
    responses=NOT_FOUND | REFUSED | FORBIDDEN,
    summary="send a submitted review back to draft, with a reason",
)
def return_to_draft(review_id: ReviewId, body: Reason, session: SessionDep, user: Analyst):
    return _act(session, review_id, user, workflow.return_to_draft, body.reason)


@router.post(
    "/reviews/{review_id}/approve",
    responses=NOT_FOUND | REFUSED | FORBIDDEN,
    summary="approve a submitted review (reserves approvers; four eyes if the team asks)",
)
def approve(review_id: ReviewId, body: Comment, session: SessionDep, user: Approver):
    return _act(session, review_id, user, workflow.approve, body.comment)


@router.post(
    "/reviews/{review_id}/reopen",
    status_code=201,
    responses=NOT_FOUND | REFUSED | FORBIDDEN,
    summary="a new draft revision of an approved review; the approved one is kept",
)
def reopen(review_id: ReviewId, body: Reason, session: SessionDep, user: Approver):
    return _act(session, review_id, user, workflow.reopen, body.reason)
