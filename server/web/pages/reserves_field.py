"""A field's booking page in a reserves review: the frozen estimate and forecast summary, the
booking form (class and status, overrides with a reason, justification) and the field's
reconciliation lines with the form that assigns each category's change.

Volumes are typed and shown in the user's display units and converted back before the services
check them; a value equal to the one the form showed keeps the stored value, so resubmitting a
rounded SI value changes nothing. A bad value re-renders the page (422) with the reason beside
its input and changes nothing; a review that is not a draft refuses every change (409)."""

from __future__ import annotations

import math
from types import SimpleNamespace
from typing import Annotated

from fastapi import APIRouter, Form, HTTPException, Request
from fastapi.responses import HTMLResponse
from sqlalchemy import select

from ...db.models import Booking, ReviewField
from ...db.models.reserves import CONTINGENT_STATUSES, RESERVES_STATUSES
from ...services.reserves import booking as bk
from ...services.reserves import categories, filters, reconcile, rules, views
from ..auth import Analyst, Principal, Reader
from ..charts.booking import booking_figure
from ..deps import SessionDep
from ..display import DisplayUnits, units_for_request
from ..templating import render
from .reserves import done, flash_for, refusal_status, review_or_404

router = APIRouter(include_in_schema=False)
SHOWN_AS = ".3f"  # how the forms show volumes (0.001 Bscf, the review's rounding)
CLASS_STATUS = [("reserves", s) for s in RESERVES_STATUSES] + [("contingent", s) for s in CONTINGENT_STATUSES]
LINE_KEYS = reconcile.ASSIGNABLE
BOOKING_KEYS = ("class_status", "override_low_bscf", "override_best_bscf", "override_high_bscf")
BOOKING_KEYS += ("override_reason", "justification", "overrides")


def _context(session, user: Principal, du: DisplayUnits, review, field_id: int, **extra) -> dict:
    detail = views.review_detail(session, review, user.asset_ids)
    row = next((f for f in detail.fields if f.field_id == field_id), None)
    if row is None:
        raise HTTPException(status_code=404, detail=f"field {field_id} is not in this review")
    lines = [ln for ln in detail.reconciliation if ln["field_id"] == field_id]
    base = {
        "title": f"{row.field_name}: reserves review {review.name}",
        "review": detail.review,
        "f": row,
        "blocks": filters.field_blocks(row),
        "lines": lines,
        "line_keys": LINE_KEYS,
        "tolerance_bscf": rules.BALANCE_TOLERANCE_BSCF,
        "class_status": CLASS_STATUS,
        "class_titles": categories.CLASS_TITLES,
        "status_titles": categories.STATUS_TITLES,
        "editable": review.status == "draft" and user.can("analyse"),
        "chart": booking_figure(row, du),
        "shown_as": SHOWN_AS,
        "problem": "",
        "problems": {},
        "submitted": {},
        "flash": "",
    }
    return {**base, **extra}


@router.get("/reserves/{review_id}/fields/{field_id}", response_class=HTMLResponse, name="reserves_field")
def field_page(
    request: Request, review_id: int, field_id: int, session: SessionDep, user: Reader, changed: str = ""
):
    review = review_or_404(session, review_id)
    du = units_for_request(request)
    context = _context(session, user, du, review, field_id, flash=flash_for(session, review_id, changed))
    return render(request, "reserves_field.html", context)


def _refused(request, session, user, review_id, field_id, status, **extra):
    session.rollback()
    review = review_or_404(session, review_id)
    du = units_for_request(request)
    return render(
        request, "reserves_field.html", _context(session, user, du, review, field_id, **extra), status
    )


def stored_volume(du: DisplayUnits, text: str, current: float | None) -> float | None:
    """A volume typed in display units, in Bscf (None for an empty box); the stored value when
    it reads as the form showed it. Raises ValueError with the reason."""
    text = (text or "").strip().replace(",", "")
    if not text:
        return None
    try:
        typed = float(text)
    except ValueError:
        raise ValueError(f"must be a number, got {text[:40]!r}") from None
    if not math.isfinite(typed):
        raise ValueError("must be a finite number")
    if current is not None and format(typed, SHOWN_AS) == format(du.value("gas_bscf", current), SHOWN_AS):
        return current
    return typed / du.value("gas_bscf", 1.0)


def problems_from(message: str, field_name: str, keys, default: str) -> dict[str, str]:
    """A service's "<field>: key: text; key: text" message as {key: text} (the rest under ``default``)."""
    body = message.removeprefix(f"{field_name}: ")
    out: dict[str, str] = {}
    last = default
    for part in body.split("; "):
        key, _, text = part.partition(": ")
        if key in keys and text:
            out[key], last = text, key
        else:
            out[last] = f"{out[last]}; {part}" if last in out else part
    return out


def _snap(session, review, field_id: int):
    snap = session.execute(
        select(ReviewField).where(ReviewField.review_id == review.id, ReviewField.field_id == field_id)
    ).scalar_one_or_none()
    if snap is None:
        raise HTTPException(status_code=404, detail=f"field {field_id} is not in this review")
    return snap, session.execute(select(Booking).where(Booking.review_field_id == snap.id)).scalar_one()


@router.post("/reserves/{review_id}/fields/{field_id}/booking", name="reserves_booking")
def booking_form(
    request: Request,
    review_id: int,
    field_id: int,
    session: SessionDep,
    user: Analyst,
    class_status: Annotated[str, Form(max_length=60)] = "",
    override_low: Annotated[str, Form(max_length=40)] = "",
    override_best: Annotated[str, Form(max_length=40)] = "",
    override_high: Annotated[str, Form(max_length=40)] = "",
    override_reason: Annotated[str, Form(max_length=4000)] = "",
    justification: Annotated[str, Form(max_length=4000)] = "",
):
    review = review_or_404(session, review_id)
    snap, booking = _snap(session, review, field_id)
    du = units_for_request(request)
    typed = {"low": override_low, "best": override_best, "high": override_high}
    submitted = {f"override_{c}_bscf": t for c, t in typed.items()}
    submitted |= {
        "class_status": class_status,
        "override_reason": override_reason,
        "justification": justification,
    }
    problems, values = {}, {}
    cls, _, status = class_status.partition(":")
    if (cls, status) not in CLASS_STATUS:
        problems["class_status"] = "choose a resource class and status from the list"
    for case, text in typed.items():
        key = f"override_{case}_bscf"
        try:
            values[key] = stored_volume(du, text, getattr(booking, key))
        except ValueError as exc:
            problems[key] = str(exc)
        else:
            if values[key] is not None and values[key] < 0:
                problems[key] = "cannot be negative"
    if problems:
        return _refused(
            request, session, user, review_id, field_id, 422, problems=problems, submitted=submitted
        )
    change = bk.BookingChange(
        resource_class=cls,
        status=status,
        override_reason=override_reason,
        clear_overrides=True,
        justification=justification,
        **values,
    )
    try:
        bk.change_booking(session, user.actor, review, snap, booking, change)
        reconcile.rebuild(session, review)
    except rules.ReservesError as exc:
        code = 422 if not isinstance(exc, rules.ReviewLockedError) else 409
        found = problems_from(str(exc), snap.field_name, BOOKING_KEYS, "overrides")
        return _refused(
            request,
            session,
            user,
            review_id,
            field_id,
            code,
            problem=str(exc),
            problems=found,
            submitted=submitted,
        )
    return done(request, session, review_id, "reserves_field", field_id=field_id, anchor="booking")


@router.post("/reserves/{review_id}/fields/{field_id}/reconciliation/{category}", name="reserves_line")
def line_form(
    request: Request,
    review_id: int,
    field_id: int,
    category: str,
    session: SessionDep,
    user: Analyst,
    revisions: Annotated[str, Form(max_length=40)] = "",
    extensions_discoveries: Annotated[str, Form(max_length=40)] = "",
    improved_recovery: Annotated[str, Form(max_length=40)] = "",
    acquisitions: Annotated[str, Form(max_length=40)] = "",
    disposals: Annotated[str, Form(max_length=40)] = "",
    action: Annotated[str, Form(max_length=10)] = "assign",
):
    typed = (revisions, extensions_discoveries, improved_recovery, acquisitions, disposals)
    texts = dict(zip(LINE_KEYS, typed, strict=True))
    return _line(request, session, user, review_id, field_id, category, texts, action)


def _line(request, session, user, review_id, field_id, category, texts, action):
    if category not in reconcile.CATEGORIES:
        raise HTTPException(status_code=404, detail="no such category")
    review = review_or_404(session, review_id)
    snap, _ = _snap(session, review, field_id)
    du = units_for_request(request)
    form_key = f"line-{category}"
    ln = next(
        (
            x
            for x in reconcile.lines_of(session, review.id)
            if x.field_id == field_id and x.category == category
        ),
        None,
    )
    if ln is None:
        raise HTTPException(status_code=404, detail="no such reconciliation line")
    problems, values = {}, {}
    if action != "reset":
        for k, text in texts.items():
            try:
                v = stored_volume(du, text, getattr(ln, k))
            except ValueError as exc:
                problems[k] = str(exc)
                continue
            if v is not None:
                values[k] = v
            elif k != "revisions_bscf":
                values[k] = 0.0
        if not problems and "revisions_bscf" not in values:
            # an empty revisions box takes the remainder, so the line balances
            rest = {k: values.get(k, getattr(ln, k)) for k in LINE_KEYS} | {"revisions_bscf": 0.0}
            trial = SimpleNamespace(opening_bscf=ln.opening_bscf, production_bscf=ln.production_bscf, **rest)
            values["revisions_bscf"] = ln.closing_bscf - reconcile.expected_closing(trial)
    submitted = {form_key: texts}
    if problems:
        return _refused(
            request,
            session,
            user,
            review_id,
            field_id,
            422,
            problems={form_key: problems},
            submitted=submitted,
        )
    try:
        if action == "reset":
            reconcile.reset(session, user.actor, review, field_id, category)
        else:
            reconcile.assign(session, user.actor, review, field_id, category, values)
    except rules.ReservesError as exc:
        found = problems_from(str(exc), f"{snap.field_name} {category}", LINE_KEYS, "form")
        return _refused(
            request,
            session,
            user,
            review_id,
            field_id,
            refusal_status(exc) if isinstance(exc, rules.ReviewLockedError) else 422,
            problem=str(exc),
            problems={form_key: found},
            submitted=submitted,
        )
    return done(request, session, review_id, "reserves_field", field_id=field_id, anchor="reconciliation")
