"""Stage 2 of a field's analysis: the single-tank p/z estimate the engineer chose (plain,
anchored, with a given or fitted ce), the uncorrected line beside a corrected one for
comparison, and the comparable models fitted on the same screened points."""

from __future__ import annotations

import dataclasses
import datetime as dt
import math
from functools import partial

from ..errors import EngineError, InputRangeError, InsufficientDataError
from ..inputs import OVERPRESSURE_MODES, WEIGHTINGS, AnalysisChoices
from ..prepare.points import PreparedData
from ..tank.overpressure import single_tank_modelfit, tank_ce_modelfit
from ..tank.pz_estimate import PointStatus, PzEstimate, estimate_pz, method_key
from .types import CAUTION, FieldAnalysis


def check_choices(choices: AnalysisChoices) -> None:
    """Raise InputRangeError for choices the estimators cannot honour."""
    if choices.overpressure_mode not in OVERPRESSURE_MODES:
        raise InputRangeError(
            f"unknown overpressure mode {choices.overpressure_mode!r}; "
            f"choose one of {list(OVERPRESSURE_MODES)}"
        )
    if choices.weighting not in WEIGHTINGS:
        raise InputRangeError(f"unknown weighting {choices.weighting!r}; choose one of {list(WEIGHTINGS)}")
    ce = choices.effective_compressibility_per_psi
    if choices.overpressure_mode == "given" and (ce is None or not ce > 0):
        raise InputRangeError(
            "overpressure mode 'given' needs a positive effective_compressibility_per_psi [1/psi], "
            f"e.g. 1.4e-05; got {ce!r}"
        )


def analyse_prepared(prepared: PreparedData, choices: AnalysisChoices, pz_slope=None) -> FieldAnalysis:
    """Stage 2 on prepared points (see :func:`analyse_field`); ``pz_slope``: d(p/z)/dp of the
    field's gas against pressure, for the constant-ce tank's effective variance."""
    check_choices(choices)
    mode = choices.overpressure_mode
    try:
        pz = pz_estimate_for(prepared, choices, mode)
    except InsufficientDataError as exc:
        return FieldAnalysis(
            status="refused",
            message=str(exc),
            method=_attempted_method(prepared, choices),
            prepared=prepared,
            notes=(CAUTION,),
        )
    notes = list(pz.notes)
    uncorrected = None
    if mode != "off":
        try:
            uncorrected = pz_estimate_for(prepared, choices, "off")
        except InsufficientDataError as exc:
            notes.append(f"No uncorrected line for comparison: {exc}.")
    screened = screened_data(prepared, pz)
    models = []
    for fit_model in (single_tank_modelfit, partial(tank_ce_modelfit, pz_slope=pz_slope)):
        try:
            models.append(fit_model(screened, choices))
        except EngineError as exc:  # a model that cannot be fitted is left out, with the reason
            name = getattr(fit_model, "func", fit_model).__name__.removesuffix("_modelfit")
            notes.append(f"{name}: not fitted ({exc}).")
    g = pz.giip_range_bscf
    boot, ci = g.bootstrap, g.ci_fieller or g.ci_delta
    level = f"{100 * pz.confidence_level:.0f} %"
    low, high, range_kind = (
        (boot.p90, boot.p10, "P90-P10 of a residual bootstrap (80 % range)")
        if boot
        else (ci.low, ci.high, f"{ci.method.capitalize()} {level} confidence interval")
    )
    if not math.isfinite(high):  # resamples whose line does not fall: no upper bound
        high = None
        range_kind += "; the high case is unbounded"
    notes.append(CAUTION)
    return FieldAnalysis(
        status="ok",
        message=f"{pz.title} through {pz.n_used} surveys"
        + (f" ({pz.n_outliers} set aside as outliers)" if pz.n_outliers else ""),
        method=pz.method,
        prepared=prepared,
        pz=pz,
        pz_uncorrected=uncorrected,
        models=tuple(models),
        giip_low_bscf=low,
        giip_best_bscf=pz.giip_bscf,
        giip_high_bscf=high,
        giip_range_kind=range_kind,
        giip_ci_low_bscf=ci.low,
        giip_ci_high_bscf=ci.high,
        giip_ci_kind=f"{ci.method.capitalize()} {level} confidence interval",
        eur_bscf=pz.eur_bscf,
        recovery_factor_frac=pz.recovery_factor_frac,
        remaining_bscf=pz.remaining_bscf,
        notes=tuple(notes),
    )


def pz_estimate_for(prepared: PreparedData, choices: AnalysisChoices, mode: str) -> PzEstimate:
    """The p/z estimate of the included surveys with the choices' options and ``mode``.

    Point statuses cover every prepared point (``index`` = SurveyPoint.index): the
    engineer's exclusions keep their reason; outliers carry the rule's reason.
    """
    used = [p for p in prepared.points if p.included]
    for p in used:
        if not (math.isfinite(p.pz_psia) and math.isfinite(p.gp_bscf) and math.isfinite(p.p_datum_psia)):
            day = dt.date(1970, 1, 1) + dt.timedelta(days=round(p.t_days))
            raise InputRangeError(
                f"survey of well {p.well or '?'} on {day.isoformat()} (row {p.index + 1} of the surveys): "
                f"p/z {p.pz_psia}, Gp {p.gp_bscf} Bscf, datum pressure {p.p_datum_psia} psia "
                "are not all finite"
            )
    pi = prepared.initial_pz_psia * prepared.initial_z
    pa = prepared.abandonment_pz_psia * prepared.abandonment_z
    ce = {"off": 0.0, "given": choices.effective_compressibility_per_psi, "fitted": None}[mode]
    est = estimate_pz(
        [p.gp_bscf for p in used],
        [p.pz_psia for p in used],
        [p.weight for p in used] if choices.weighting == "quality" else None,
        abandonment_pz_psia=prepared.abandonment_pz_psia,
        cumulative_gas_bscf=prepared.cumulative_gas_bscf,
        pressure_drop_psi=[pi - p.p_datum_psia for p in used],
        abandonment_pressure_drop_psi=pi - pa,
        anchor_pz_psia=prepared.initial_pz_psia if choices.anchor_initial else None,
        ce_per_psi=ce,
        overpressure_mode=mode,
        confidence_level=choices.confidence_level,
        bootstrap_samples=choices.bootstrap_samples,
        random_seed=choices.random_seed,
        groups=[p.well for p in used],
        labels=[p.index for p in used],
        initial_pz_psia=prepared.initial_pz_psia,
    )
    by_index = {s.index: s for s in est.points}
    statuses = []
    for p in prepared.points:
        s = by_index.get(p.index)
        if s is None:
            f = 1.0 - est.ce_per_psi * (pi - p.p_datum_psia)
            reason = p.reason or "set aside by the engineer"
            s = PointStatus(p.index, "excluded", reason, None, None, p.pz_psia * f)
        statuses.append(s)
    return dataclasses.replace(est, points=tuple(statuses), n_excluded=len(prepared.points) - len(used))


def screened_data(prepared: PreparedData, pz: PzEstimate) -> PreparedData:
    """The prepared points with the estimate's outliers also set aside (with the rule's
    reason), so every model is compared on the same surveys."""
    out = {s.index: f"outlier rule: {s.reason}" for s in pz.points if s.status == "outlier"}
    if not out:
        return prepared
    points = tuple(
        dataclasses.replace(p, included=False, reason=out[p.index]) if p.index in out else p
        for p in prepared.points
    )
    return dataclasses.replace(prepared, points=points)


def _attempted_method(prepared: PreparedData, choices: AnalysisChoices) -> str:
    weights = {p.weight for p in prepared.points if p.included}
    weighted = choices.weighting == "quality" and len(weights) > 1
    return method_key(weighted, choices.anchor_initial, choices.overpressure_mode)
