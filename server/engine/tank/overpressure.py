"""Overpressured (geopressured) gas tanks: rock and water expansion in the p/z balance.

Ramagost & Farshad (1981) with a constant effective compressibility ce:

    (p/z) [1 - ce (pi - p)] = (pi/zi) (1 - Gp/G),     ce = (cf + cw Swi) / (1 - Swi)

Fetkovich, Reese & Whitson (1998) replace ce by a pressure-dependent *cumulative*
effective compressibility c̄e(p) (pore and water compressibility plus all water
associated with the gas). Uncorrected, the p/z line of such a tank is concave down:
its early straight segment overestimates G (domain-reference §2.4, §7.4).

This module gives the corrected p/z, the Roach-type linearisation (a diagnostic plot
whose slope is 1/G and intercept -ce), the cumulative c̄e(p) implied by a given G,
and the model fits "single_tank" and "tank_ce" (ce fitted by least squares on p/z,
:mod:`.line`) in the common :class:`..modelfit.ModelFit` shape.

References
----------
Ramagost, B.P. and Farshad, F.F. (1981). p/z abnormally pressured gas reservoirs.
    SPE-10125-MS (from memory).
Roach, R.H. (1981). Analyzing geopressured reservoirs - a material balance technique.
    SPE-9968-PA (from memory).
Fetkovich, M.J., Reese, D.E. and Whitson, C.H. (1998). Application of a general
    material balance for high-pressure gas reservoirs. SPE J. 3(1), SPE-22921-PA.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import InputRangeError, InsufficientDataError
from ..inputs import AnalysisChoices
from ..modelfit import WEIGHTED_RSS_NOTE, ModelFit
from ..prepare.points import PreparedData
from ..stats import fieller_ratio_interval, t_multiplier, weighted_least_squares
from .line import TankLineFit, fit_tank_line
from .pz_estimate import MIN_POINTS_ANCHORED, MIN_POINTS_FREE


def effective_compressibility_per_psi(cf_per_psi: float, cw_per_psi: float, swi_frac: float) -> float:
    """ce = (cf + cw Swi)/(1 - Swi) [1/psi] (Ramagost & Farshad 1981; domain-reference §2.4).

    Parameters
    ----------
    cf_per_psi : float
        Pore-volume (formation) compressibility [1/psi].
    cw_per_psi : float
        Connate-water compressibility [1/psi].
    swi_frac : float
        Initial water saturation [fraction], 0 <= Swi < 1.
    """
    if not 0.0 <= swi_frac < 1.0:
        raise InputRangeError(f"initial water saturation must be in [0, 1), got {swi_frac}")
    if cf_per_psi < 0 or cw_per_psi < 0:
        raise InputRangeError("compressibilities must not be negative")
    return (cf_per_psi + cw_per_psi * swi_frac) / (1.0 - swi_frac)


def corrected_pz_ramagost_farshad(pz_psia, p_psia, initial_pressure_psia: float, ce_per_psi: float):
    """(p/z)[1 - ce (pi - p)] [psia], the p/z of a tank with constant ce made linear in Gp.

    Parameters
    ----------
    pz_psia : float or array
        p/z at the datum [psia].
    p_psia : float or array
        Pressure at the datum [psia].
    initial_pressure_psia : float
        pi [psia].
    ce_per_psi : float
        Effective compressibility [1/psi].
    """
    if ce_per_psi < 0:
        raise InputRangeError(f"effective compressibility must not be negative, got {ce_per_psi}")
    factor = 1.0 - ce_per_psi * (initial_pressure_psia - np.asarray(p_psia, float))
    if np.any(factor <= 0):
        raise InputRangeError("ce (pi - p) reaches 1: the constant-ce correction is meaningless there")
    return np.asarray(pz_psia, float) * factor


@dataclass(frozen=True)
class RoachFit:
    """Roach-type straight line Y = X/G - ce (ordinary least squares on the plot)."""

    x: np.ndarray  # (pi/zi)/(p/z) * Gp / (pi - p) [Bscf/psi]
    y: np.ndarray  # [(pi/zi)/(p/z) - 1] / (pi - p) [1/psi]
    giip_bscf: float
    ce_per_psi: float
    ce_se_per_psi: float
    slope_se_per_bscf: float


def roach_plot(gp_bscf, pz_psia, p_psia, initial_pz_psia: float, initial_pressure_psia: float):
    """Roach-plot coordinates (X [Bscf/psi], Y [1/psi]) of surveys below the initial pressure.

    From the Ramagost-Farshad balance with r = (pi/zi)/(p/z):
    (r - 1)/(pi - p) = (1/G) r Gp/(pi - p) - ce. Surveys within 1 psi of pi are dropped
    (their coordinates are 0/0).
    """
    gp, pz, p = (np.asarray(v, float) for v in (gp_bscf, pz_psia, p_psia))
    dp = initial_pressure_psia - p
    keep = dp > 1.0
    r = initial_pz_psia / pz[keep]
    return r * gp[keep] / dp[keep], (r - 1.0) / dp[keep]


def fit_ce_roach(gp_bscf, pz_psia, p_psia, initial_pz_psia: float, initial_pressure_psia: float) -> RoachFit:
    """G and ce from a straight line on the Roach plot (Roach 1981; from memory).

    Dividing by (pi - p) magnifies the noise of the earliest surveys, so this is a
    diagnostic and a starting value; :func:`tank_ce_modelfit` fits ce on p/z itself.
    """
    x, y = roach_plot(gp_bscf, pz_psia, p_psia, initial_pz_psia, initial_pressure_psia)
    if x.size < 3:
        raise InsufficientDataError(f"{x.size} surveys below the initial pressure: a Roach line needs 3")
    lin = weighted_least_squares(np.column_stack([np.ones_like(x), x]), y)
    c0, slope = lin.coef
    if slope <= 0:
        raise InsufficientDataError("the Roach line does not rise: no tank volume can be inferred")
    return RoachFit(
        x, y, float(1.0 / slope), float(-c0), float(np.sqrt(lin.cov[0, 0])), float(np.sqrt(lin.cov[1, 1]))
    )


def cumulative_ce_from_giip(gp_bscf, pz_psia, p_psia, initial_pz_psia, initial_pressure_psia, giip_bscf):
    """The cumulative effective compressibility c̄e(p) [1/psi] implied at each survey by a G.

    c̄e = [1 - (pi/zi)(1 - Gp/G)/(p/z)] / (pi - p), the Fetkovich-Reese-Whitson (1998)
    balance solved for c̄e. A constant ce gives a flat curve; a rising c̄e as pressure
    falls is the pressure-dependent behaviour FRW describe. NaN within 1 psi of pi.
    """
    gp, pz, p = (np.asarray(v, float) for v in (gp_bscf, pz_psia, p_psia))
    dp = initial_pressure_psia - p
    ce = (1.0 - initial_pz_psia * (1.0 - gp / giip_bscf) / pz) / np.where(dp > 1.0, dp, np.nan)
    return ce


def _observations(prepared: PreparedData, choices: AnalysisChoices):
    pts = [p for p in prepared.points if p.included]
    x = np.array([p.gp_bscf for p in pts])
    y = np.array([p.pz_psia for p in pts])
    w = np.array([p.weight for p in pts]) if choices.weighting == "quality" else np.ones(len(pts))
    pi = prepared.initial_pz_psia * prepared.initial_z
    d = pi - np.array([p.p_datum_psia for p in pts])
    anchor = prepared.initial_pz_psia if choices.anchor_initial else None
    need = MIN_POINTS_ANCHORED if anchor is not None else MIN_POINTS_FREE
    if len(pts) < need:
        raise InsufficientDataError(f"{len(pts)} usable survey(s): a tank model needs at least {need}")
    return x, y, w, d, anchor


def _modelfit(name, title, fit: TankLineFit, n_obs, level, notes=()) -> ModelFit:
    a, b, ce = fit.phi
    if b == 0.0 or not (np.isfinite(a) and np.isfinite(b)):
        raise InsufficientDataError(
            f"the fitted line does not fall with produced gas (intercept {a:.6g} psia, slope "
            f"{b:.6g} psia/Bscf): no GIIP"
        )
    giip = -a / b
    # Reported parameters: the free ones, with G in place of the slope b.
    jac_rows, names = [], []
    for n in fit.names:
        if n == "a":
            names.append("initial_pz_psia")
            jac_rows.append([1.0, 0.0, 0.0])
        elif n == "b":
            names.append("giip_bscf")
            jac_rows.append([-1.0 / b, a / b**2, 0.0])
        else:
            names.append("ce_per_psi")
            jac_rows.append([0.0, 0.0, 1.0])
    jac = np.array(jac_rows)
    cov = jac @ fit.phi_cov @ jac.T
    se = np.sqrt(np.maximum(np.diag(cov), 0.0))
    corr = cov / np.outer(se, se) if np.all(se > 0) else None
    values = {"initial_pz_psia": a, "giip_bscf": giip, "ce_per_psi": ce}
    t = t_multiplier(level, fit.dof)
    ci = fieller_ratio_interval(-a, b, fit.phi_cov[0, 0], fit.phi_cov[1, 1], -fit.phi_cov[0, 1], t, level)
    notes = list(notes)
    if ci is None:
        lo = hi = None
        notes.append("GIIP is not bounded at this confidence level (decline within scatter).")
    else:
        lo, hi = ci.low, ci.high
        notes.append(f"GIIP interval: Fieller {100 * level:.0f} % confidence interval.")
    notes.append(WEIGHTED_RSS_NOTE)
    identifiable = corr is None or bool(np.all(np.abs(corr[np.triu_indices(len(names), 1)]) < 0.995))
    if b >= 0:
        notes.append("the fitted line does not fall with production")
    return ModelFit(
        name=name,
        title=title,
        n_params=len(fit.names),
        n_obs=int(n_obs),
        rss_psia2=fit.lin.rss_weighted,
        residual_pz_psia=fit.lin.residual,
        fitted_pz_psia=fit.lin.fitted,
        giip_bscf=float(giip) if b < 0 else None,
        giip_low_bscf=lo,
        giip_high_bscf=hi,
        params={k: float(values[k]) for k in names},
        param_se={k: float(s) for k, s in zip(names, se, strict=True)},
        correlation=corr,
        identifiable=identifiable,
        converged=True,
        notes=tuple(notes),
    )


def single_tank_modelfit(prepared: PreparedData, choices: AnalysisChoices) -> ModelFit:
    """The volumetric single tank (straight p/z line) on the included surveys' p/z.

    Anchored at pi/zi when the choices say so (then one parameter, G). Pass the data
    with outliers already set aside when models are to be compared on the same points.
    """
    x, y, w, d, anchor = _observations(prepared, choices)
    fit = fit_tank_line(x, y, w, d, anchor=anchor, ce=0.0)
    return _modelfit(
        "single_tank", "Single volumetric tank (straight p/z line)", fit, x.size, choices.confidence_level
    )


def tank_ce_modelfit(prepared: PreparedData, choices: AnalysisChoices, pz_slope=None) -> ModelFit:
    """A single tank with rock and water expansion, constant ce fitted (Ramagost-Farshad form).

    ce is searched within [0, min(1e-4, 0.5/max(pi - p))] /psi; a fit at a bound says so.
    ``pz_slope``: d(p/z)/dp [1] as a function of pressure [psia]; with it the surveys are
    weighed by their effective variance (:mod:`.line`), so the misfit compares with models
    that do not use the measured pressure in their prediction.
    """
    x, y, w, d, anchor = _observations(prepared, choices)
    slope = None
    if pz_slope is not None:
        p = np.array([pt.p_datum_psia for pt in prepared.points if pt.included])
        slope = np.array([float(pz_slope(float(v))) for v in p])
        if not (np.all(np.isfinite(slope)) and np.all(slope > 0)):
            slope = None
    fit = fit_tank_line(x, y, w, d, anchor=anchor, ce=None, pz_slope=slope)
    notes = []
    if fit.ce_at_bound:
        notes.append(f"ce at its {fit.ce_at_bound} search bound")
    return _modelfit(
        "tank_ce",
        "Single tank with rock and water expansion (ce fitted)",
        fit,
        x.size,
        choices.confidence_level,
        notes,
    )
