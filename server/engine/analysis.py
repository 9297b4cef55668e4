"""One field's analysis: the engine's entry point for the services layer.

Stage 1 (:mod:`.prepare.points`) corrects the data into p/z points; stage 2 (here) fits the
single-tank p/z estimate the engineer chose (plain, anchored, with a given or fitted
ce), keeps the uncorrected line beside a corrected one for comparison, and fits the
comparable models on the same screened points. The result is a frozen tree of
dataclasses that the services store as JSON with a summary in columns.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import math
from dataclasses import dataclass, field

from . import ENGINE_VERSION
from .diagnosis.diagnose import DEFAULT_FITTERS, Diagnosis, Headline, diagnose_field
from .diagnosis.flag_rules import raise_flags
from .diagnosis.flags import Outlier
from .errors import EngineError, InputRangeError, InsufficientDataError
from .forecast.build import forecast_field
from .forecast.types import Forecast
from .headline.build import choose_basis, model_outcomes, replace_dynamic
from .headline.connected import apart_wells, connected_tank_fit
from .headline.outcomes import TITLES
from .headline.ranges import Z90
from .headline.refused import headline_without_line
from .headline.types import Basis, ModelOutcome
from .headline.volumetric import young_field_headline
from .inputs import OVERPRESSURE_MODES, WEIGHTINGS, AnalysisChoices, FieldInputs
from .modelfit import ModelFit
from .prepare.points import PreparedData, prepare
from .tank.overpressure import single_tank_modelfit, tank_ce_modelfit
from .tank.pz_estimate import PointStatus, PzEstimate, estimate_pz, method_key

# Reported beside the numbers everywhere they are shown (pages, exports).
CAUTION = (
    "Low, best and high (P90, P50, P10) combine survey scatter, the spread of the models the data "
    "cannot tell apart, and metering, gauge and z-factor errors; they cannot see a mechanism no model "
    "holds. Estimates support, and do not replace, the judgement of qualified engineers and the "
    "reserves rules that apply (regulators, SPE-PRMS)."
)
# In place of CAUTION when the headline rests on the volumetric estimate (engine/headline/volumetric.py).
VOLUMETRIC_CAUTION = (
    "Low, best and high (P90, P50, P10) are the volumetric estimate's; the surveys cannot yet check "
    "them, and EUR assumes a closed tank (an aquifer would lower it). Keep surveying: material balance "
    "takes over once the pressure has fallen enough. Estimates support, and do not replace, the "
    "judgement of qualified engineers and the reserves rules that apply (regulators, SPE-PRMS)."
)


@dataclass(frozen=True)
class FieldAnalysis:
    """Result of one field analysis (Bscf at the field's standard conditions).

    Summary fields: ``giip_low_bscf``/``giip_high_bscf`` are the bootstrap P90/P10 of
    GIIP (an 80 % range; ``giip_range_kind`` says so) and ``giip_best_bscf`` the
    least-squares estimate; ``giip_ci_*`` hold the confidence interval named by
    ``giip_ci_kind`` (Fieller at the chosen level). A later ``diagnosis`` section
    (model comparison, flags) builds on ``models``, which are all fitted to the same
    screened points.
    """

    status: str  # "ok" or "refused"
    message: str
    method: str
    prepared: PreparedData
    pz: PzEstimate | None = None
    pz_uncorrected: PzEstimate | None = None  # the plain line, when a ce correction applies
    models: tuple[ModelFit, ...] = ()
    giip_low_bscf: float | None = None
    giip_best_bscf: float | None = None
    giip_high_bscf: float | None = None
    giip_range_kind: str | None = None
    giip_ci_low_bscf: float | None = None
    giip_ci_high_bscf: float | None = None
    giip_ci_kind: str | None = None
    eur_bscf: float | None = None
    recovery_factor_frac: float | None = None
    remaining_bscf: float | None = None
    flags: tuple = ()  # the diagnosis' flags (engine/diagnosis/flags.py), most severe first
    diagnosis: Diagnosis | None = None  # every model compared, wells, evidence (see with_diagnosis)
    # The headline (engine/headline): the model the giip_*/eur/recovery/remaining numbers above
    # come from once the diagnosis has run, and every model's own outcome. The straight line
    # (the p/z estimate of the choices) stays beside it in line_*.
    basis: Basis | None = None
    outcomes: tuple[ModelOutcome, ...] = ()
    line_giip_low_bscf: float | None = None
    line_giip_best_bscf: float | None = None
    line_giip_high_bscf: float | None = None
    line_eur_bscf: float | None = None
    forecast: Forecast | None = None  # engine/forecast: profiles from the basis (None without a plan)
    engine_version: str = ENGINE_VERSION
    notes: tuple[str, ...] = field(default_factory=tuple)

    @property
    def pz_model(self) -> str:
        """The outcome key of the p/z estimate: the line, or rock and water expansion when corrected."""
        return "single_tank" if self.pz_uncorrected is None else "tank_ce"

    @property
    def cumulative_gas_bscf(self) -> float:
        return self.prepared.cumulative_gas_bscf


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


def analyse_field(inputs: FieldInputs) -> FieldAnalysis:
    """Prepare a field's data, analyse it and diagnose it; the p/z estimate refuses with a
    reason when data are too thin (the diagnosis still runs and says why).

    Raises
    ------
    EngineError
        The engine's only refusal (``InsufficientDataError``, ``InputRangeError``): inputs
        that cannot give an answer, e.g. surveys that all lie at one cumulative production.
        Degenerate fields never raise anything else (tests/engine/test_degenerate_inputs.py).
    """
    check_choices(inputs.choices)
    return with_diagnosis(inputs, analyse_prepared(prepare(inputs), inputs.choices))


def analyse_prepared(prepared: PreparedData, choices: AnalysisChoices) -> FieldAnalysis:
    """Stage 2 on prepared points (see :func:`analyse_field`)."""
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
    for fit_model in (single_tank_modelfit, tank_ce_modelfit):
        try:
            models.append(fit_model(screened, choices))
        except EngineError as exc:  # a model that cannot be fitted is left out, with the reason
            notes.append(f"{fit_model.__name__.removesuffix('_modelfit')}: not fitted ({exc}).")
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


# ── Diagnosis: every model on the same screened points, the comparison and the flags ──
# (engine/diagnosis/diagnose.py; kept apart from the p/z estimate above, which it only reads)


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


def with_headline(inputs: FieldInputs, screened: PreparedData, result: FieldAnalysis, diag) -> FieldAnalysis:
    """The analysis with every model's outcome, the basis of its headline numbers and the
    booked range; the flags are raised again with the basis held against the volumetric range."""
    level = inputs.choices.confidence_level
    plain = result.pz_uncorrected or result.pz
    line = _line_outcome(plain, "single_tank", diag, level)
    corrected = None
    if result.pz_uncorrected is not None:
        title = f"Rock and water expansion (ce {inputs.choices.overpressure_mode})"
        corrected = dataclasses.replace(_line_outcome(result.pz, "tank_ce", diag, level), title=title)
    boot = plain.giip_range_bscf.bootstrap
    line_sigma = None
    if boot and boot.p90 > 0 and math.isfinite(boot.p10):
        line_sigma = math.log(boot.p10 / boot.p90) / (2.0 * Z90)
    outcomes = model_outcomes(inputs, screened, diag, line=line, corrected=corrected)
    basis = choose_basis(inputs, screened, diag, outcomes, diag.flags, line_scatter_sigma=line_sigma)
    evidence = replace_dynamic(diag.evidence, basis)
    flags = raise_flags(evidence, inputs.flag_thresholds)
    diag = dataclasses.replace(diag, evidence=evidence, flags=flags)
    out = dataclasses.replace(
        result,
        diagnosis=diag,
        flags=flags,
        outcomes=outcomes,
        line_giip_low_bscf=result.giip_low_bscf if result.pz_uncorrected is None else None,
        line_giip_best_bscf=plain.giip_bscf,
        line_giip_high_bscf=result.giip_high_bscf if result.pz_uncorrected is None else None,
        line_eur_bscf=plain.eur_bscf,
    )
    if basis is None:
        return out
    chosen = next(o for o in outcomes if o.model == basis.model)
    out = with_forecast(inputs, screened, out, diag, basis)
    return dataclasses.replace(
        out,
        basis=basis,
        message=f"{basis.title}: {result.message}" if basis.model != "single_tank" else result.message,
        giip_low_bscf=basis.giip_low_bscf,
        giip_best_bscf=basis.giip_bscf,
        giip_high_bscf=basis.giip_high_bscf,
        giip_range_kind=basis.range_kind,
        **(
            {}
            if basis.model == result.pz_model
            else {
                "giip_ci_low_bscf": chosen.giip_low_bscf,
                "giip_ci_high_bscf": chosen.giip_high_bscf,
                "giip_ci_kind": f"{100 * level:.0f} % confidence interval of the {basis.title.lower()}",
            }
        ),
        eur_bscf=basis.eur_bscf,
        recovery_factor_frac=basis.recovery_factor_frac,
        remaining_bscf=basis.remaining_bscf,
    )


def with_forecast(inputs: FieldInputs, screened: PreparedData, result: FieldAnalysis, diag, basis: Basis):
    """The analysis with the forecast of the plan from the basis (engine/forecast); a forecast
    that cannot be made is a note, never a refusal of the analysis."""
    if inputs.plan is None:
        return result
    try:
        params = _basis_params(inputs, screened, result, diag, basis.model)
        if basis.model == "connected_tank":  # the wells set apart see another compartment
            apart = set(apart_wells(diag.wells))
            points = tuple(
                dataclasses.replace(p, included=False, reason="another compartment") if p.well in apart else p
                for p in screened.points
            )
            screened = dataclasses.replace(screened, points=points)
        forecast = forecast_field(inputs, screened, basis, params)
    except (EngineError, ValueError, KeyError, FloatingPointError, ZeroDivisionError) as exc:
        return dataclasses.replace(result, notes=(*result.notes, f"No forecast: {exc}."))
    return dataclasses.replace(result, forecast=forecast)


def _basis_params(
    inputs: FieldInputs, screened: PreparedData, result: FieldAnalysis, diag, model: str
) -> dict:
    """The basis model's parameters: the p/z estimate's line (as the headline uses it), else its fit."""
    plain = result.pz_uncorrected or result.pz
    if model == "volumetric":  # one closed tank from the field's initial p/z
        return {"initial_pz_psia": screened.initial_pz_psia}
    if model == "single_tank" and plain is not None:
        return {"initial_pz_psia": plain.intercept_psia, "giip_bscf": plain.giip_bscf}
    if model == "tank_ce" and result.pz_uncorrected is not None:
        pz = result.pz
        return {"initial_pz_psia": pz.intercept_psia, "giip_bscf": pz.giip_bscf, "ce_per_psi": pz.ce_per_psi}
    if model == "connected_tank":
        fit = connected_tank_fit(screened, inputs.choices, diag.wells)
        if fit is None:
            raise InsufficientDataError("the connected tank could not be fitted again")
        return fit.params
    fit = next((m for m in diag.models if m.name == model), None)
    if fit is None:
        raise InsufficientDataError(f"the basis model {model} has no fit")
    return fit.params


def _line_outcome(est: PzEstimate, model: str, diag, level: float) -> ModelOutcome:
    """A p/z estimate (with its screening, anchoring and weighting) as a model outcome."""
    g = est.giip_range_bscf
    ci = g.ci_fieller or g.ci_delta
    low, high = (ci.low, ci.high) if ci else (None, None)
    if high is not None and not math.isfinite(high):
        high = None
    bounded = low is not None and high is not None
    row = diag.comparison.row(model) if diag.comparison else None
    return ModelOutcome(
        model=model,
        title=TITLES[model],
        giip_bscf=est.giip_bscf,
        giip_low_bscf=low,
        giip_high_bscf=high,
        eur_bscf=est.eur_bscf,
        recovery_factor_frac=est.recovery_factor_frac,
        remaining_bscf=est.remaining_bscf,
        determined=bounded,
        status="determined" if bounded else "not determined: its GIIP interval is unbounded",
        eur_method="closed form at the abandonment pressure",
        delta_aicc=None if row is None or not math.isfinite(row.delta_aicc) else row.delta_aicc,
        akaike_weight=None if row is None else row.akaike_weight,
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
