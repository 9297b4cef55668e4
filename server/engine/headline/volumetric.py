"""Before enough depletion: the headline rests on the volumetric estimate.

Common practice in gas reserves work: until the pressure has fallen enough for material
balance to judge, a field's GIIP is the geologists' volumetric estimate (rock volume, net to
gross, porosity, gas saturation and Bgi; domain reference §6.3), and material balance is the
check that takes over later. The field then books the volumetric P90/P50/P10 as low, best
and high GIIP, and recovers what a closed (volumetric) tank gives up to the abandonment
pressure (domain reference §2.1; Craft & Hawkins, *Applied Petroleum Reservoir
Engineering*):

    RF = 1 − (p_a/z_a) / (p_i/z_i),    EUR = G · RF

with the field's initial pressure and z, and the abandonment pressure and its z. The same
RF scales the low and high EUR. An aquifer or rock and water expansion would lower RF, which
these data cannot yet show.
"""

from __future__ import annotations

import dataclasses
import math

from ..diagnosis.diagnose import Diagnosis
from ..inputs import FieldInputs
from ..prepare.points import PreparedData
from ..volumetrics.estimate import Z90, VolumetricResult
from .build import choose_basis, model_outcomes
from .outcomes import TITLES
from .types import AUTOMATIC, Basis, ModelOutcome, RangePart

MODEL = "volumetric"
RANGE_KIND = (
    "P90-P10 of the volumetric estimate (the geologists' range of rock volume, porosity, saturation "
    "and Bgi); the surveys cannot narrow it yet"
)
EUR_METHOD = (
    "volumetric tank to the abandonment pressure: EUR = GIIP x (1 - (p/z) at abandonment / initial p/z)"
)


def volumetric_recovery_frac(initial_pz_psia: float, abandonment_pz_psia: float) -> float:
    """Recovery factor of a closed gas tank at the abandonment pressure [fraction].

    Parameters
    ----------
    initial_pz_psia : float
        p_i / z_i at the datum [psia].
    abandonment_pz_psia : float
        p_a / z_a at the abandonment pressure [psia].

    Returns
    -------
    float
        1 − (p_a/z_a)/(p_i/z_i), clipped at 0 (Craft & Hawkins; domain reference §2.1).
    """
    if not (initial_pz_psia > 0 and math.isfinite(abandonment_pz_psia)):
        raise ValueError(f"initial p/z must be positive, got {initial_pz_psia}")
    return max(1.0 - abandonment_pz_psia / initial_pz_psia, 0.0)


def volumetric_outcome(vol: VolumetricResult, prepared: PreparedData) -> ModelOutcome:
    """The volumetric estimate as a model outcome: P50 GIIP, its P90-P10, closed-tank EUR."""
    rf = volumetric_recovery_frac(prepared.initial_pz_psia, prepared.abandonment_pz_psia)
    eur = vol.p50_bscf * rf
    return ModelOutcome(
        model=MODEL,
        title=TITLES[MODEL],
        giip_bscf=vol.p50_bscf,
        giip_low_bscf=vol.p90_bscf,
        giip_high_bscf=vol.p10_bscf,
        eur_bscf=eur,
        recovery_factor_frac=rf,
        remaining_bscf=max(eur - prepared.cumulative_gas_bscf, 0.0),
        determined=True,
        status="determined by the volumetric estimate, not by the surveys",
        eur_method=EUR_METHOD,
    )


def volumetric_basis(
    vol: VolumetricResult, prepared: PreparedData, why: str, *, chosen: Basis | None = None
) -> Basis:
    """The headline from the volumetric estimate; ``why`` says why material balance cannot judge.

    With ``chosen`` (the engineer's basis, computed as usual) the engineer's choice stays the
    headline and the volumetric basis is recorded as the automatic recommendation.
    """
    o = volumetric_outcome(vol, prepared)
    reason = (
        f"{why}; until material balance can judge (enough surveys, and p/z fallen far enough), the "
        "GIIP rests on the volumetric estimate (common practice) and the surveys are a check"
    )
    if chosen is not None:
        return dataclasses.replace(
            chosen, recommended_model=MODEL, recommended_title=o.title, recommended_reason=reason
        )
    rf = o.recovery_factor_frac
    sigma = math.log(vol.p10_bscf / vol.p90_bscf) / (2.0 * Z90) if vol.p90_bscf > 0 else 0.0
    gp = prepared.cumulative_gas_bscf
    return Basis(
        model=MODEL,
        title=o.title,
        source="automatic",
        reason=reason,
        recommended_model=MODEL,
        recommended_title=o.title,
        recommended_reason=reason,
        giip_bscf=vol.p50_bscf,
        giip_low_bscf=vol.p90_bscf,
        giip_high_bscf=vol.p10_bscf,
        eur_bscf=o.eur_bscf,
        eur_low_bscf=vol.p90_bscf * rf,
        eur_high_bscf=vol.p10_bscf * rf,
        recovery_factor_frac=rf,
        remaining_bscf=o.remaining_bscf,
        range_parts=(RangePart("volumetric", "Volumetric estimate (geologists' P90-P10)", sigma, 1.0),),
        range_kind=RANGE_KIND,
        notes=(
            EUR_METHOD,
            f"Gas produced so far: {gp:.1f} Bscf, {100 * gp / vol.p50_bscf:.1f} % of the volumetric best "
            "estimate.",
        ),
    )


def young_field_headline(
    inputs: FieldInputs, prepared: PreparedData, diag: Diagnosis, why: str
) -> tuple[Basis, tuple[ModelOutcome, ...]]:
    """(basis, outcomes) of a field the p/z estimate refused for too little depletion.

    The outcomes are the volumetric estimate's and those of the models the diagnosis could
    fit; the engineer's choice of one of those (or of the overpressure correction) still wins,
    with the volumetric basis as the automatic recommendation.
    """
    vol = inputs.volumetric
    fitted = model_outcomes(inputs, prepared, diag, line=None, corrected=None)
    outcomes = (volumetric_outcome(vol, prepared), *fitted)
    ch = inputs.choices
    if ch.basis_model == MODEL:
        auto = volumetric_basis(vol, prepared, why)
        return dataclasses.replace(
            auto,
            source="engineer",
            reason=ch.basis_reason or "the engineer's choice",
            engineer_reason=ch.basis_reason,
        ), outcomes
    chosen = None
    if ch.basis_model != AUTOMATIC or ch.overpressure_mode != "off":
        b = choose_basis(inputs, prepared, diag, fitted, diag.flags, line_scatter_sigma=None)
        chosen = b if b is not None and b.source == "engineer" else None
    basis = volumetric_basis(vol, prepared, why, chosen=chosen)
    if chosen is None and ch.basis_model != AUTOMATIC:  # a choice that cannot take effect says so
        note = (
            f"the chosen basis ({ch.basis_model}) has no GIIP and EUR for these data: "
            "the automatic basis is used"
        )
        basis = dataclasses.replace(basis, notes=(note, *basis.notes))
    return basis, outcomes
