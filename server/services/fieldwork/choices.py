"""Working on one field: set a survey aside (or take it back), change the abandonment pressure
and the analysis choices. Every change is validated first (nothing is stored unless all of it
is acceptable), audited with its old and new values, and queues a recompute of the field.

Values arrive in stored units (psia, 1/psi); the web layer converts from display units.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from sqlalchemy import select
from sqlalchemy.orm import Session

from ...db.models import Estimate, Field, FieldAnalysisSettings, Job, PressureSurvey, Well
from ...engine.headline.types import AUTOMATIC, BASIS_CHOICES
from ...engine.inputs import OVERPRESSURE_MODES, Z_METHODS
from ...engine.pvt.gas import Z_METHOD_LABELS
from .. import audit, words
from ..jobs import queue as jobs

REASON_MAX_CHARS = 500
CE_MAX_PER_PSI = 1e-3  # exclusive; as the field_analysis_settings check constraint
Z_METHOD_CHOICES = {k: Z_METHOD_LABELS[k] for k in Z_METHODS}
OVERPRESSURE_CHOICES = {
    "off": "Off: straight p/z line",
    "given": "Given ce (Ramagost-Farshad)",
    "fitted": "ce fitted to the data",
}
BOOLEAN_CHOICES = ("datum_correction", "condensate_correction", "use_lab_table", "anchor_initial")
CHOICE_KEYS = (
    "z_method",
    *BOOLEAN_CHOICES,
    "overpressure_mode",
    "effective_compressibility_per_psi",
    "basis_model",
    "basis_reason",
)
FIELD_KEYS = ("abandonment_pressure_psia",)


class FieldWorkError(ValueError):
    """Some submitted values are not acceptable; ``problems`` maps each input to the reason."""

    def __init__(self, problems: dict[str, str]):
        self.problems = problems
        super().__init__("; ".join(f"{k}: {v}" for k, v in problems.items()))


class NotFoundError(LookupError):
    """The survey (or note) is not on this field."""


@dataclass(frozen=True)
class ChangeOutcome:
    changed: tuple[str, ...]  # the inputs that changed (empty: nothing to do)
    job_id: int | None  # the recompute queued for the field
    audit_id: int | None
    summary: str


def _queue(session: Session, field: Field, why: str) -> int | None:
    queued = jobs.enqueue_field_recompute(session, [field.id], reason=why)
    if queued:
        return queued[0].id
    # one is already waiting: it will read the new values too
    return session.execute(
        select(Job.id)
        .where(Job.kind == jobs.FIELD_JOB, Job.field_id == field.id, Job.status == "queued")
        .order_by(Job.id)
        .limit(1)
    ).scalar_one_or_none()


def field_survey(session: Session, field_id: int, survey_id: int) -> PressureSurvey:
    """A survey of one of the field's wells, or NotFoundError."""
    s = session.execute(
        select(PressureSurvey).join(Well).where(PressureSurvey.id == survey_id, Well.field_id == field_id)
    ).scalar_one_or_none()
    if s is None:
        raise NotFoundError(f"no survey {survey_id} on this field")
    return s


def set_survey_exclusion(
    session: Session, actor: audit.Actor, field: Field, survey_id: int, *, excluded: bool, reason: str = ""
) -> ChangeOutcome:
    """Set a survey aside with the engineer's reason (required), or take it back into the fit."""
    survey = field_survey(session, field.id, survey_id)
    reason = " ".join((reason or "").split())
    if excluded and not reason:
        raise FieldWorkError(
            {"reason": "give a reason for setting this survey aside (e.g. gauge not stabilised)"}
        )
    if len(reason) > REASON_MAX_CHARS:
        raise FieldWorkError({"reason": f"at most {REASON_MAX_CHARS} characters, got {len(reason)}"})
    before = {"excluded": survey.excluded, "exclusion_reason": survey.exclusion_reason}
    after = {"excluded": excluded, "exclusion_reason": reason if excluded else None}
    old, new = audit.changed(before, after)
    if not new:
        return ChangeOutcome((), None, None, "no change")
    jobs.write_first(session)
    survey.excluded, survey.exclusion_reason = after["excluded"], after["exclusion_reason"]
    label = f"survey of {survey.well.name} on {survey.survey_date.isoformat()}"
    summary = (f"set aside {label}: {reason}") if excluded else f"took {label} back into the fit"
    event = audit.record(
        session,
        actor,
        "exclude" if excluded else "include",
        "pressure_survey",
        survey.id,
        before=old,
        after=new,
        field_id=field.id,
        summary=summary,
    )
    session.flush()
    job_id = _queue(session, field, f"{summary[:150]} by {actor.name}")
    return ChangeOutcome(tuple(new), job_id, event.id, summary)


def current_choices(field: Field) -> dict:
    """The field's abandonment pressure and analysis choices as stored (defaults if no row)."""
    st = field.settings or FieldAnalysisSettings()
    defaults = {
        c.name: c.default.arg for c in FieldAnalysisSettings.__table__.columns if c.default is not None
    }
    out = {"abandonment_pressure_psia": field.abandonment_pressure_psia}
    for key in CHOICE_KEYS:
        value = getattr(st, key)
        out[key] = (
            defaults.get(key) if value is None and key != "effective_compressibility_per_psi" else value
        )
    return out


def _finite(raw, what: str) -> float:
    if isinstance(raw, bool) or raw is None:
        raise ValueError(f"{what} must be a number")
    try:
        value = float(raw)
    except (TypeError, ValueError):
        raise ValueError(f"{what} must be a number, got {str(raw)[:40]!r}") from None
    if not math.isfinite(value):
        raise ValueError(f"{what} must be a finite number")
    return value


def _check(field: Field, merged: dict, given: dict, atmosphere_psia: float) -> dict[str, str]:
    problems = {}
    for key in given:
        if key not in CHOICE_KEYS and key not in FIELD_KEYS:
            problems[key] = "not an analysis choice of a field"
    if "abandonment_pressure_psia" in given:
        p_a = merged["abandonment_pressure_psia"]
        p_i = field.initial_pressure_psia
        if not atmosphere_psia < p_a < p_i:
            problems["abandonment_pressure_psia"] = (
                f"must lie above the atmosphere ({atmosphere_psia:g} psia) and below the initial "
                f"pressure ({p_i:,.1f} psia); got {p_a:,.1f} psia"
            )
    if merged["z_method"] not in Z_METHOD_CHOICES:
        problems["z_method"] = f"choose one of {', '.join(Z_METHOD_CHOICES)}"
    if merged["overpressure_mode"] not in OVERPRESSURE_MODES:
        problems["overpressure_mode"] = f"choose one of {', '.join(OVERPRESSURE_MODES)}"
    problems |= _check_basis(field, merged, given)
    ce = merged["effective_compressibility_per_psi"]
    if ce is not None and not 0 <= ce < CE_MAX_PER_PSI:
        problems["effective_compressibility_per_psi"] = (
            f"must lie in [0, {CE_MAX_PER_PSI:g}) 1/psi; got {ce:g}"
        )
    elif merged["overpressure_mode"] == "given" and ce is None:
        problems["effective_compressibility_per_psi"] = "give ce when the overpressure mode is 'given'"
    return problems


def basis_outcomes(session: Session, field_id: int) -> list[dict] | None:
    """Every model's outcome in the field's current estimate (stored JSON; None when the
    estimate names none): what the basis may be chosen from."""
    detail = session.execute(
        select(Estimate.detail).where(Estimate.field_id == field_id).order_by(Estimate.id.desc()).limit(1)
    ).scalar_one_or_none()
    outcomes = (detail or {}).get("outcomes")
    return list(outcomes) if outcomes else None


def has_results(outcome: dict) -> bool:
    """As engine ModelOutcome.has_results, on the stored JSON."""
    return outcome.get("giip_bscf") is not None and outcome.get("eur_bscf") is not None


def _check_basis(field: Field, merged: dict, given: dict) -> dict[str, str]:
    model, reason = merged["basis_model"], merged["basis_reason"]
    if model not in BASIS_CHOICES:
        return {"basis_model": f"choose one of {', '.join(BASIS_CHOICES)}"}
    if model == AUTOMATIC:
        return {}
    title = words.model_title(model)
    if not reason:
        return {
            "basis_reason": f"{field.name}: give a reason for basing the headline on {title} "
            "(e.g. the water sample shows aquifer water); choose automatic to follow the evidence rule"
        }
    if len(reason) > REASON_MAX_CHARS:
        return {"basis_reason": f"at most {REASON_MAX_CHARS} characters, got {len(reason)}"}
    outcomes = merged.get("_outcomes")
    if "basis_model" in given and outcomes is not None:
        found = next((o for o in outcomes if o.get("model") == model), None)
        if found is None or not has_results(found):
            why = (found or {}).get("status") or "the current estimate has no result for it"
            return {"basis_model": f"{field.name}: {title} cannot be the basis ({why})"}
    return {}


def _parse(given: dict) -> tuple[dict, dict[str, str]]:
    parsed, problems = {}, {}
    for key, raw in given.items():
        try:
            if key in BOOLEAN_CHOICES:
                if not isinstance(raw, bool):
                    raise ValueError("must be true or false")
                parsed[key] = raw
            elif key == "effective_compressibility_per_psi":
                parsed[key] = None if raw in (None, "") else _finite(raw, "ce")
            elif key in FIELD_KEYS:
                parsed[key] = _finite(raw, "the abandonment pressure")
            elif key == "basis_reason":
                parsed[key] = " ".join(str(raw or "").split())
            else:
                parsed[key] = raw if isinstance(raw, str) else str(raw)
        except ValueError as exc:
            problems[key] = str(exc)
    return parsed, problems


def update_choices(
    session: Session, actor: audit.Actor, field: Field, values: dict, *, atmosphere_psia: float
) -> ChangeOutcome:
    """Store the changed abandonment pressure and analysis choices, audit them (old -> new)
    and queue a recompute. Raises :class:`FieldWorkError` (nothing stored) on a bad value."""
    parsed, problems = _parse(values)
    before = current_choices(field)
    if parsed.get("basis_model") == AUTOMATIC and "basis_reason" not in parsed:
        parsed["basis_reason"] = ""  # back to the rule: the engineer's reason goes with the choice
    if "basis_reason" in parsed and (before | parsed)["basis_model"] == AUTOMATIC:
        parsed["basis_reason"] = ""  # the rule needs no reason; none is kept
    merged = before | parsed | {"_outcomes": basis_outcomes(session, field.id)}
    problems |= {k: v for k, v in _check(field, merged, parsed, atmosphere_psia).items() if k not in problems}
    if problems:
        raise FieldWorkError(problems)
    old, new = audit.changed(before, {k: merged[k] for k in parsed})
    if not new:
        return ChangeOutcome((), None, None, "no change")
    jobs.write_first(session)
    if field.settings is None:
        field.settings = FieldAnalysisSettings(field_id=field.id)
        session.add(field.settings)
    for key, value in new.items():
        setattr(field if key in FIELD_KEYS else field.settings, key, value)
    session.flush()
    summary = "analysis choices: " + "; ".join(words.choice_change(k, old[k], new[k]) for k in new)
    event = audit.record(
        session,
        actor,
        "update",
        "field_settings",
        field.id,
        before=old,
        after=new,
        field_id=field.id,
        summary=summary,
    )
    session.flush()
    job_id = _queue(session, field, f"{', '.join(new)} changed by {actor.name}")
    return ChangeOutcome(tuple(new), job_id, event.id, summary)
