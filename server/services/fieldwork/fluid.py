"""Correcting a field's gas description from its fluid page: the separator gas gravity, the
well-stream gravity (either, or both) and the condensate API gravity. Validated as an upload
validates them (the ``fluids`` kind's bounds), audited old → new, and the field recomputed."""

from __future__ import annotations

from sqlalchemy.orm import Session

from ...db.models import Field, Fluid
from .. import audit
from ..ingest.kinds import file_kind
from ..jobs import queue as jobs
from .choices import ChangeOutcome, FieldWorkError, _queue

FLUID_KEYS = ("gas_gravity", "wellstream_gravity", "condensate_api")
WORDS = {
    "gas_gravity": "separator gas gravity",
    "wellstream_gravity": "well-stream gravity",
    "condensate_api": "condensate API gravity",
}


def current_fluid(field: Field) -> dict:
    fl = field.fluid
    return {k: (getattr(fl, k) if fl is not None else None) for k in FLUID_KEYS}


def check_fluid_values(values: dict) -> dict[str, str]:
    """Problems with the values (stored units; None = not given), by key."""
    kind = file_kind("fluids")
    problems = {}
    for key in FLUID_KEYS:
        v = values.get(key)
        bounds = kind.column(key).bounds
        if v is not None and not bounds.contains(v):
            problems[key] = f"the {WORDS[key]} {bounds.describe()}"
    if values.get("gas_gravity") is None and values.get("wellstream_gravity") is None:
        problems["gas_gravity"] = "give the separator gas gravity, the well-stream gravity, or both"
    return problems


def update_fluid(session: Session, actor: audit.Actor, field: Field, values: dict) -> ChangeOutcome:
    """Set the field's gravities and API gravity (None clears one); nothing is stored on any problem."""
    values = {k: values.get(k) for k in FLUID_KEYS}
    problems = check_fluid_values(values)
    if problems:
        raise FieldWorkError(problems)
    old, new = audit.changed(current_fluid(field), values)
    if not new:
        return ChangeOutcome((), None, None, "no change")
    jobs.write_first(session)
    fl = field.fluid
    if fl is None:
        fl = Fluid(field=field, y_co2_frac=0.0, y_h2s_frac=0.0, y_n2_frac=0.0)
        session.add(fl)
    for k in new:
        setattr(fl, k, values[k])
    session.flush()

    def said(k):
        return "none" if values[k] is None else f"{values[k]:g}"

    summary = "set the " + ", ".join(f"{WORDS[k]} to {said(k)}" for k in new)
    event = audit.record(
        session, actor, "update", "fluid", fl.id, before=old, after=new, field_id=field.id, summary=summary
    )
    job_id = _queue(session, field, f"{summary[:150]} by {actor.name}")
    return ChangeOutcome(tuple(new), job_id, event.id, summary)
