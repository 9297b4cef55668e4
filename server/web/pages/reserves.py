"""Pages of the annual reserves review: the list of reviews with the form that creates one, and
a review's page (bookings with filters, what blocks submission, totals, reconciliation) with
the forms of the workflow: refresh a field, submit, return to draft, approve, reopen. A field's
booking page is ``reserves_field.py``. Every form has a JSON twin in ``web/api/reserves.py``.

A change is made by the services (which check the review is a draft and audit it), committed,
and redirected to the page with ``?changed=<audit id>`` (its summary is shown); a refused change
re-renders the page with the reason beside its form and changes nothing (422 for a bad value,
409 for a review that cannot change, 403 for four eyes)."""

from __future__ import annotations

import datetime as dt
from typing import Annotated

from fastapi import APIRouter, Form, HTTPException, Request
from fastapi.responses import HTMLResponse, RedirectResponse
from sqlalchemy import func, select

from ...db.models import AuditEvent
from ...services.reserves import categories, filters, rules, snapshot, views, workflow
from ...services.reserves_report import content
from ..auth import Analyst, Approver, Principal, Reader
from ..deps import SessionDep
from ..report_files import report_response
from ..templating import render

router = APIRouter(include_in_schema=False)
MAX_ID = 2**31 - 1


def review_or_404(session, review_id: int):
    if not 1 <= review_id <= MAX_ID:
        raise HTTPException(status_code=404, detail="no such review")
    try:
        return workflow.get_review(session, review_id)
    except rules.ReviewNotFoundError:
        raise HTTPException(status_code=404, detail="no such review") from None


def last_event_id(session, review_id: int) -> int | None:
    """The newest audit event of a review (the change just made, for the flash message)."""
    return session.execute(
        select(func.max(AuditEvent.id)).where(
            AuditEvent.entity_type == "reserves_review", AuditEvent.entity_id == review_id
        )
    ).scalar_one()


def flash_for(session, review_id: int, changed: str) -> str:
    """The summary of the change ``?changed=`` names, if it is an event of this review."""
    if not (changed.isdigit() and len(changed) < 10):
        return ""
    event = session.get(AuditEvent, int(changed))
    if event is None or event.entity_type != "reserves_review" or event.entity_id != review_id:
        return ""
    return f"Saved: {event.summary}" if event.summary else "Saved."


def done(request: Request, session, review_id: int, route: str = "reserves_review", anchor: str = "", **kw):
    """Commit, then redirect (303) to the page with the change's summary."""
    event = last_event_id(session, review_id)
    session.commit()
    url = request.url_for(route, review_id=review_id, **kw)
    query = f"?changed={event}" if event else ""
    return RedirectResponse(f"{url}{query}{'#' + anchor if anchor else ''}", status_code=303)


def refusal_status(exc: Exception) -> int:
    if isinstance(exc, rules.FourEyesError):
        return 403
    if str(exc).split(":", 1)[0] in ("reason", "comment"):
        return 422  # a missing or unacceptable text; the review itself could take the action
    return 409


# --- the list ---------------------------------------------------------------------------------


def _list_page(request, session, problems=None, submitted=None, status_code=200):
    context = {
        "title": "Reserves reviews",
        "reviews": views.list_reviews(session),
        "scope_choices": snapshot.scope_choices(session),
        "problems": problems or {},
        "submitted": submitted or {},
    }
    return render(request, "reserves_list.html", context, status_code=status_code)


@router.get("/reserves", response_class=HTMLResponse, name="reserves_reviews")
def reviews_page(request: Request, session: SessionDep, user: Reader):
    return _list_page(request, session)


def _problem_key(message: str, keys) -> str:
    head = message.split(":", 1)[0]
    return head if head in keys else "form"


@router.post("/reserves", response_class=HTMLResponse, name="reserves_create")
def create_form(
    request: Request,
    session: SessionDep,
    user: Analyst,
    name: Annotated[str, Form(max_length=200)] = "",
    effective_date: Annotated[str, Form(max_length=40)] = "",
    scope_asset: Annotated[list[int], Form(max_length=10_000)] = [],  # noqa: B006 (FastAPI copies it)
    scope_field: Annotated[list[int], Form(max_length=10_000)] = [],  # noqa: B006
):
    """Create a review: the whole portfolio when no asset and no field is ticked, else the
    fields of the ticked assets and the ticked fields."""
    submitted = {
        "name": name,
        "effective_date": effective_date,
        "scope_asset": set(scope_asset),
        "scope_field": set(scope_field),
    }
    if user.asset_ids is not None:
        problems = {"form": "a review books the whole portfolio: it needs access to every asset"}
        return _list_page(request, session, problems, submitted, 403)
    problems = {}
    try:
        date = dt.date.fromisoformat(effective_date.strip())
    except ValueError:
        problems["effective_date"] = "effective date: a date as YYYY-MM-DD is required"
    if not name.strip():
        problems["name"] = "name: required"
    if not problems:
        try:
            review = workflow.create_review(
                session,
                user.actor,
                name,
                date,
                asset_ids=scope_asset or None,
                field_ids=scope_field or None,
                permitted_asset_ids=user.asset_ids,
            )
        except rules.ReservesError as exc:
            session.rollback()
            keys = ("name", "effective_date", "asset_ids", "field_ids")
            problems[_problem_key(str(exc), keys).replace("asset_ids", "field_ids")] = str(exc)
        else:
            return done(request, session, review.id)
    return _list_page(request, session, problems, submitted, 422)


# --- a review --------------------------------------------------------------------------------


def review_page_context(session, user: Principal, review, query: dict, **extra) -> dict:
    detail = views.review_detail(session, review, user.asset_ids)
    try:
        chosen = filters.parse_filters(
            query.get("asset", ""),
            query.get("resource_class", ""),
            query.get("show", ""),
            [f.asset_name for f in detail.fields],
        )
        filter_problem = ""
    except filters.FilterError as exc:
        chosen, filter_problem = filters.FieldFilters(), f"query.{exc}"
    shown = filters.apply(detail.fields, chosen)
    base = {
        "title": f"Reserves review {review.name}",
        "d": detail,
        "rows": shown,
        "blocks": {r.field_id: filters.field_blocks(r) for r in detail.fields},
        "filters": chosen,
        "filter_problem": filter_problem,
        "asset_choices": sorted({f.asset_name for f in detail.fields}),
        "show_choices": filters.SHOW_CHOICES,
        "whole_portfolio": user.asset_ids is None,
        "class_titles": categories.CLASS_TITLES,
        "status_titles": categories.STATUS_TITLES,
        "problem": "",
        "problems": {},
        "flash": "",
    }
    return {**base, **extra}


def _page(request, session, user, review, status_code: int = 200, query=None, **extra):
    context = review_page_context(session, user, review, query or {}, **extra)
    code = 422 if context["filter_problem"] and status_code == 200 else status_code
    return render(request, "reserves_review.html", context, status_code=code)


@router.get("/reserves/{review_id}", response_class=HTMLResponse, name="reserves_review")
def review_page(
    request: Request,
    review_id: int,
    session: SessionDep,
    user: Reader,
    asset: str = "",
    resource_class: str = "",
    show: str = "",
    changed: str = "",
):
    review = review_or_404(session, review_id)
    query = {"asset": asset, "resource_class": resource_class, "show": show}
    return _page(request, session, user, review, query=query, flash=flash_for(session, review_id, changed))


def _act(request, session, user, review_id, form: str, action, *args):
    review = review_or_404(session, review_id)
    if user.asset_ids is not None:
        return _page(request, session, user, review, 403, problem="a review books the whole portfolio")
    try:
        out = action(session, user.actor, review, *args)
    except rules.ReservesError as exc:
        session.rollback()
        review = review_or_404(session, review_id)
        return _page(
            request, session, user, review, refusal_status(exc), problem=str(exc), problems={form: str(exc)}
        )
    return done(request, session, out.id)


@router.post("/reserves/{review_id}/submit", name="reserves_submit")
def submit_form(request: Request, review_id: int, session: SessionDep, user: Analyst):
    return _act(request, session, user, review_id, "submit", workflow.submit)


@router.post("/reserves/{review_id}/return", name="reserves_return")
def return_form(
    request: Request,
    review_id: int,
    session: SessionDep,
    user: Analyst,
    reason: Annotated[str, Form(max_length=4000)] = "",
):
    return _act(request, session, user, review_id, "return", workflow.return_to_draft, reason)


@router.post("/reserves/{review_id}/approve", name="reserves_approve")
def approve_form(
    request: Request,
    review_id: int,
    session: SessionDep,
    user: Approver,
    comment: Annotated[str, Form(max_length=4000)] = "",
):
    return _act(request, session, user, review_id, "approve", workflow.approve, comment)


@router.post("/reserves/{review_id}/reopen", name="reserves_reopen")
def reopen_form(
    request: Request,
    review_id: int,
    session: SessionDep,
    user: Approver,
    reason: Annotated[str, Form(max_length=4000)] = "",
):
    return _act(request, session, user, review_id, "reopen", workflow.reopen, reason)


@router.post("/reserves/{review_id}/fields/{field_id}/refresh", name="reserves_refresh")
def refresh_form(
    request: Request,
    review_id: int,
    field_id: int,
    session: SessionDep,
    user: Analyst,
    back: Annotated[str, Form(max_length=10)] = "review",
):
    review = review_or_404(session, review_id)
    try:
        workflow.refresh_field(session, user.actor, review, field_id)
    except rules.ReservesError as exc:
        session.rollback()
        review = review_or_404(session, review_id)
        return _page(
            request,
            session,
            user,
            review,
            refusal_status(exc),
            problem=str(exc),
            problems={"refresh": str(exc)},
        )
    if back == "field":
        return done(request, session, review_id, "reserves_field", field_id=field_id)
    return done(request, session, review_id, anchor=f"field-{field_id}")


@router.get("/reserves/{review_id}/report.pdf", name="reserves_report_pdf")
def report_pdf(review_id: int, session: SessionDep, user: Reader):
    review = review_or_404(session, review_id)
    return report_response(content.build_report(session, review, user.asset_ids), "pdf")


@router.get("/reserves/{review_id}/report.xlsx", name="reserves_report_xlsx")
def report_xlsx(review_id: int, session: SessionDep, user: Reader):
    review = review_or_404(session, review_id)
    return report_response(content.build_report(session, review, user.asset_ids), "xlsx")
