"""Signs of pressure support that need no water data: a rising Cole plot, support that grows
with the pressure drop, a p/z bend an aquifer model follows, and a line above the mapped
volume that an aquifer model brings back inside it. The aquifer flag
(:func:`.flag_rules.aquifer_signature`) and the headline basis (:mod:`..headline.rules`) both
read them; thresholds are team settings (docs/flags.md)."""

from __future__ import annotations

from ..modelfit import determined
from ..thresholds import FlagThresholds
from .compare import ModelAssessment
from .flags import Evidence


def cole_rising(ev: Evidence, th: FlagThresholds) -> bool:
    """The Cole plot (F/Eg against Gp) rises by the Cole rule, at p below ``cole_p_value`` and by
    at least ``cole_min_change_frac``: a model-free sign of pressure support (Cole 1969; domain
    reference §7.2); or it rises less certainly while a determined aquifer model leads the
    ranking (:func:`_cole_and_model_agree`)."""
    return cole_strictly_rising(ev, th) or _cole_and_model_agree(ev, th)


def cole_strictly_rising(ev: Evidence, th: FlagThresholds) -> bool:
    """The Cole plot rises by the Cole rule at p below ``cole_p_value`` and by at least
    ``cole_min_change_frac`` (no model involved)."""
    c = ev.cole
    return bool(
        c is not None
        and c.direction == "rising"
        and c.p_value < th.cole_p_value
        and c.change_frac >= th.cole_min_change_frac
    )


def water_rising(ev: Evidence, th: FlagThresholds) -> bool:
    """The water-gas ratio rose by ``water_rise_factor`` to at least ``water_rise_min_stb_per_mmscf``."""
    w = ev.water
    return bool(
        w
        and w.late_wgr_stb_per_mmscf >= th.water_rise_min_stb_per_mmscf
        and w.late_wgr_stb_per_mmscf >= th.water_rise_factor * max(w.early_wgr_stb_per_mmscf, 1e-9)
    )


def _cole_and_model_agree(ev: Evidence, th: FlagThresholds) -> bool:
    """Two modest signs that agree: the Cole plot rises by the Cole rule itself (p < 0.05) by at
    least ``cole_min_change_frac``, and a determined aquifer model leads the model ranking ahead
    of the single tank by at least ``comparable_delta_aicc`` (engine 0.6.5; measured on
    bench_accuracy seeds 1-40: no depletion-drive, overpressured, condensate or off-datum field
    shows both)."""
    c, cmp = ev.cole, ev.comparison
    if c is None or c.direction != "rising" or c.change_frac < th.cole_min_change_frac or cmp is None:
        return False
    if not cmp.rows or not cmp.rows[0].name.startswith("aquifer_"):
        return False
    single = cmp.row("single_tank")
    if single is None:
        return False
    for r in cmp.rows:
        if not r.name.startswith("aquifer_"):
            return False
        if r.identifiable:
            return single.aicc - r.aicc >= th.comparable_delta_aicc
    return False


def compressible_support(ev: Evidence, th: FlagThresholds) -> tuple[float, float] | None:
    """(gain [AICc], c_e [1/psi]) when a normally pressured field shows support that grows with
    the pressure drop, else None: the initial gradient is below ``overpressure_gradient_psi_per_ft``,
    p/z bends down (curvature p below ``curvature_p_value``), and the constant-compressibility
    tank, determined by the data, beats the single tank by ``model_preference_delta_aicc`` with a
    c_e above ``normal_rock_max_ce_per_psi``. Rock and water expansion of normally pressured rock
    is too small for that; a small (pot) aquifer gives the same balance (domain reference §2.4,
    §4.3; engine 0.6.6). On bench_accuracy seeds 1-40 the three signs together appear only on
    aquifer fields (47 of the 120 dry or weak ones), never on the 240 volumetric, condensate,
    off-datum, young, compartmentalised or overpressured ones."""
    g, c, cmp = ev.gradient_psi_per_ft, ev.curvature, ev.comparison
    ce_fit = ev.fitted_ce_per_psi
    if g is None or g >= th.overpressure_gradient_psi_per_ft or c is None or cmp is None or ce_fit is None:
        return None
    if not (c.c2_psia_per_bscf2 < 0 and c.p_value < th.curvature_p_value):
        return None
    single, ce = cmp.row("single_tank"), cmp.row("tank_ce")
    if single is None or ce is None or not ce.identifiable:
        return None
    gain = single.aicc - ce.aicc
    if gain < th.model_preference_delta_aicc or ce_fit <= th.normal_rock_max_ce_per_psi:
        return None
    return gain, ce_fit


def bend_followed(ev: Evidence, th: FlagThresholds) -> tuple[ModelAssessment, float, float] | None:
    """(aquifer model, gain [AICc], GIIP drop [fraction of the line's]) when a normally pressured
    field's p/z bends significantly and a determined aquifer model follows the bend to a
    materially lower GIIP, else None.

    All of: the initial gradient below ``overpressure_gradient_psi_per_ft`` (so rock expansion
    cannot bend p/z); the quadratic term of p/z against Gp significant at ``curvature_p_value``
    (either sign: a pot-like aquifer's water is worth ∝ (p_i − p) p/z of surface gas, which
    shrinks once p falls below about p_i/2, so p/z bends down late; an aquifer that keeps giving
    flattens it; domain reference §2.4, §2.8, §7.2); the best-ranked aquifer model whose GIIP the data
    determine (:func:`..modelfit.determined`) comparable to the best model
    (``comparable_delta_aicc``), ahead of the single tank by ``support_model_delta_aicc``, and with
    a GIIP at least ``bend_min_giip_drop_frac`` below the straight line's. Two signs that agree
    (a model-free bend and a model that explains it), where either alone needs the larger
    ``model_preference_delta_aicc``; the drop keeps a bend that changes nothing a booking would
    see (metering and z-factor uncertainty are a few per cent) from raising a flag. Engine
    0.6.8; measured in benchmarks/README.md (bench_accuracy seeds 1-200: the three signs appear
    on aquifer fields only).
    """
    c = ev.curvature
    if c is None or not c.p_value < th.curvature_p_value:
        return None
    found = _supporting_aquifer(ev, th)
    if found is None:
        return None
    r, single, gain = found
    drop = 1.0 - r.giip_bscf / single.giip_bscf
    return (r, gain, drop) if drop >= th.bend_min_giip_drop_frac else None


def map_followed(ev: Evidence, th: FlagThresholds) -> tuple[ModelAssessment, float] | None:
    """(aquifer model, gain [AICc]) when a normally pressured field's straight line puts GIIP above
    the volumetric high case (P10) and a determined aquifer model that fits comparably to the best
    model, ahead of the single tank by ``support_model_delta_aicc``, puts it inside the volumetric
    P90-P10; else None.

    Two signs that agree: the mapped volume, evidence independent of the surveys, says the line
    overstates, and the surveys prefer a model with influx that gives what the map holds. A
    straight line above the mapped volume on a normally pressured field is the classic sign of
    an unseen aquifer (Bruns, Fetkovich & Meitzen 1965; domain reference §2.3, from memory),
    or of a map that is wrong, which the model's better fit speaks against. Engine 0.6.8.
    """
    vol = ev.volumetric
    found = None if vol is None else _supporting_aquifer(ev, th)
    if found is None:
        return None
    r, single, gain = found
    if single.giip_bscf > vol.p10_bscf and vol.p90_bscf <= r.giip_bscf <= vol.p10_bscf:
        return r, gain
    return None


def _supporting_aquifer(ev: Evidence, th: FlagThresholds):
    """(aquifer model, single tank, gain [AICc]) for the second sign of :func:`bend_followed`
    and :func:`map_followed`: on a normally pressured field, the best-ranked aquifer model
    whose GIIP the data determine, comparable to the best model and ahead of the single tank
    by ``support_model_delta_aicc``; else None."""
    g, cmp = ev.gradient_psi_per_ft, ev.comparison
    if g is None or g >= th.overpressure_gradient_psi_per_ft or cmp is None:
        return None
    single = cmp.row("single_tank")
    if single is None or single.giip_bscf is None or not single.giip_bscf > 0:
        return None
    r = next((r for r in cmp.rows if r.name.startswith("aquifer_") and determined(r)[0]), None)
    if r is None:
        return None
    gain = single.aicc - r.aicc
    if r.delta_aicc < th.comparable_delta_aicc and gain >= th.support_model_delta_aicc:
        return r, single, gain
    return None
