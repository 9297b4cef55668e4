"""A field's data pages: wells, surveys, production, fluid and volumetric estimates.

Thin routes: parse (``data_params``), read (``services.data_views``), render plain data.
The same reads serve the JSON twins in ``web/api/field_data.py``.
"""

from __future__ import annotations

import math
from typing import Annotated

from fastapi import APIRouter, Depends, Form, Request
from fastapi.responses import HTMLResponse, RedirectResponse

from ...services.fieldwork import fluid as fluid_work
from ...services.fieldwork.choices import FieldWorkError
from ...services.portfolio import field_data as data_views
from ...services.portfolio.fluid_data import fluid_view
from ..auth import Analyst, Reader
from ..background import recompute_now
from ..charts.fluid import fluid_figures
from ..data_params import PER_PAGE_CHOICES, ListQuery, check_page, production_query, survey_query
from ..deps import SessionDep
from ..display import units_for_request
from ..field_access import field_or_404, field_ref_or_404
from ..schemas.common import FieldId
from ..templating import render
from .field_context import flash_message

router = APIRouter(include_in_schema=False)


def _context(ref: data_views.FieldRef, section: str, title: str, **values) -> dict:
    return {"field": ref, "section": section, "title": f"{title} · {ref.name}", "heading": title, **values}


@router.get("/fields/{field_id}/wells", response_class=HTMLResponse, name="field_wells")
def wells_page(request: Request, field_id: FieldId, session: SessionDep, user: Reader):
    ref = field_ref_or_404(session, field_id)
    rows = data_views.wells(session, field_id)
    return render(request, "data_wells.html", _context(ref, "wells", "Wells", wells=rows))


def _list_context(request: Request, q: ListQuery) -> dict:
    return {"q": q, "base_url": request.url.path, "per_page_choices": PER_PAGE_CHOICES}


@router.get("/fields/{field_id}/surveys", response_class=HTMLResponse, name="field_surveys")
def surveys_page(
    request: Request,
    field_id: FieldId,
    session: SessionDep,
    user: Reader,
    q: Annotated[ListQuery, Depends(survey_query)],
):
    ref = field_ref_or_404(session, field_id)
    found = data_views.surveys(session, field_id, q.filter, q.page, q.per_page)
    check_page(q, found.paging, "surveys")
    context = _context(ref, "surveys", "Pressure surveys", found=found, **_list_context(request, q))
    return render(request, "data_surveys.html", context)


@router.get("/fields/{field_id}/production", response_class=HTMLResponse, name="field_production")
def production_page(
    request: Request,
    field_id: FieldId,
    session: SessionDep,
    user: Reader,
    q: Annotated[ListQuery, Depends(production_query)],
):
    ref = field_ref_or_404(session, field_id)
    found = data_views.production(session, field_id, q.filter, q.page, q.per_page)
    check_page(q, found.paging, "production months")
    context = _context(ref, "production", "Monthly production", found=found, **_list_context(request, q))
    return render(request, "data_production.html", context)


def _fluid_page(request: Request, session, field_id: int, *, status_code=200, **extra):
    ref = field_ref_or_404(session, field_id)
    view = fluid_view(session, field_id)
    figures = fluid_figures(view, units_for_request(request)) if view else None
    context = _context(
        ref,
        "fluid",
        "Gas description and PVT",
        fluid=view,
        z_figure=figures[0] if figures else None,
        bg_figure=figures[1] if figures else None,
        gravity_form=fluid_work.current_fluid(field_or_404(session, field_id)),
        **({"gravity_problems": {}, "gravity_submitted": {}, "flash": ""} | extra),
    )
    return render(request, "data_fluid.html", context, status_code=status_code)


@router.get("/fields/{field_id}/fluid", response_class=HTMLResponse, name="field_fluid")
def fluid_page(request: Request, field_id: FieldId, session: SessionDep, user: Reader, changed: str = ""):
    audit_id = int(changed) if changed.isdigit() and len(changed) < 10 else None
    return _fluid_page(request, session, field_id, flash=flash_message(session, field_id, audit_id))


def _number(text: str, key: str, problems: dict) -> float | None:
    text = (text or "").strip().replace(",", ".")
    if not text:
        return None
    try:
        value = float(text)
    except ValueError:
        problems[key] = f"the {fluid_work.WORDS[key]} must be a number, got {text[:40]!r}"
        return None
    if not math.isfinite(value):
        problems[key] = f"the {fluid_work.WORDS[key]} must be a finite number"
    return value


@router.post("/fields/{field_id}/fluid", response_class=HTMLResponse, name="change_fluid")
def change_fluid(
    request: Request,
    field_id: FieldId,
    session: SessionDep,
    user: Analyst,
    gas_gravity: Annotated[str, Form(max_length=40)] = "",
    wellstream_gravity: Annotated[str, Form(max_length=40)] = "",
    condensate_api: Annotated[str, Form(max_length=40)] = "",
):
    """The gravities as the team has them: separator gas, well stream, or both (blank clears one)."""
    field = field_or_404(session, field_id)
    submitted = {
        "gas_gravity": gas_gravity,
        "wellstream_gravity": wellstream_gravity,
        "condensate_api": condensate_api,
    }
    problems: dict[str, str] = {}
    values = {k: _number(v, k, problems) for k, v in submitted.items()}
    if not problems:
        try:
            outcome = fluid_work.update_fluid(session, user.actor, field, values)
        except FieldWorkError as exc:
            problems = exc.problems
    if problems:
        session.rollback()
        extra = {"gravity_problems": problems, "gravity_submitted": submitted}
        return _fluid_page(request, session, field_id, status_code=422, **extra)
    session.commit()  # the change and its queued job must be visible to the runner
    recompute_now(request, outcome.job_id)
    query = f"?changed={outcome.audit_id}" if outcome.audit_id else ""
    return RedirectResponse(f"/fields/{field_id}/fluid{query}#gravity-form", status_code=303)


@router.get("/fields/{field_id}/volumetric", response_class=HTMLResponse, name="field_volumetric")
def volumetric_page(request: Request, field_id: FieldId, session: SessionDep, user: Reader):
    ref = field_ref_or_404(session, field_id)
    view = data_views.volumetrics(session, field_id)
    return render(
        request, "data_volumetric.html", _context(ref, "volumetric", "Volumetric estimates", vol=view)
    )
