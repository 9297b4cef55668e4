"""The JSON API of the team settings (administrators, with a session: no API token may
change settings). GET reads them with where each value came from; PUT changes some."""

from __future__ import annotations

import dataclasses
from typing import Literal

from fastapi import APIRouter, HTTPException, Request
from pydantic import BaseModel, ConfigDict, Field, create_model

from ...engine.thresholds import THRESHOLD_LIMITS, FlagThresholds
from ...engine.units import STANDARD_CONDITIONS, standard_conditions
from ...services import team_settings
from ..auth import SettingsAdmin
from ..background import jobs_queued
from ..deps import SessionDep, SettingsDep
from ..schemas.common import ErrorRead

router = APIRouter(prefix="/api", tags=["settings"])
StandardConditionsName = Literal[tuple(STANDARD_CONDITIONS)]  # type: ignore[valid-type]
UnitSystem = Literal["oilfield", "si"]
Source = Literal["team", "environment", "default", "pinned"]
_STRICT = ConfigDict(extra="forbid", allow_inf_nan=False)


def _thresholds_model(name: str, optional: bool) -> type[BaseModel]:
    """One field per flag threshold, with its allowed range (engine/thresholds.py THRESHOLD_LIMITS)."""
    fields = {}
    for f in dataclasses.fields(FlagThresholds):
        lim = THRESHOLD_LIMITS[f.name]
        kind = int if lim.integer else float
        info = Field(
            None if optional else ...,
            ge=lim.low,
            le=lim.high,
            description=f"{lim.meaning} [{lim.unit}]; default {f.default}",
        )
        fields[f.name] = (kind | None if optional else kind, info)
    return create_model(name, __config__=_STRICT, **fields)


FlagThresholdsRead = _thresholds_model("FlagThresholdsRead", optional=False)
FlagThresholdsUpdate = _thresholds_model("FlagThresholdsUpdate", optional=True)


class TeamSettingsRead(BaseModel):
    display_units: UnitSystem = Field(description="unit system shown to users who have not chosen one")
    atmosphere_psia: float = Field(description="atmosphere that turns uploaded gauge pressures absolute")
    standard_conditions: StandardConditionsName = Field(description="basis of every stored gas volume")
    standard_conditions_label: str
    standard_conditions_locked: str | None = Field(
        description="why the standard conditions can no longer change (stored gas volumes), or null"
    )
    flag_thresholds: FlagThresholdsRead  # type: ignore[valid-type]
    sources: dict[str, Source] = Field(
        description="where each value comes from: set by the team, the environment, the code's default, "
        "or pinned (the environment's standard conditions, stored when the database was first opened)"
    )


class TeamSettingsUpdate(BaseModel):
    """Only the values given change; a value equal to the one in force changes nothing."""

    model_config = _STRICT
    display_units: UnitSystem | None = None
    atmosphere_psia: float | None = Field(None, gt=10, lt=16)
    standard_conditions: StandardConditionsName | None = None
    flag_thresholds: FlagThresholdsUpdate | None = None  # type: ignore[valid-type]


class TeamSettingsChanged(TeamSettingsRead):
    changed: list[str] = Field(description="the settings this request changed")
    recompute_job_id: int | None = Field(
        description="the portfolio recompute queued because a value that enters the estimates changed"
    )


def settings_read(session, settings) -> dict:
    team = team_settings.current(session, settings)
    return {
        "display_units": team.display_units,
        "atmosphere_psia": team.atmosphere_psia,
        "standard_conditions": team.standard_conditions,
        "standard_conditions_label": standard_conditions(team.standard_conditions).label,
        "standard_conditions_locked": team_settings.standard_conditions_lock(session),
        "flag_thresholds": dataclasses.asdict(team.flag_thresholds),
        "sources": team.sources,
    }


@router.get("/settings", response_model=TeamSettingsRead)
def get_settings(session: SessionDep, settings: SettingsDep, user: SettingsAdmin):
    """The team settings in force."""
    return settings_read(session, settings)


@router.put(
    "/settings",
    response_model=TeamSettingsChanged,
    responses={409: {"model": ErrorRead, "description": "a value cannot change now (see the reason)"}},
)
def put_settings(
    request: Request,
    body: TeamSettingsUpdate,
    session: SessionDep,
    settings: SettingsDep,
    user: SettingsAdmin,
):
    """Change some team settings; every change is audited, and a change of a flag threshold or
    of the standard conditions queues a portfolio recompute."""
    values = {k: v for k, v in body.model_dump(exclude={"flag_thresholds"}).items() if v is not None}
    if body.flag_thresholds is not None:
        given = body.flag_thresholds.model_dump(exclude_none=True)
        values |= {team_settings.THRESHOLD_PREFIX + k: v for k, v in given.items()}
    try:
        outcome = team_settings.update(session, user.actor, settings, values)
    except team_settings.TeamSettingsError as exc:
        raise HTTPException(status_code=409, detail=str(exc)) from None
    session.commit()  # the queued job must be visible to the runner
    if outcome.recompute_job_id is not None:
        jobs_queued(request)
    return {
        **settings_read(session, settings),
        "changed": list(outcome.changed),
        "recompute_job_id": outcome.recompute_job_id,
    }
