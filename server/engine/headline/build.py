"""Assemble the headline: every model's outcome, the basis (automatic or chosen) and its range."""

from __future__ import annotations

import dataclasses
from collections.abc import Sequence

from ..diagnosis.diagnose import Diagnosis
from ..diagnosis.explained import off_the_fit
from ..diagnosis.flags import Flag
from ..inputs import FieldInputs
from ..prepare.cumulative import recent_rate_bscf_per_day
from ..prepare.points import PreparedData
from .connected import apart_wells, connected_tank_fit, set_apart
from .neighbour import neighbour_share, neighbour_sigma
from .outcomes import outcome
from .ranges import booked_range, sigma_from_interval
from .rules import automatic_basis
from .types import AUTOMATIC, Basis, ModelOutcome

RANGE_KIND = (
    "P90-P10: survey scatter, models the data cannot tell apart, and metering, gauge and z-factor errors"
)


def model_outcomes(
    inputs: FieldInputs,
    prepared: PreparedData,
    diag: Diagnosis,
    *,
    line: ModelOutcome | None,
    corrected: ModelOutcome | None,
) -> tuple[ModelOutcome, ...]:
    """Every model's outcome, the straight line (and the engineer's corrected line) first.

    ``line`` and ``corrected`` come from the p/z estimate (its outlier screening, anchoring
    and weighting); they replace the comparison's fits of the same name.
    """
    rate = recent_rate_bscf_per_day(prepared.production_end_t_days, prepared.cumulative_gas_at_end_bscf)
    given = {o.model: o for o in (line, corrected) if o is not None}
    out = list(given.values())
    for fit in diag.models:
        if fit.name not in given:
            out.append(outcome(fit, inputs, prepared, rate, diag.comparison))
    connected = connected_tank_fit(prepared, inputs.choices, diag.wells, diag.models, diag.neighbour_wells)
    if connected is not None:
        out.append(outcome(connected, inputs, prepared, rate, None))
    return tuple(out)


def choose_basis(
    inputs: FieldInputs,
    prepared: PreparedData,
    diag: Diagnosis,
    outcomes: Sequence[ModelOutcome],
    flags: Sequence[Flag],
    *,
    line_scatter_sigma: float | None,
) -> Basis | None:
    """The basis and its booked range; None when no model has a GIIP and an EUR."""
    th = inputs.flag_thresholds
    ch = inputs.choices
    by = {o.model: o for o in outcomes}
    gp = prepared.cumulative_gas_bscf
    auto, auto_reason = automatic_basis(outcomes, flags, diag, th, gp)
    notes = []
    model, source, reason = auto, "automatic", auto_reason
    if ch.overpressure_mode != "off" and "tank_ce" in by and by["tank_ce"].has_results:
        model, source = "tank_ce", "engineer"
        reason = f"the engineer chose the overpressure correction (ce {ch.overpressure_mode})"
    if ch.basis_model != AUTOMATIC:
        chosen = by.get(ch.basis_model)
        if chosen is not None and chosen.has_results:
            model, source, reason = chosen.model, "engineer", ch.basis_reason or "the engineer's choice"
        else:
            notes.append(
                f"the chosen basis ({ch.basis_model}) has no GIIP and EUR for these data: "
                "the automatic basis is used"
            )
    if model is None:
        return None
    o = by[model]
    if model == "single_tank":  # None: resamples whose line does not fall, no upper bound
        scatter = line_scatter_sigma
    else:
        scatter = sigma_from_interval(o.giip_low_bscf, o.giip_high_bscf, ch.confidence_level)
    pts = [p for p in prepared.points if p.included]
    lab = inputs.lab_table is not None and ch.use_lab_table
    neighbour_part, neighbour_note = _neighbour(inputs, prepared, diag, o)
    if neighbour_note:
        notes.append(neighbour_note)
    low, high, parts = booked_range(
        o,
        _same_volume(o, outcomes),
        scatter_sigma=scatter,
        fall_frac=diag.evidence.depletion_frac,
        late_pressure_psia=min((p.p_datum_psia for p in pts), default=None),
        lab_z=lab,
        th=th,
        neighbour_sigma=neighbour_part,
    )

    def ratio(x):
        return None if x is None or o.eur_bscf is None else o.eur_bscf * x / o.giip_bscf

    return Basis(
        model=o.model,
        title=o.title,
        source=source,
        reason=reason,
        recommended_model=auto or o.model,
        recommended_title=by[auto].title if auto in by else o.title,
        recommended_reason=auto_reason,
        giip_bscf=o.giip_bscf,
        giip_low_bscf=low,
        giip_high_bscf=high,
        eur_bscf=o.eur_bscf,
        eur_low_bscf=ratio(low),
        eur_high_bscf=ratio(high),
        recovery_factor_frac=o.recovery_factor_frac,
        remaining_bscf=o.remaining_bscf,
        range_parts=parts,
        range_kind=RANGE_KIND + ("" if high is not None else "; the high case is unbounded"),
        engineer_reason=ch.basis_reason if source == "engineer" and ch.basis_model != AUTOMATIC else None,
        notes=tuple(notes) + ((o.eur_method,) if o.eur_method else ()),
    )


def _neighbour(inputs, prepared, diag, o: ModelOutcome) -> tuple[float | None, str | None]:
    """The connected tank's extra range part for gas from the set-apart compartment, and a note."""
    if o.model != "connected_tank" or o.giip_bscf is None or o.network_read:  # the feed is in the model
        return None, None
    apart = apart_wells(diag.wells)
    share = neighbour_share(inputs, prepared, o.giip_bscf, apart)
    if share is None:
        return None, None
    note = (
        f"about {100 * share:.0f} % of the gas produced came from the compartment of "
        f"{', '.join(apart)} (its depletion times the mapped volume beyond the connected tank); "
        f"the producers' own compartment would then hold about {o.giip_bscf * (1 - share):.1f} Bscf, "
        "(the range's low end allows for it)"
    )
    return neighbour_sigma(share), note


def basis_evidence(inputs: FieldInputs, prepared: PreparedData, diag: Diagnosis, basis: Basis | None):
    """The flags' evidence once the basis is chosen: the basis as the dynamic estimate and, for
    a connected tank, outlier candidates held against its line too (a survey the producers'
    line explains is not a data error; engine/diagnosis/explained.py)."""
    evidence = replace_dynamic(diag.evidence, basis)
    if basis is None or basis.model != "connected_tank" or not evidence.outliers:
        return evidence
    fit = connected_tank_fit(prepared, inputs.choices, diag.wells)
    if fit is None:
        return evidence
    kept = off_the_fit(
        evidence.outliers,
        fit,
        set_apart(prepared, diag.wells),
        inputs.flag_thresholds.outlier_sigma,
        evidence.noise_psia,
    )
    return dataclasses.replace(evidence, outliers=kept)


def replace_dynamic(evidence, basis: Basis | None):
    """The flags' evidence with the basis as the dynamic estimate held against the volumetric range."""
    if basis is None:
        return evidence
    return dataclasses.replace(
        evidence,
        dynamic_method=basis.model,
        dynamic_giip_bscf=basis.giip_bscf,
        dynamic_low_bscf=basis.giip_low_bscf,
        dynamic_high_bscf=basis.giip_high_bscf,
        dynamic_interval_kind="P90-P10",
    )


def _same_volume(basis: ModelOutcome, outcomes: Sequence[ModelOutcome]) -> Sequence[ModelOutcome]:
    """The outcomes that estimate the same volume as the basis, for the model spread.

    Every compared model was fitted to all wells; when the basis is the connected tank (a
    well set apart), only the tank network's hub tank estimates the same connected volume.
    """
    if basis.model != "connected_tank":
        return outcomes
    hubs = [o for o in outcomes if o.model in ("two_tank", "multi_tank") and o.determined and o.hub_giip_bscf]
    return [
        dataclasses.replace(basis, delta_aicc=0.0),
        *(dataclasses.replace(o, giip_bscf=o.hub_giip_bscf, delta_aicc=0.0) for o in hubs),
    ]
