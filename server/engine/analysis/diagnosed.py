"""Diagnosis: every model on the same screened points, the comparison and the flags
(engine/diagnosis/diagnose.py; kept apart from the p/z estimate of :mod:`.line`, which it only
reads), and the headline of a field whose p/z estimate was refused."""

from __future__ import annotations

import dataclasses
import math

from ..diagnosis.diagnose import DEFAULT_FITTERS, Headline, diagnose_field
from ..diagnosis.flags import Outlier
from ..headline.refused import headline_without_line
from ..headline.types import Basis, ModelOutcome
from ..headline.volumetric import young_field_headline
from ..inputs import FieldInputs
from ..prepare.points import PreparedData
from .basis import with_forecast, with_headline
from .line import screened_data
from .types import CAUTION, VOLUMETRIC_CAUTION, FieldAnalysis


def with_diagnosis(inputs: FieldInputs, result: FieldAnalysis) -> FieldAnalysis:
    """The analysis with the remaining models fitted (two tanks, aquifers), all models
    compared and the flags raised; the p/z estimate's outliers and interval are used."""
    screened = screened_data(result.prepared, result.pz) if result.pz is not None else result.prepared
    have = {m.name for m in result.models}
    fitters = [("estimate models", lambda _i, _p: result.models)] + [
        (name, fit) for name, fit in DEFAULT_FITTERS if name not in have
    ]
    headline = None
    if result.status == "ok" and result.giip_best_bscf is not None:
        headline = Headline(
            result.method,
            result.giip_best_bscf,
            result.giip_ci_low_bscf,
            result.giip_ci_high_bscf,
            result.giip_ci_kind,
        )
    diag = diagnose_field(
        inputs, screened, fitters=fitters, headline=headline, outliers=_estimate_outliers(inputs, result)
    )
    if result.status != "ok":  # a refused field shows no best fit in its headline
        young = any(f.code == "too_little_depletion" for f in diag.flags)
        if young and inputs.volumetric is not None:
            return with_volumetric(inputs, screened, result, diag)
        found = headline_without_line(inputs, screened, diag)
        if found is not None:  # the line mixed two compartments; the connected tank carries it
            return _without_line(inputs, screened, result, *found, caution=CAUTION)
        return dataclasses.replace(result, diagnosis=diag, flags=diag.flags)
    return with_headline(inputs, screened, result, diag)


def with_volumetric(
    inputs: FieldInputs, screened: PreparedData, result: FieldAnalysis, diag
) -> FieldAnalysis:
    """A field the p/z estimate refused for too little depletion, with a volumetric estimate:
    the headline rests on that estimate (engine/headline/volumetric.py), status "ok" so every
    page, total and the reserves review book it; there is no p/z line (``pz`` None) and the
    refusal's reason stays in the message and the notes."""
    basis, outcomes = young_field_headline(inputs, screened, diag, result.message)
    caution = VOLUMETRIC_CAUTION if basis.model == "volumetric" else CAUTION
    return _without_line(inputs, screened, result, basis, outcomes, diag, caution=caution)


def _without_line(
    inputs: FieldInputs,
    screened: PreparedData,
    result: FieldAnalysis,
    basis: Basis,
    outcomes: tuple[ModelOutcome, ...],
    diag,
    *,
    caution: str,
) -> FieldAnalysis:
    """A refused p/z estimate whose field still has a basis (the volumetric estimate of a young
    field, or the connected tank of a field whose line mixed two compartments): status "ok"
    with no p/z line (``pz`` None); the refusal's reason stays in the message and the notes."""
    why = result.message
    out = dataclasses.replace(
        result,
        status="ok",
        message=f"{basis.title}: {why}",
        method=basis.model,
        diagnosis=diag,
        flags=diag.flags,
        outcomes=outcomes,
        notes=(
            f"No p/z estimate: {why}.",
            *(n for n in result.notes if n != CAUTION),
            caution,
        ),
    )
    out = with_forecast(inputs, screened, out, diag, basis)
    return dataclasses.replace(
        out,
        basis=basis,
        giip_low_bscf=basis.giip_low_bscf,
        giip_best_bscf=basis.giip_bscf,
        giip_high_bscf=basis.giip_high_bscf,
        giip_range_kind=basis.range_kind,
        eur_bscf=basis.eur_bscf,
        recovery_factor_frac=basis.recovery_factor_frac,
        remaining_bscf=basis.remaining_bscf,
    )


def _estimate_outliers(inputs: FieldInputs, result: FieldAnalysis) -> tuple[Outlier, ...] | None:
    """The surveys the p/z estimate's outlier rule set aside, as flag evidence."""
    if result.pz is None:
        return None
    by_index = {p.index: p for p in result.prepared.points}
    out = []
    for s in result.pz.points:
        if s.status == "outlier":
            p = by_index[s.index]
            kind = inputs.survey_text("survey_kind", p.index, "survey")
            off = s.residual_pz_psia if s.residual_pz_psia is not None else math.nan
            out.append(Outlier(p.well, p.t_days, off, abs(s.studentized or 0.0), kind, p.quality))
    return tuple(out)
