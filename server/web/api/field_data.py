"""JSON twins of the data pages (stored units, named in every field; same paging and search)."""

from __future__ import annotations

import dataclasses
from typing import Annotated

from fastapi import APIRouter, Depends, HTTPException

from ...services.portfolio import field_data as data_views
from ...services.portfolio.fluid_data import fluid_view
from ..auth import Reader
from ..data_params import ListQuery, check_page, production_query, survey_query
from ..deps import SessionDep
from ..field_access import field_ref_or_404
from ..schemas.common import ErrorRead, FieldId
from ..schemas.data import FluidRead, PagingRead, ProductionRead, SurveysRead, VolumetricsRead, WellsRead

router = APIRouter(prefix="/api/fields/{field_id}", tags=["field data"])
RESPONSES = {
    404: {"model": ErrorRead, "description": "no such field (or not in your assets)"},
}
LIST_RESPONSES = RESPONSES  # 422 (FastAPI's validation error) also answers a page past the last one


def _paging(p: data_views.Paging) -> PagingRead:
    return PagingRead(
        page=p.page,
        per_page=p.per_page,
        total=p.total,
        n_pages=p.n_pages,
        first_index=p.first_index,
        last_index=p.last_index,
        prev_page=p.prev_page,
        next_page=p.next_page,
    )


@router.get("/wells", response_model=WellsRead, responses=RESPONSES)
def wells(field_id: FieldId, session: SessionDep, user: Reader):
    """The field's wells with their survey counts, first and last survey and cumulative gas."""
    ref = field_ref_or_404(session, field_id)
    rows = data_views.wells(session, field_id)
    return {"field": dataclasses.asdict(ref), "wells": [dataclasses.asdict(w) for w in rows]}


@router.get("/surveys", response_model=SurveysRead, responses=LIST_RESPONSES)
def surveys(
    field_id: FieldId, session: SessionDep, user: Reader, q: Annotated[ListQuery, Depends(survey_query)]
):
    """Pressure surveys, newest first, one page at a time (search by well, dates, status, quality).

    A bad parameter, or a `page` past the last page, is a 422 whose `loc` names the parameter."""
    ref = field_ref_or_404(session, field_id)
    found = data_views.surveys(session, field_id, q.filter, q.page, q.per_page)
    check_page(q, found.paging, "surveys")
    return {
        "field": dataclasses.asdict(ref),
        "filter": dataclasses.asdict(q.filter),
        "paging": _paging(found.paging),
        "surveys": [dataclasses.asdict(s) for s in found.rows],
    }


@router.get("/production", response_model=ProductionRead, responses=LIST_RESPONSES)
def production(
    field_id: FieldId, session: SessionDep, user: Reader, q: Annotated[ListQuery, Depends(production_query)]
):
    """Monthly volumes per well, newest first, one page at a time, with the totals of the search.

    A bad parameter, or a `page` past the last page, is a 422 whose `loc` names the parameter."""
    ref = field_ref_or_404(session, field_id)
    found = data_views.production(session, field_id, q.filter, q.page, q.per_page)
    check_page(q, found.paging, "production months")
    flt = dataclasses.asdict(q.filter)
    return {
        "field": dataclasses.asdict(ref),
        "filter": {k: flt[k] for k in ("well", "date_from", "date_to")},
        "paging": _paging(found.paging),
        "totals": dataclasses.asdict(found.totals),
        "production": [dataclasses.asdict(p) for p in found.rows],
    }


@router.get("/fluid", response_model=FluidRead, responses=RESPONSES)
def fluid(field_id: FieldId, session: SessionDep, user: Reader):
    """The gas description, its lab table, and z and Bg from one atmosphere to the initial pressure
    by the z function the estimate uses (Bg at the storage basis)."""
    ref = field_ref_or_404(session, field_id)
    view = fluid_view(session, field_id)
    if view is None:
        raise HTTPException(status_code=404, detail="this field has no fluid description")
    out = dataclasses.asdict(view)
    out["lab_points"] = [
        dataclasses.asdict(p) | {"difference_frac": p.difference_frac} for p in view.lab_points
    ]
    out["at_pressures"] = [
        {"at": at, "pressure_psia": p, "z_factor": z, "bg_rcf_per_scf": bg} for at, p, z, bg in view.selected
    ]
    return out | {"field": dataclasses.asdict(ref)}


@router.get("/volumetric", response_model=VolumetricsRead, responses=RESPONSES)
def volumetric(field_id: FieldId, session: SessionDep, user: Reader):
    """Volumetric estimates, newest first, each against the current dynamic GIIP."""
    ref = field_ref_or_404(session, field_id)
    view = data_views.volumetrics(session, field_id)
    return {
        "field": dataclasses.asdict(ref),
        "dynamic": dataclasses.asdict(view.dynamic) if view.dynamic else None,
        "estimates": [dataclasses.asdict(v) for v in view.rows],
    }
