"""Wells whose pressures disagree beyond survey noise, and the field trend they are judged by.

In one connected tank every well's static p/z falls on one curve of cumulative field
production. A well that stays above the others (the classic case: a late well reading
near-initial pressure while the producers deplete) sees gas the others do not: another
compartment, or a poor connection (domain reference §4.3: pressure differences between
wells or compartments are the practical discriminator).

Each well is held against the trend of all the other wells' surveys at the same
cumulative production: a robust polynomial in Gp (quadratic with eight or more points,
else a line; points beyond a few noise widths are set aside and the fit repeated). The
survey noise is estimated from the other wells' scatter about that trend. A well
disagrees when its median offset exceeds ``k_sigma`` noise widths and most of its surveys
(at least ``min_points``) lie beyond that on the same side. It "reads near initial" when its
p/z has fallen by at most ``near_initial_ratio`` of the others' fall at the same Gp, and
stands "apart" when it disagrees from above having seen at most ``apart_ratio`` of that fall
(another compartment or a poorly connected area that has begun to deplete through a leaky
boundary; a gauge error of a few tens of psi cannot hold p/z a quarter of the fall up).
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from ..errors import InsufficientDataError
from ..stats import width_limit

if TYPE_CHECKING:
    from ..prepare.points import PreparedData

MAD_TO_SIGMA = 1.4826  # normal consistency of the median absolute deviation
SIGMA_FLOOR_PSIA = 1.0  # perfect synthetic data must not give a zero noise


@dataclass(frozen=True)
class FieldTrend:
    """Robust polynomial p/z = sum c_k Gp^k (highest power first, numpy order)."""

    coefficients: np.ndarray
    sigma_psia: float  # survey noise on p/z about the trend
    kept: np.ndarray  # bool per point: used in the final fit
    gp_min_bscf: float
    gp_max_bscf: float

    def __call__(self, gp_bscf):
        return np.polyval(self.coefficients, np.asarray(gp_bscf, float))

    @property
    def degree(self) -> int:
        return self.coefficients.size - 1


def robust_trend(
    gp_bscf, pz_psia, weights=None, *, reject_sigma: float = 4.0, max_degree: int = 2
) -> FieldTrend:
    """Fit a robust low-order trend of p/z against Gp and estimate the noise about it.

    Parameters
    ----------
    gp_bscf, pz_psia : arrays
        Cumulative production [Bscf] and p/z [psia] of the surveys.
    weights : array, optional
        Relative weights (1/variance).
    reject_sigma : float
        Points further than this many noise widths from the trend are set aside: of the
        robust (median absolute deviation) width at the start, then of the kept points' width
        with its own uncertainty, :func:`..stats.width_limit` at their degrees of freedom.
    max_degree : int
        Quadratic (2) with eight or more points, a line otherwise; never more than the
        number of distinct Gp values less one.

    Raises
    ------
    InsufficientDataError
        Fewer than three surveys, or surveys that all lie at one cumulative production
        (e.g. every survey predates first production): p/z has no trend in Gp.
    """
    x = np.asarray(gp_bscf, float)
    y = np.asarray(pz_psia, float)
    w = np.ones_like(x) if weights is None else np.asarray(weights, float)
    if x.size < 3:
        raise InsufficientDataError("a trend needs at least three surveys")
    distinct = np.unique(np.round(x, 9)).size  # Gp to 0.001 scf
    if distinct < 2:
        raise InsufficientDataError(
            f"all {x.size} surveys lie at one cumulative production ({x[0]:.6g} Bscf): "
            "p/z has no trend in produced gas"
        )
    degree = min(max_degree, 2 if x.size >= 8 else 1, distinct - 1)
    kept = np.ones(x.size, bool)
    sigma = math.inf
    coef = np.zeros(degree + 1)
    for it in range(6):
        coef = np.polyfit(x[kept], y[kept], degree, w=np.sqrt(w[kept]))
        r = (y - np.polyval(coef, x)) * np.sqrt(w)
        if it == 0:  # the first fit may be pulled by outliers: take a robust scale
            sigma = MAD_TO_SIGMA * float(np.median(np.abs(r - np.median(r))))
        else:  # then the honest scale of the points kept, so good points come back
            sigma = math.sqrt(float(r[kept] @ r[kept]) / max(int(kept.sum()) - degree - 1, 1))
        sigma = max(sigma, SIGMA_FLOOR_PSIA)
        # After the robust start, the width comes from the points kept: judged at the t quantile
        # of their degrees of freedom (a width from a handful of points is often small by
        # chance, and rejecting by it shrinks it further until true scatter reads as "20 noise
        # widths"; engine 0.6.8).
        limit = reject_sigma if it == 0 else width_limit(reject_sigma, max(int(kept.sum()) - degree - 1, 1))
        new = np.abs(r) <= limit * sigma
        too_few = new.sum() < degree + 2 or np.unique(x[new]).size <= degree
        if too_few or (it > 0 and np.array_equal(new, kept)):
            break
        kept = new
    return FieldTrend(coef, sigma, kept, float(x.min()), float(x.max()))


@dataclass(frozen=True)
class WellFinding:
    """How one well's surveys compare with the other wells' trend."""

    well: str
    compartment: str | None
    n_points: int  # surveys compared (within the others' range of Gp)
    median_offset_psia: float  # well p/z minus the others' trend, median
    sigma_psia: float  # noise of the others about their trend
    offset_sigmas: float
    n_beyond: int  # surveys beyond k_sigma on the median's side
    near_initial: bool  # has seen at most near_initial_ratio of the others' p/z depletion
    disagrees: bool
    reason: str
    apart: bool = False  # above the trend, having seen at most apart_ratio of the others' fall


def well_disagreements(
    prepared: PreparedData,
    *,
    k_sigma: float = 4.0,
    min_points: int = 2,
    near_initial_ratio: float = 0.25,
    min_trend_points: int = 5,
    apart_ratio: float = 0.75,
) -> tuple[WellFinding, ...]:
    """Compare every surveyed well with the trend of the other wells (included surveys only).

    Wells are taken out one at a time: the worst disagreeing well (one reading near the
    initial pressure first, then the largest offset in noise widths) is set aside and the
    remaining wells are compared again without it, so one odd well cannot distort the
    trend the others are judged by. With two wells, the one set aside is the one above
    the other (it sees more gas).

    No verdict comes from a trend of fewer than ``min_trend_points`` surveys, and the
    noise a well is judged by is never below the pooled scatter of each well about its
    own trend (:func:`within_well_noise_psia`): a few points of the others can lie on a
    line by chance and make ordinary scatter look like a compartment.
    """
    pts = [p for p in prepared.points if p.included]
    wells = sorted({p.well for p in pts})
    if len(wells) < 2:
        return ()
    arrays = (
        np.array([p.gp_bscf for p in pts]),
        np.array([p.pz_psia for p in pts]),
        np.array([p.weight for p in pts]),
        np.array([p.well for p in pts]),
    )
    comp = {p.well: p.compartment for p in pts}
    floor = within_well_noise_psia(*arrays)
    apart_ratio = max(apart_ratio, near_initial_ratio)
    settings = (
        k_sigma,
        min_points,
        near_initial_ratio,
        apart_ratio,
        prepared.initial_pz_psia,
        min_trend_points,
        floor,
    )
    odd: dict[str, WellFinding] = {}
    while True:
        active = [w for w in wells if w not in odd]
        found = [f for f in (_judge(w, active, arrays, comp, settings) for w in active) if f is not None]
        worst = max(
            (f for f in found if f.disagrees),
            key=lambda f: (f.near_initial, f.median_offset_psia > 0, f.offset_sigmas),
            default=None,
        )
        if worst is None or len(active) <= 2:
            if worst is not None:
                odd[worst.well] = worst
                found = [f for f in found if f.well != worst.well and not f.disagrees]
            return tuple(sorted([*odd.values(), *found], key=lambda f: f.well))
        odd[worst.well] = worst


def within_well_noise_psia(gp, pz, wt, of, min_points: int = 4) -> float:
    """Pooled scatter of p/z about each well's own robust trend in Gp [psia]; the floor
    (SIGMA_FLOOR_PSIA) when no well has ``min_points`` surveys. Weighted as the trends."""
    ss, dof = 0.0, 0
    for well in np.unique(of):
        m = of == well
        if m.sum() < min_points or np.ptp(gp[m]) <= 0:
            continue
        trend = robust_trend(gp[m], pz[m], wt[m])
        k = int(trend.kept.sum()) - trend.degree - 1
        if k > 0:
            ss, dof = ss + trend.sigma_psia**2 * k, dof + k
    return max(math.sqrt(ss / dof), SIGMA_FLOOR_PSIA) if dof > 0 else SIGMA_FLOOR_PSIA


def _judge(well, active, arrays, comp, settings) -> WellFinding | None:
    k_sigma, min_points, near_initial_ratio, apart_ratio, pzi, min_trend, floor = settings
    gp, pz, wt, of = arrays
    mine = of == well
    others = np.isin(of, [w for w in active if w != well])
    if others.sum() < max(min_trend, 3):
        return None
    try:
        trend = robust_trend(gp[others], pz[others], wt[others])
    except InsufficientDataError:  # the others span no production: nothing to judge by
        return None
    margin = 0.05 * max(trend.gp_max_bscf - trend.gp_min_bscf, 1e-9)
    inside = mine & (gp >= trend.gp_min_bscf - margin) & (gp <= trend.gp_max_bscf + margin)
    n = int(inside.sum())
    if n == 0:
        return None
    offset = pz[inside] - trend(gp[inside])
    med = float(np.median(offset))
    sigma = max(trend.sigma_psia, floor)
    beyond = int(np.sum(np.sign(offset) * np.sign(med) * np.abs(offset) > k_sigma * sigma))
    disagrees = n >= min_points and abs(med) > k_sigma * sigma and beyond >= max(min_points, math.ceil(n / 2))
    others_drop = pzi - float(np.median(trend(gp[inside])))
    own_drop = pzi - float(np.median(pz[inside]))
    ratio = own_drop / others_drop if others_drop > 0 else math.inf
    near = bool(disagrees and med > 0 and ratio <= near_initial_ratio)
    apart = bool(disagrees and med > 0 and ratio <= apart_ratio)
    reason = _reason(well, med, sigma, n, beyond, near, apart, disagrees, pzi, ratio)
    return WellFinding(
        well, comp.get(well), n, med, sigma, abs(med) / sigma, beyond, near, disagrees, reason, apart
    )


def _reason(well, med, sigma, n, beyond, near, apart, disagrees, pzi, ratio) -> str:
    side = "above" if med > 0 else "below"
    text = (
        f"{well}: p/z {abs(med):.0f} psia {side} the other wells' trend at the same cumulative production "
        f"(median of {n} surveys; {abs(med) / sigma:.1f} times the survey noise of {sigma:.0f} psia; "
        f"{beyond} of {n} beyond the threshold)"
    )
    if near:
        text += (
            f"; it reads near the initial p/z of {pzi:.0f} psia, having seen "
            f"{100 * max(ratio, 0.0):.0f} % of the others' depletion"
        )
    elif apart:
        text += f"; it has seen only {100 * max(ratio, 0.0):.0f} % of the others' depletion of p/z"
    return text if disagrees else text + " — within what noise explains"


#: Compartment labels given to unlabelled surveys when a well stands apart (:func:`assign_apart`).
PRODUCERS_LABEL = "producers"
APART_LABEL = "wells set apart"


def apart_wells(wells: tuple[WellFinding, ...]) -> tuple[str, ...]:
    """Wells that stand apart above the others' trend (near initial, or having seen little of
    their depletion): another compartment."""
    return tuple(sorted(f.well for f in wells if f.disagrees and (f.near_initial or f.apart)))


def assign_apart(
    prepared: PreparedData, wells: tuple[WellFinding, ...]
) -> tuple[PreparedData, tuple[str, ...]]:
    """(prepared data, wells assigned): the surveys of wells standing apart labelled as a
    neighbouring compartment and the rest as the producers', so a tank network reads the
    neighbour's pressure from them, as it would from the team's own labels. Unchanged, with
    no wells, when any included survey already carries a label or no well stands apart."""
    apart = apart_wells(wells)
    included = [p for p in prepared.points if p.included]
    if not apart or any(p.compartment for p in included):
        return prepared, ()
    points = tuple(
        dataclasses.replace(p, compartment=APART_LABEL if p.well in apart else PRODUCERS_LABEL)
        for p in prepared.points
    )
    return dataclasses.replace(prepared, points=points), apart
