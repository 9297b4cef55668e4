"""A field's data pages: wells, surveys, production, fluid and volumetric estimates.

Thin routes: parse (``data_params``), read (``services.data_views``), render plain data.
The same reads serve the JSON twins in ``api_data.py``.
"""

from __future__ import annotations

from typing import Annotated

from fastapi import APIRouter, Depends, HTTPException, Request
from fastapi.responses import HTMLResponse
from sqlalchemy.orm import Session

from ..services import data_views
from ..services.data_views_fluid import fluid_view
from .auth import Reader
from .charts_data import fluid_figures
from .data_params import PER_PAGE_CHOICES, ListQuery, check_page, production_query, survey_query
from .deps import SessionDep
from .display import units_for_request
from .pages import render
from .schemas import FieldId

router = APIRouter(include_in_schema=False)


def field_or_404(session: Session, field_id: int) -> data_views.FieldRef:
    ref = data_views.field_ref(session, field_id)
    if ref is None:
        raise HTTPException(status_code=404, detail="no such field")
    return ref


def _context(ref: data_views.FieldRef, section: str, title: str, **values) -> dict:
    return {"field": ref, "section": section, "title": f"{title} · {ref.name}", "heading": title, **values}


@router.get("/fields/{field_id}/wells", response_class=HTMLResponse, name="field_wells")
def wells_page(request: Request, field_id: FieldId, session: SessionDep, user: Reader):
    ref = field_or_404(session, field_id)
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
    ref = field_or_404(session, field_id)
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
    ref = field_or_404(session, field_id)
    found = data_views.production(session, field_id, q.filter, q.page, q.per_page)
    check_page(q, found.paging, "production months")
    context = _context(ref, "production", "Monthly production", found=found, **_list_context(request, q))
    return render(request, "data_production.html", context)


@router.get("/fields/{field_id}/fluid", response_class=HTMLResponse, name="field_fluid")
def fluid_page(request: Request, field_id: FieldId, session: SessionDep, user: Reader):
    ref = field_or_404(session, field_id)
    view = fluid_view(session, field_id)
    figures = fluid_figures(view, units_for_request(request)) if view else None
    context = _context(
        ref,
        "fluid",
        "Gas description and PVT",
        fluid=view,
        z_figure=figures[0] if figures else None,
        bg_figure=figures[1] if figures else None,
    )
    return render(request, "data_fluid.html", context)


@router.get("/fields/{field_id}/volumetric", response_class=HTMLResponse, name="field_volumetric")
def volumetric_page(request: Request, field_id: FieldId, session: SessionDep, user: Reader):
    ref = field_or_404(session, field_id)
    view = data_views.volumetrics(session, field_id)
    return render(
        request, "data_volumetric.html", _context(ref, "volumetric", "Volumetric estimates", vol=view)
    )
