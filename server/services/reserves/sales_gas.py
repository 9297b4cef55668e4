"""The sales-gas factor: the share of separator gas delivered for sale after fuel, flare and
shrinkage (the liquids and inerts taken out in processing), a team setting with a per-field
override, frozen into each review snapshot when it is taken or refreshed.

- ``reserves.sales_gas_frac`` (default 0.95): the team's default. Five per cent of separator gas
  for fuel, flare and shrinkage is a round figure of the trade (common practice, from memory),
  not a property of any field: a team sets its own from its plants' metering.
- ``reserves.sales_gas_frac_by_field``: ``{field id: fraction}``, a field's own factor where its
  processing differs (a richer gas, a field fuelling its own compression).

Both are changed by administrators through :func:`set_sales_gas_settings` (audited). The booked
sales gas of a case is the booked separator gas times the factor the snapshot froze, so a later
change of either setting never alters a review (a draft takes the new factor only when a field
is refreshed).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from sqlalchemy import select
from sqlalchemy.orm import Session

from ...db.base import utcnow
from ...db.models import Asset, Field, TeamSetting
from .. import audit
from .rules import ReservesError

DEFAULT_KEY = "reserves.sales_gas_frac"
BY_FIELD_KEY = "reserves.sales_gas_frac_by_field"
DEFAULT_SALES_GAS_FRAC = 0.95
RANGE_TEXT = "a fraction above 0 and at most 1 (0.95 delivers 95 % of the separator gas for sale)"


@dataclass(frozen=True)
class SalesGasSettings:
    sales_gas_frac: float = DEFAULT_SALES_GAS_FRAC
    by_field: dict[int, float] = field(default_factory=dict)

    def factor(self, field_id: int) -> tuple[float, str]:
        """(fraction, where it comes from: "field" or "team") for one field."""
        if field_id in self.by_field:
            return self.by_field[field_id], "field"
        return self.sales_gas_frac, "team"


def check_frac(value) -> float | None:
    """The value as a float when it is a fraction in (0, 1], else None."""
    if isinstance(value, bool):
        return None
    try:
        v = float(value)
    except (TypeError, ValueError):
        return None
    return v if math.isfinite(v) and 0.0 < v <= 1.0 else None


def sales_gas_settings(session: Session) -> SalesGasSettings:
    rows = dict(
        session.execute(
            select(TeamSetting.key, TeamSetting.value).where(TeamSetting.key.in_([DEFAULT_KEY, BY_FIELD_KEY]))
        ).all()
    )
    default = check_frac(rows.get(DEFAULT_KEY, DEFAULT_SALES_GAS_FRAC)) or DEFAULT_SALES_GAS_FRAC
    by_field = {}
    for k, v in (rows.get(BY_FIELD_KEY) or {}).items():
        frac = check_frac(v)
        if str(k).isdigit() and frac is not None:
            by_field[int(k)] = frac
    return SalesGasSettings(default, by_field)


def field_choices(session: Session) -> list[tuple[int, str, str]]:
    """(field id, field name, asset name) of every field, for the settings form."""
    rows = session.execute(
        select(Field.id, Field.name, Asset.name).join(Asset, Asset.id == Field.asset_id).order_by(Field.name)
    )
    return [tuple(r) for r in rows]


def _names(session: Session, ids) -> dict[int, str]:
    if not ids:
        return {}
    return dict(session.execute(select(Field.id, Field.name).where(Field.id.in_(list(ids)))).all())


def set_sales_gas_settings(
    session: Session, actor: audit.Actor, *, sales_gas_frac=None, by_field: dict | None = None
) -> SalesGasSettings:
    """Change the team's default and/or the per-field factors (administrators). ``by_field``
    maps field ids to a fraction, or to None to give the field back to the team default; fields
    not named keep theirs. Checks every value first and changes nothing on error."""
    problems = []
    if sales_gas_frac is not None and check_frac(sales_gas_frac) is None:
        problems.append(f"{DEFAULT_KEY}: must be {RANGE_TEXT}")
    wanted: dict[int, float | None] = {}
    for k, v in (by_field or {}).items():
        fid = int(k) if isinstance(k, int) or (isinstance(k, str) and k.isdigit()) else None
        if fid is None:
            problems.append(f"{BY_FIELD_KEY}: {k!r} is not a field id")
            continue
        frac = None if v is None else check_frac(v)
        if v is not None and frac is None:
            problems.append(f"{BY_FIELD_KEY}: field {fid}: must be {RANGE_TEXT}")
        wanted[fid] = frac
    names = _names(session, wanted)
    unknown = sorted(set(wanted) - set(names))
    if unknown:
        problems.append(f"{BY_FIELD_KEY}: no field {', '.join(map(str, unknown))}")
    if problems:
        raise ReservesError("; ".join(problems))
    before = sales_gas_settings(session)
    after_map = dict(before.by_field)
    for fid, v in wanted.items():
        if v is None:
            after_map.pop(fid, None)
        else:
            after_map[fid] = v
    values = {BY_FIELD_KEY: {str(k): v for k, v in sorted(after_map.items())}} if by_field else {}
    if sales_gas_frac is not None:
        values[DEFAULT_KEY] = float(sales_gas_frac)
    for key, value in values.items():
        row = session.get(TeamSetting, key) or TeamSetting(key=key)
        row.value, row.updated_at, row.updated_by_id = value, utcnow(), actor.user_id
        session.add(row)
    session.flush()
    after = sales_gas_settings(session)
    names = _names(session, set(before.by_field) | set(after.by_field))
    old = {"sales_gas_frac": before.sales_gas_frac} | {
        f"sales_gas_frac of {names.get(k, k)}": v for k, v in before.by_field.items()
    }
    new = {"sales_gas_frac": after.sales_gas_frac} | {
        f"sales_gas_frac of {names.get(k, k)}": v for k, v in after.by_field.items()
    }
    keys = sorted(set(old) | set(new))
    old_c = {k: old.get(k) for k in keys if old.get(k) != new.get(k)}
    new_c = {k: new.get(k) for k in keys if old.get(k) != new.get(k)}
    if new_c:
        words = ", ".join(
            f"{k} {'team default' if old_c[k] is None else old_c[k]} → "
            f"{'team default' if new_c[k] is None else new_c[k]}"
            for k in new_c
        )
        audit.record(
            session,
            actor,
            "update",
            "team_setting",
            before=old_c,
            after=new_c,
            summary=f"reserves settings: {words}",
        )
    return after


def freeze(session: Session, snap, settings: SalesGasSettings | None = None) -> None:
    """Copy the factor in force for the snapshot's field into it (a value, never a reference)."""
    settings = settings or sales_gas_settings(session)
    snap.sales_gas_frac, snap.sales_gas_frac_source = settings.factor(snap.field_id)
