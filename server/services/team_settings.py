"""Team settings: edited by administrators in the app, stored in ``team_setting``, audited.

What a team sets here (design.md, "Administrator: settings"):

- ``display_units``: the unit system pages and exports show when a user has not chosen one;
- ``atmosphere_psia``: the atmosphere that turns uploaded gauge pressures into absolute ones;
- ``standard_conditions``: the basis of every stored standard gas volume. It is pinned in
  the database when the database is first opened (from ``TANKBOOK_STANDARD_CONDITIONS``) and
  can be changed only while the database holds no gas volumes: afterwards every stored
  volume, estimate and lab Bg would silently change meaning;
- every flag threshold (``threshold.<name>``, :class:`engine.flags.FlagThresholds`).

A key without a row falls back to the environment's setting (``server/settings.py``), or,
for thresholds, the code's default. A change of anything that enters the estimates (a
threshold, the standard conditions) queues a portfolio recompute; the thresholds and the
standard conditions are part of ``FieldInputs``, so the inputs' fingerprint changes and the
recompute writes new estimate rows.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import logging
import math
from dataclasses import dataclass

from sqlalchemy import func, select
from sqlalchemy.exc import IntegrityError, OperationalError, ProgrammingError
from sqlalchemy.orm import Session

from ..db.base import utcnow
from ..db.models import Estimate, FluidLabPoint, ProductionMonth, TeamSetting, VolumetricEstimate
from ..engine.thresholds import THRESHOLD_LIMITS, FlagThresholdError, FlagThresholds, check_threshold
from ..engine.units import OILFIELD_60F, STANDARD_CONDITIONS, StandardConditions, standard_conditions
from . import audit
from .jobs import queue as jobs

log = logging.getLogger(__name__)
DISPLAY_UNITS = ("oilfield", "si")
ATMOSPHERE_RANGE_PSIA = (10.0, 16.0)  # exclusive, as Settings.atmosphere_psia
THRESHOLD_PREFIX = "threshold."
UNIT_KEYS = ("display_units", "atmosphere_psia", "standard_conditions")
THRESHOLD_KEYS = tuple(THRESHOLD_PREFIX + f.name for f in dataclasses.fields(FlagThresholds))
ESTIMATE_KEYS = frozenset(THRESHOLD_KEYS) | {"standard_conditions"}  # these change estimates


class TeamSettingsError(ValueError):
    """Some submitted values are not acceptable; ``problems`` maps each key to the reason."""

    def __init__(self, problems: dict[str, str]):
        self.problems = problems
        super().__init__("; ".join(f"{k}: {v}" for k, v in problems.items()))


@dataclass(frozen=True)
class TeamSettings:
    """The settings in force, and where each came from: "team" (an administrator set it),
    "environment", "default" (the code's), or "pinned" (the environment's standard conditions,
    stored when the database was first opened)."""

    display_units: str
    atmosphere_psia: float
    standard_conditions: str
    flag_thresholds: FlagThresholds
    sources: dict[str, str]

    @property
    def storage_basis(self) -> StandardConditions:
        return standard_conditions(self.standard_conditions)

    def value(self, key: str):
        if key.startswith(THRESHOLD_PREFIX):
            return getattr(self.flag_thresholds, key.removeprefix(THRESHOLD_PREFIX))
        return getattr(self, key)


def _rows(session: Session) -> dict[str, object]:
    return dict(session.execute(select(TeamSetting.key, TeamSetting.value)).all())


def _pinned(session: Session) -> bool:
    """Whether the standard conditions row is the environment's value pinned at first start."""
    row = session.get(TeamSetting, "standard_conditions")
    return row is not None and row.updated_by_id is None


def _thresholds(rows: dict) -> FlagThresholds:
    values = {}
    for key in THRESHOLD_KEYS:
        if key in rows:
            name = key.removeprefix(THRESHOLD_PREFIX)
            values[name] = int(rows[key]) if THRESHOLD_LIMITS[name].integer else float(rows[key])
    return FlagThresholds(**values)


def from_environment(settings) -> TeamSettings:
    """The environment's settings alone, with no database read (for an error page, which shows
    no stored value and must not wait for a connection)."""
    return TeamSettings(
        display_units=str(settings.display_units),
        atmosphere_psia=float(settings.atmosphere_psia),
        standard_conditions=str(settings.standard_conditions),
        flag_thresholds=FlagThresholds(),
        sources={},
    )


def current(session: Session, settings) -> TeamSettings:
    """The team's settings, falling back to ``settings`` (the environment) key by key."""
    rows = _rows(session)
    sources = {k: ("team" if k in rows else "environment") for k in UNIT_KEYS}
    if _pinned(session):
        sources["standard_conditions"] = "pinned"
    sources |= {k: ("team" if k in rows else "default") for k in THRESHOLD_KEYS}
    return TeamSettings(
        display_units=str(rows.get("display_units", settings.display_units)),
        atmosphere_psia=float(rows.get("atmosphere_psia", settings.atmosphere_psia)),
        standard_conditions=str(rows.get("standard_conditions", settings.standard_conditions)),
        flag_thresholds=_thresholds(rows),
        sources=sources,
    )


def engine_settings(session: Session) -> tuple[StandardConditions, FlagThresholds]:
    """What a recompute needs: the storage basis and the flag thresholds.

    The recompute runs in workers that do not read the environment, so it takes the
    standard conditions from the database only (pinned at first start, see
    :func:`pin_standard_conditions`); an unpinned database is at the oilfield default."""
    rows = _rows(session)
    name = rows.get("standard_conditions")
    return (standard_conditions(str(name)) if name else OILFIELD_60F), _thresholds(rows)


def pin_standard_conditions(session: Session, settings) -> None:
    """Store the environment's standard conditions unless the database already holds a value.

    Called when the app starts and by ``tankbook migrate``/``demo``/``worker``, so every
    process reads the one basis the stored volumes are at."""
    if session.get(TeamSetting, "standard_conditions") is not None:
        return
    try:
        with session.begin_nested():
            session.add(TeamSetting(key="standard_conditions", value=settings.standard_conditions))
    except IntegrityError:  # another process pinned it first
        pass


def pin_storage_basis(db, settings) -> None:
    """:func:`pin_standard_conditions` in its own transaction; a database whose schema is not
    yet migrated is left alone (``tankbook migrate`` pins it)."""
    try:
        with db.session() as session:
            pin_standard_conditions(session, settings)
    except (OperationalError, ProgrammingError) as exc:
        log.warning("standard conditions not pinned (is the database migrated?): %s", exc)


def standard_conditions_lock(session: Session) -> str | None:
    """Why the standard conditions may no longer change (stored gas volumes), or None."""
    counts = (  # (one, many, how many)
        ("production month", "production months", select(func.count()).select_from(ProductionMonth)),
        ("volumetric estimate", "volumetric estimates", select(func.count()).select_from(VolumetricEstimate)),
        (
            "estimate with a volume",
            "estimates with a volume",
            select(func.count()).where(Estimate.giip_best_bscf.is_not(None)),
        ),
        (
            "lab Bg point",
            "lab Bg points",
            select(func.count()).where(FluidLabPoint.bg_rcf_per_scf.is_not(None)),
        ),
    )
    held = []
    for one, many, stmt in counts:
        n = session.execute(stmt).scalar_one()
        if n:
            held.append(f"{n:,} {one if n == 1 else many}")
    if not held:
        return None
    return (
        "the database already holds gas volumes at these standard conditions ("
        + ", ".join(held)
        + "); changing the basis would change what every stored volume means"
    )


def _parse(key: str, raw) -> object:
    """One submitted value (form text or JSON) as its stored type; raise ValueError with the reason."""
    if key == "display_units":
        if raw not in DISPLAY_UNITS:
            raise ValueError(f"choose one of {', '.join(DISPLAY_UNITS)}")
        return raw
    if key == "standard_conditions":
        if raw not in STANDARD_CONDITIONS:
            raise ValueError(f"choose one of {', '.join(STANDARD_CONDITIONS)}")
        return raw
    number = _number(raw)
    if key == "atmosphere_psia":
        low, high = ATMOSPHERE_RANGE_PSIA
        if not low < number < high:
            raise ValueError(f"must lie between {low:g} and {high:g} psia, got {number:g}")
        return number
    name = key.removeprefix(THRESHOLD_PREFIX)
    if key not in THRESHOLD_KEYS:
        raise ValueError("not a team setting")
    try:
        check_threshold(name, number)
    except FlagThresholdError as exc:
        raise ValueError(str(exc).replace(f"flag threshold {name} ", "")) from None
    return int(number) if THRESHOLD_LIMITS[name].integer else number


def _number(raw) -> float:
    if isinstance(raw, bool):
        raise ValueError("must be a number")
    if isinstance(raw, int | float):
        value = float(raw)
    else:
        try:
            value = float(str(raw).strip().replace(",", ""))
        except ValueError:
            raise ValueError(f"must be a number, got {str(raw)[:40]!r}") from None
    if not math.isfinite(value):
        raise ValueError("must be a finite number")
    return value


@dataclass(frozen=True)
class UpdateOutcome:
    changed: tuple[str, ...]
    recompute_job_id: int | None


def update(session: Session, actor: audit.Actor, settings, values: dict, *, now: dt.datetime | None = None):
    """Validate and store ``values`` (key -> value), audit the change and, when a value that
    enters the estimates changed, queue a portfolio recompute.

    Raises :class:`TeamSettingsError` (nothing stored) when any value is unacceptable."""

    before = current(session, settings)
    problems, parsed = {}, {}
    for key, raw in values.items():
        try:
            parsed[key] = _parse(key, raw)
        except ValueError as exc:
            problems[key] = str(exc)
    new_basis = parsed.get("standard_conditions", before.standard_conditions)
    if new_basis != before.standard_conditions and (lock := standard_conditions_lock(session)):
        problems["standard_conditions"] = f"cannot change: {lock}"
    if problems:
        raise TeamSettingsError(problems)
    # Only differences are stored: a form that resubmits every value leaves the others on
    # their fallbacks (the environment, or the code's defaults).
    changed = {k: v for k, v in parsed.items() if v != before.value(k)}
    if not changed:
        return UpdateOutcome((), None)
    now = now or utcnow()
    jobs.write_first(session)
    for key, value in changed.items():
        row = session.get(TeamSetting, key)
        if row is None:
            session.add(TeamSetting(key=key, value=value, updated_at=now, updated_by_id=actor.user_id))
        else:
            row.value, row.updated_at, row.updated_by_id = value, now, actor.user_id
    session.flush()
    old = {k: before.value(k) for k in changed}
    audit.record(
        session,
        actor,
        "update",
        "team_settings",
        before=old,
        after=changed,
        summary="team settings: " + ", ".join(f"{k} {old[k]} → {changed[k]}" for k in changed),
    )
    job_id = None
    if ESTIMATE_KEYS & changed.keys():
        job_id = jobs.enqueue_portfolio_recompute(
            session, reason=f"team settings changed by {actor.name}", reuse_running=False
        ).id
    return UpdateOutcome(tuple(changed), job_id)
