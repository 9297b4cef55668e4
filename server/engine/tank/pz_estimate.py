"""The p/z estimate of a gas tank: GIIP, EUR, recovery factor and remaining gas, with
honest intervals, outliers set aside by a stated rule, and a refusal when the data
cannot support a number.

    p/z = (p_i/z_i) (1 - G_p/G)

(mole balance of a closed tank with constant gas pore volume; e.g. Craft & Hawkins,
Applied Petroleum Reservoir Engineering, ch. "Single-phase gas reservoirs";
domain-reference §2.1). With a constant effective compressibility the left side becomes
(p/z)[1 - ce (pi - p)] (Ramagost & Farshad 1981, §2.4); :mod:`.line` fits both.

Intervals (domain-reference §2.7). All capture survey scatter only, never model error
(aquifer, compartments, wrong z), which the diagnostics must flag:

* ``ci_delta``: G +/- t(dof) se, se by the delta method;
* ``ci_fieller``: Fieller's interval for the ratio G = -a/b (exact for normal errors,
  asymmetric; None when the decline is not significant, i.e. the data cannot bound G);
* ``bootstrap``: P90/P50/P10 from a residual bootstrap. P90 is the 10th percentile of
  the resampled values (exceeded with 90 % probability), P10 the 90th percentile;
  P90-P10 is an 80 % range, not the 95 % confidence interval.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import InsufficientDataError
from ..stats import (
    Interval,
    RunsTest,
    p90_p50_p10,
    runs_test,
    t_multiplier,
    t_quantile,
    weighted_least_squares,
)
from ..thresholds import MIN_DEPLETION_FRAC
from .intervals import LineBand, Uncertainty, derived_ratios, line_band, ratio_uncertainty
from .line import bootstrap_phi, fit_tank_line
from .pz_screen import (
    PointStatus,
    check_inputs,
    corroborated,
    depletion_frac,
    point_statuses,
    refuse_unless_declining,
    screen_surveys,
)

#: Fewest usable surveys for a free line (2 parameters) and for one anchored at pi/zi:
#: two degrees of freedom are left to estimate the survey scatter (common practice).
MIN_POINTS_FREE = 4
MIN_POINTS_ANCHORED = 3
Z_90 = 1.2815515655446004  # standard normal 90th percentile


@dataclass(frozen=True)
class PzLine:
    """A fitted p/z line: p/z = intercept + slope * Gp."""

    intercept_psia: float
    slope_psia_per_bscf: float
    n_points: int

    @property
    def giip_bscf(self) -> float:
        """x-intercept of the line (p/z = 0)."""
        return -self.intercept_psia / self.slope_psia_per_bscf

    def gp_at_pz_bscf(self, pz_psia: float) -> float:
        """Cumulative production at which the line reaches a given p/z."""
        return (pz_psia - self.intercept_psia) / self.slope_psia_per_bscf


def fit_pz_line(gp_bscf, pz_psia, weights=None) -> PzLine:
    """Least-squares line of p/z (dependent) on cumulative gas Gp, without intervals.

    Raises
    ------
    InsufficientDataError
        Fewer than two points, no spread in Gp, or a line that does not decline.
    """
    x = np.asarray(gp_bscf, float)
    y = np.asarray(pz_psia, float)
    if x.shape != y.shape or x.ndim != 1:
        raise ValueError("gp_bscf and pz_psia must be 1-D arrays of equal length")
    if x.size < 2:
        raise InsufficientDataError(f"{x.size} usable survey(s): at least 2 are needed for a line")
    if not (np.all(np.isfinite(x)) and np.all(np.isfinite(y))):
        raise ValueError("gp_bscf and pz_psia must be finite")
    if np.ptp(x) <= 0:
        raise InsufficientDataError("all surveys are at the same cumulative production")
    design = np.column_stack([np.ones_like(x), x])
    if x.size == 2:  # exact line, no scatter left to estimate
        intercept, slope = np.linalg.solve(design, y)
    else:
        intercept, slope = weighted_least_squares(design, y, weights).coef
    if slope >= 0:
        raise InsufficientDataError(
            f"p/z does not fall with production (slope {slope:+.2f} psia/Bscf): no tank volume "
            "can be extrapolated"
        )
    return PzLine(float(intercept), float(slope), int(x.size))


def recovery_factor_volumetric(pz_abandon_psia: float, pz_initial_psia: float) -> float:
    """RF = 1 - (p/z)_a / (p/z)_i for a volumetric tank [fraction of GIIP]."""
    return 1.0 - pz_abandon_psia / pz_initial_psia


@dataclass(frozen=True)
class PzEstimate:
    """A single-tank p/z estimate with its intervals (Bscf at the field's standard conditions)."""

    method: str  # short key, e.g. "pz-wls", "pz-ols-anchored", "pz-wls-ce-fitted"
    title: str
    weighted: bool
    anchored: bool
    overpressure_mode: str  # "off" | "given" | "fitted"
    ce_per_psi: float
    ce_uncertainty_per_psi: Uncertainty | None  # when ce was fitted
    ce_at_bound: str | None
    confidence_level: float
    n_used: int
    n_excluded: int
    n_outliers: int
    dof: int
    intercept_psia: float  # (corrected) p/z of the line at Gp = 0
    slope_psia_per_bscf: float
    param_names: tuple[str, ...]  # order of param_cov: ("a", "b", "ce")
    param_cov: np.ndarray
    sigma_pz_psia: float  # scatter of a unit-weight survey about the line
    giip_bscf: float
    giip_range_bscf: Uncertainty
    eur_bscf: float
    eur_range_bscf: Uncertainty
    recovery_factor_frac: float
    recovery_factor_range_frac: Uncertainty
    remaining_bscf: float
    remaining_range_bscf: Uncertainty
    cumulative_gas_bscf: float
    abandonment_pz_psia: float  # (corrected) p/z at the abandonment pressure
    depletion_frac: float  # fall of the line by the last survey, fraction of its intercept
    bootstrap_declining_frac: float | None  # share of resamples whose line still declines
    residual_runs: RunsTest | None
    band: LineBand
    points: tuple[PointStatus, ...]
    notes: tuple[str, ...]


def estimate_pz(
    gp_bscf,
    pz_psia,
    weights=None,
    *,
    abandonment_pz_psia: float,
    cumulative_gas_bscf: float,
    pressure_drop_psi=None,
    abandonment_pressure_drop_psi: float = 0.0,
    anchor_pz_psia: float | None = None,
    ce_per_psi: float | None = 0.0,
    overpressure_mode: str = "off",
    confidence_level: float = 0.95,
    bootstrap_samples: int = 1000,
    random_seed: int = 0,
    screen_outliers: bool = True,
    groups=None,
    labels=None,
    min_depletion_frac: float = MIN_DEPLETION_FRAC,
    initial_pz_psia: float | None = None,
) -> PzEstimate:
    """Fit the (corrected) p/z line and derive GIIP, EUR, RF and remaining gas.

    Parameters
    ----------
    gp_bscf, pz_psia, weights : arrays
        Cumulative gas [Bscf], p/z [psia] and relative weights (1/variance) of the
        usable surveys (the engineer's exclusions already removed).
    abandonment_pz_psia : float
        p/z at the abandonment pressure [psia] (uncorrected).
    cumulative_gas_bscf : float
        Produced to date [Bscf], for the remaining gas.
    pressure_drop_psi : array, optional
        pi - p at each survey [psi]; needed when ce is not 0.
    abandonment_pressure_drop_psi : float
        pi - pa [psi], for the corrected abandonment ordinate.
    anchor_pz_psia : float, optional
        pi/zi [psia]: anchor the line at (0, pi/zi); free intercept when None.
    ce_per_psi : float or None
        Effective compressibility [1/psi]; 0 for a volumetric tank, None to fit it.
    overpressure_mode : str
        "off", "given" or "fitted"; must agree with ``ce_per_psi`` (used for names).
    confidence_level : float
        Level of the confidence intervals and band, e.g. 0.95.
    bootstrap_samples : int
        Residual-bootstrap resamples (0 turns the bootstrap off, else >= 100).
    random_seed : int
        Seed of the bootstrap: the same inputs always give the same numbers.
    screen_outliers : bool
        Apply the outlier rule (:func:`..outliers.robust_outlier_screen`).
    groups : sequence of str, optional
        The well of each survey. Outliers are isolated bad readings: when the rule
        would set aside two or more surveys of one well, that well disagrees with the
        line as a group (a compartment or a gauge offset, evidence for the diagnosis),
        so those surveys are kept and a note says so.
    labels : sequence of int, optional
        Index reported in each PointStatus (default: position in the arrays).
    initial_pz_psia : float, optional
        The field's stated pi/zi [psia]. A survey taken before any production that agrees
        with it within :data:`.pz_screen.RECORD_SIGMA` residual widths is never set aside as an
        outlier: the record corroborates it, and a line that misses it (aquifer support
        flattens the later p/z) is the wrong model, not a bad reading.

    Returns
    -------
    PzEstimate

    Raises
    ------
    InsufficientDataError
        Too few surveys, no spread in Gp, a line that does not fall, too little
        depletion, or a decline not distinguishable from the scatter; the message says which.
    InputRangeError
        Inconsistent or non-finite inputs.
    """
    x = np.asarray(gp_bscf, float)
    y = np.asarray(pz_psia, float)
    n = x.size
    w = np.ones(n) if weights is None else np.asarray(weights, float)
    d = np.zeros(n) if pressure_drop_psi is None else np.asarray(pressure_drop_psi, float)
    check_inputs(x, y, w, d, overpressure_mode, ce_per_psi, confidence_level, bootstrap_samples)
    anchored = anchor_pz_psia is not None
    need = MIN_POINTS_ANCHORED if anchored else MIN_POINTS_FREE
    if n < need:
        raise InsufficientDataError(
            f"{n} usable survey(s): a p/z line {'anchored at pi/zi ' if anchored else ''}needs at "
            f"least {need}, so that the survey scatter can be estimated"
        )
    if np.ptp(x) <= 0:
        raise InsufficientDataError(
            f"all usable surveys are at the same cumulative production ({x[0]:.3g} Bscf)"
            + (": none was made after production began" if x[0] == 0 else "")
        )
    distinct = np.unique(x).size
    if distinct < need:
        raise InsufficientDataError(
            f"the usable surveys lie at only {distinct} different cumulative productions: a p/z line "
            f"{'anchored at pi/zi ' if anchored else ''}needs at least {need}, so that its slope and "
            "the survey scatter can be estimated"
        )
    weighted = bool(np.ptp(w) > 0)
    w = w / w.max()

    def fit_subset(mask):
        return fit_tank_line(x[mask], y[mask], w[mask], d[mask], anchor=anchor_pz_psia, ce=ce_per_psi)

    notes: list[str] = []
    keep = np.ones(n, bool)
    outliers = ()
    if screen_outliers:
        screen_notes: list[str] = []
        keep, outliers = screen_surveys(x, y, w, d, anchor_pz_psia, ce_per_psi, groups, need, screen_notes)
        held = corroborated(x, y, w, keep, fit_subset, initial_pz_psia)
        if held is not None:  # screen again with it held; the notes are the second screen's
            screen_notes = []
            keep, outliers = screen_surveys(
                x, y, w, d, anchor_pz_psia, ce_per_psi, groups, need, screen_notes, held
            )
            screen_notes.append(
                "The survey before production agrees with the stated initial pressure: kept in the "
                "line although it lies off it (the rule sets aside bad readings, not the initial state)."
            )
        notes.extend(screen_notes)
    fit = fit_subset(keep)
    a, b, ce = fit.phi
    refuse_unless_declining(fit, x[keep], anchored, confidence_level, min_depletion_frac)
    level = confidence_level
    t = t_multiplier(level, fit.dof)
    phi_star = None
    declining = None
    if bootstrap_samples:
        rng = np.random.default_rng(random_seed)
        # Scale the resampled residuals so that a bootstrap percentile range of a linear
        # function of the parameters matches the exact Student-t interval at P90/P10
        # (a plain residual bootstrap behaves like z and under-covers with few points).
        scale = t_quantile(0.9, fit.dof) / Z_90
        phi_star = bootstrap_phi(
            fit,
            x[keep],
            y[keep],
            w[keep],
            d[keep],
            anchor_pz_psia,
            samples=bootstrap_samples,
            rng=rng,
            scale=scale,
        )
        declining = float(np.mean(phi_star[:, 1] < 0))
        if declining < 0.9:
            notes.append(
                f"{100 * (1 - declining):.0f} % of bootstrap resamples give a line that does not fall: "
                "the high case (P10) is unbounded."
            )
    pz_a = abandonment_pz_psia
    r = derived_ratios(pz_a, abandonment_pressure_drop_psi)
    giip, giip_u = ratio_uncertainty(fit, *r["giip"], t, level, phi_star)
    eur, eur_u = ratio_uncertainty(fit, *r["eur"], t, level, phi_star)
    rem, rem_u = ratio_uncertainty(fit, *r["eur"], t, level, phi_star, shift=-cumulative_gas_bscf)
    rf, rf_u = ratio_uncertainty(fit, *r["rf"], t, level, phi_star, unbounded_if_rising=False)
    if anchored and ce_per_psi is not None:
        notes.append("Anchored at pi/zi with ce fixed: the recovery factor is set by pi/zi and pa/za alone.")
    ce_u = None
    if ce_per_psi is None:
        k = fit.names.index("ce")
        se_ce = float(np.sqrt(fit.lin.cov[k, k]))
        boot = p90_p50_p10(phi_star[:, 2], "residual bootstrap") if phi_star is not None else None
        ce_u = Uncertainty(se_ce, Interval(ce - t * se_ce, ce + t * se_ce, "t", level), None, boot)
        if fit.ce_at_bound:
            notes.append(
                f"The fitted ce sits at its {fit.ce_at_bound} search bound "
                f"({fit.ce_bounds[0 if fit.ce_at_bound == 'lower' else 1]:.3g} /psi): "
                + (
                    "the data show no rock-and-water expansion support."
                    if fit.ce_at_bound == "lower"
                    else "more support than rock and water expansion can give (an aquifer?)."
                )
            )
    points = point_statuses(fit, x, y, d, keep, outliers, labels)
    return PzEstimate(
        method=method_key(weighted, anchored, overpressure_mode),
        title=_method_title(weighted, anchored, overpressure_mode),
        weighted=weighted,
        anchored=anchored,
        overpressure_mode=overpressure_mode,
        ce_per_psi=float(ce),
        ce_uncertainty_per_psi=ce_u,
        ce_at_bound=fit.ce_at_bound,
        confidence_level=level,
        n_used=int(keep.sum()),
        n_excluded=0,
        n_outliers=len(outliers),
        dof=fit.dof,
        intercept_psia=float(a),
        slope_psia_per_bscf=float(b),
        param_names=("a", "b", "ce"),
        param_cov=fit.phi_cov,
        sigma_pz_psia=fit.lin.sigma,
        giip_bscf=float(giip),
        giip_range_bscf=giip_u,
        eur_bscf=float(eur),
        eur_range_bscf=eur_u,
        recovery_factor_frac=float(rf),
        recovery_factor_range_frac=rf_u,
        remaining_bscf=float(rem),
        remaining_range_bscf=rem_u,
        cumulative_gas_bscf=float(cumulative_gas_bscf),
        abandonment_pz_psia=float(pz_a * (1.0 - ce * abandonment_pressure_drop_psi)),
        depletion_frac=depletion_frac(fit, x[keep]),
        bootstrap_declining_frac=declining,
        residual_runs=runs_test(fit.lin.residual[np.argsort(x[keep], kind="stable")]),
        band=line_band(fit, giip_u, eur, t, level),
        points=points,
        notes=tuple(notes),
    )


def method_key(weighted, anchored, mode) -> str:
    return (
        "pz-"
        + ("wls" if weighted else "ols")
        + ("-anchored" if anchored else "")
        + {"off": "", "given": "-ce-given", "fitted": "-ce-fitted"}[mode]
    )


def _method_title(weighted, anchored, mode) -> str:
    text = ("Weighted" if weighted else "Ordinary") + " least-squares p/z line"
    if anchored:
        text += ", anchored at pi/zi"
    text += {
        "off": "",
        "given": ", Ramagost-Farshad correction with a given ce",
        "fitted": ", Ramagost-Farshad correction with ce fitted to the data",
    }[mode]
    return text
