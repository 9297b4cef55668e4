"""How the p/z estimate (:mod:`.pz_estimate`) screens its surveys: the checks on its inputs, the
outlier rule (a robust Bonferroni screen), the initial survey the record corroborates, the
refusal of a line that does not decline, and what happened to each survey."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import InputRangeError, InsufficientDataError
from ..outliers import linear_subset_fits, robust_outlier_screen
from ..stats import t_multiplier
from .line import TankLineFit, screen_design

# Family-wise level of the Bonferroni outlier rule. 1 %: a clean field of 40 surveys loses a
# good survey about once in a hundred (at 5 % once in twenty, each a changed line and a flag
# to check), while a gross error stays far beyond the limit of about 3.9 noise widths, close to
# the diagnosis' own 4 widths (FlagThresholds.outlier_sigma). A team choice, not a published one.
OUTLIER_ALPHA = 0.01
OUTLIER_MAX_FRACTION = 0.2


@dataclass(frozen=True)
class PointStatus:
    """What the estimate did with one survey (``index`` as in PreparedData.points)."""

    index: int
    status: str  # "used" | "excluded" (by the engineer) | "outlier" (by the rule)
    reason: str | None
    residual_pz_psia: float | None  # observed minus the final line (p/z space)
    studentized: float | None  # the outlier test's statistic when it set the point aside
    corrected_pz_psia: float  # (p/z)[1 - ce (pi - p)]; equals p/z when ce = 0


#: Residual widths within which a survey before production agrees with the stated pi/zi
#: (the diagnosis' own ``outlier_sigma``; common practice, not a published value).
RECORD_SIGMA = 4.0
#: Gas produced before a survey [Bscf] below which it reads the initial state.
BEFORE_PRODUCTION_BSCF = 1e-6


def corroborated(x, y, w, keep, fit_subset, initial_pz_psia) -> np.ndarray | None:
    """Surveys before production [Gp = 0] that the screen set aside although they lie within
    :data:`RECORD_SIGMA` residual widths of the stated pi/zi [psia]; None when there are none."""
    if initial_pz_psia is None or keep.all():
        return None
    early = (~keep) & (x <= BEFORE_PRODUCTION_BSCF)
    if not early.any():
        return None
    sigma = fit_subset(keep).lin.sigma
    if not (np.isfinite(sigma) and sigma > 0):
        return None
    agree = early & (np.abs(y - initial_pz_psia) * np.sqrt(w) <= RECORD_SIGMA * sigma)
    return agree if agree.any() else None


def screen_surveys(x, y, w, d, anchor, ce, groups, need, notes, held=None):

    design, offset = screen_design(x, y, w, d, anchor=anchor, ce=ce)
    fits = linear_subset_fits(design, y, w, offset)

    def run(protected):
        return robust_outlier_screen(
            fits,
            x.size,
            design.shape[1],
            alpha=OUTLIER_ALPHA,
            max_fraction=OUTLIER_MAX_FRACTION,
            min_keep=need,
            protected=protected,
        )

    screen = run(held)
    if groups is not None and screen.outliers:
        g = np.asarray(groups, dtype=object)
        found = g[[o.index for o in screen.outliers]]
        wells = sorted({k for k in found if np.sum(found == k) >= 2})
        if wells:
            for k in wells:
                notes.append(
                    f"{int(np.sum(found == k))} surveys of well {k} lie off the line together: kept in the "
                    "fit, not treated as isolated gauge errors (a compartment or a gauge offset?)."
                )
            screen = run(np.isin(g, wells) if held is None else np.isin(g, wells) | held)
    if screen.stopped_reason:
        notes.append("Outlier screening: " + screen.stopped_reason + ".")
    return screen.keep, screen.outliers


def check_inputs(x, y, w, d, mode, ce, level, samples):
    if not (x.ndim == 1 and x.shape == y.shape == w.shape == d.shape):
        raise InputRangeError("gp_bscf, pz_psia, weights and pressure drops must be 1-D and of equal length")
    for name, v in (("gp_bscf", x), ("pz_psia", y), ("weights", w), ("pressure_drop_psi", d)):
        bad = np.flatnonzero(~np.isfinite(v))
        if bad.size:
            raise InputRangeError(f"{name} is not finite at position(s) {bad.tolist()}")
    if np.any(y <= 0) or np.any(w <= 0):
        raise InputRangeError("p/z and weights must be positive")
    expected = {"off": ce == 0.0, "given": ce is not None and ce > 0, "fitted": ce is None}
    if mode not in expected:
        raise InputRangeError(f"unknown overpressure mode {mode!r}; choose one of {sorted(expected)}")
    if not expected[mode]:
        raise InputRangeError(f"overpressure mode {mode!r} does not match ce_per_psi={ce!r}")
    if not 0.5 <= level < 1.0:
        raise InputRangeError(f"confidence level must be at least 0.5 and below 1, got {level}")
    if samples != 0 and samples < 100:
        raise InputRangeError(f"bootstrap_samples must be 0 (off) or at least 100, got {samples}")


def depletion_frac(fit: TankLineFit, x) -> float:
    a, b, _ = fit.phi
    return float(-b * x.max() / a)


def refuse_unless_declining(fit: TankLineFit, x, anchored, level, min_frac):
    a, b, _ = fit.phi
    se_b = float(np.sqrt(fit.phi_cov[1, 1]))
    t = t_multiplier(level, fit.dof)
    if b >= 0:
        raise InsufficientDataError(
            f"p/z does not fall with production (slope {b:+.1f} ± {t * se_b:.1f} psia/Bscf): "
            "no tank volume can be extrapolated"
        )
    frac = depletion_frac(fit, x)
    if frac < min_frac:
        raise InsufficientDataError(
            f"too little depletion to judge: the p/z line has fallen {100 * frac:.1f} % below "
            f"{'pi/zi' if anchored else 'its intercept'} by the last survey; at least "
            f"{100 * min_frac:.0f} % is needed before it may be extrapolated"
        )
    if abs(b) <= t * se_b:
        raise InsufficientDataError(
            f"the p/z decline is within the survey scatter (slope {b:.1f} ± {t * se_b:.1f} psia/Bscf "
            f"at {100 * level:.0f} %): the data do not bound GIIP"
        )


def point_statuses(fit, x, y, d, keep, outliers, labels) -> tuple[PointStatus, ...]:
    a, b, ce = fit.phi
    f = 1.0 - ce * d
    fitted = (a + b * x) / f
    why = {o.index: o for o in outliers}
    out = []
    for i in range(x.size):
        o = why.get(i)
        reason = None
        if o is not None:
            side = "below" if o.residual < 0 else "above"
            reason = (
                f"p/z {y[i]:,.0f} psia is {abs(o.residual):,.0f} psia {side} the line through the "
                f"used points, {abs(o.studentized):.1f} σ; the limit for {o.n_tested} surveys is "
                f"{o.threshold:.1f} σ (Bonferroni, {100 * OUTLIER_ALPHA:.0f} % family-wise)"
            )
        out.append(
            PointStatus(
                index=i if labels is None else int(labels[i]),
                status="used" if keep[i] else "outlier",
                reason=reason,
                residual_pz_psia=float(y[i] - fitted[i]),
                studentized=float(o.studentized) if o else None,
                corrected_pz_psia=float(y[i] * f[i]),
            )
        )
    return tuple(out)
