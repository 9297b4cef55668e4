"""The reserves team settings in the JSON API: four eyes, the 2P change that needs a
justification, and the sales-gas factor (the team default and each field's own); readers see
them, administrators change them (audited). A refused value is a 409 whose ``detail`` says why
(or a 422 from the schema) and changes nothing."""

from __future__ import annotations

import dataclasses
from typing import Annotated

from fastapi import APIRouter, HTTPException
from pydantic import BaseModel, ConfigDict, Field
from sqlalchemy.orm import Session

from ...services.reserves import rules, sales_gas
from ..auth import Reader, SettingsAdmin
from ..deps import SessionDep
from ..schemas.common import ErrorRead

router = APIRouter(prefix="/api/reserves", tags=["reserves"])
REFUSED = {409: {"model": ErrorRead, "description": "the change is refused (the reason says why)"}}
RowId = Annotated[int, Field(ge=1, le=2**31 - 1)]
Frac = Annotated[float, Field(gt=0, le=1)]


class SettingsUpdate(BaseModel):
    """Only the keys given change. ``sales_gas_frac_by_field`` maps field ids to a field's own
    sales-gas factor, or to null to give the field back to the team default."""

    model_config = ConfigDict(extra="forbid", allow_inf_nan=False)
    four_eyes: bool | None = None
    justify_2p_change_frac: float | None = Field(None, gt=0, le=10)
    sales_gas_frac: Frac | None = Field(None, description="share of separator gas sold (team default)")
    sales_gas_frac_by_field: dict[RowId, Frac | None] | None = Field(None, max_length=10_000)


def _settings(session: Session) -> dict:
    factors = sales_gas.sales_gas_settings(session)
    return dataclasses.asdict(rules.reserves_settings(session)) | {
        "sales_gas_frac": factors.sales_gas_frac,
        "sales_gas_frac_by_field": {str(k): v for k, v in sorted(factors.by_field.items())},
    }


@router.get("/settings", summary="the reserves team settings")
def get_settings(session: SessionDep, user: Reader):
    return _settings(session)


@router.put("/settings", responses=REFUSED, summary="change the reserves team settings (administrators)")
def put_settings(body: SettingsUpdate, session: SessionDep, user: SettingsAdmin):
    try:
        rules.set_reserves_settings(
            session, user.actor, four_eyes=body.four_eyes, justify_2p_change_frac=body.justify_2p_change_frac
        )
        sales_gas.set_sales_gas_settings(
            session, user.actor, sales_gas_frac=body.sales_gas_frac, by_field=body.sales_gas_frac_by_field
        )
    except rules.ReservesError as e:
        session.rollback()
        raise HTTPException(status_code=409, detail=str(e)) from None
    session.commit()
    return _settings(session)
