"""General gas material balance in the Havlena-Odeh form, and the Cole plot.

    F   = G_p B_g + W_p B_w                        underground withdrawal [rb]
    E_g = B_g − B_gi                               gas expansion [rb/Mscf]
    E_fw = B_gi c_e (p_i − p)                      rock and connate-water expansion [rb/Mscf],
          c_e = (c_w S_wi + c_f)/(1 − S_wi)
    F   = G (E_g + E_fw) + W_e B_w                 G in Mscf, W_e in rb

The Cole plot is F/E_g against G_p (the modified form F/(E_g + E_fw)): flat at G for a
volumetric tank, rising for an active aquifer, falling towards G for a weak one.

References
----------
Havlena, D. and Odeh, A.S. (1963). The material balance as an equation of a straight
    line. JPT 15(8), 896-900, SPE-559-PA.
Cole, F.W. (1969). Reservoir Engineering Manual. Gulf Publishing.
Pletcher, J.L. (2002). Improvements to reservoir material-balance methods. SPE Reservoir
    Evaluation & Engineering, SPE-75354-PA (weak aquifers give a negative Cole slope;
    the modified Cole plot with formation compressibility).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import InputRangeError
from ..inputs import FieldInputs
from ..prepare.cumulative import cumulative_at_times
from ..prepare.points import PreparedData
from ..pvt.gas import GasFluid, bg_rb_per_mscf, z_factor
from ..stats import t_quantile, t_sf
from ..units import OILFIELD_60F, StandardConditions

#: Assumed water formation volume factor when none is given [rb/stb]; common practice
#: for produced and influx water (its effect on F is small next to G_p B_g).
DEFAULT_BW_RB_PER_STB = 1.0
#: Cole-plot points with less p/z depletion than this are shown but not used for the
#: trend: there E_g is so small that survey noise dominates F/E_g (common practice).
COLE_MIN_DEPLETION_FRAC = 0.02
#: A trend counts only when it moves F/E_g by more than this over the data...
COLE_MATERIAL_CHANGE_FRAC = 0.01
#: ...and is significant at this level (two-sided t-test on the slope).
COLE_SIGNIFICANCE = 0.05
#: "flat" needs the 95 % interval of the change within ± this; wider is "undetermined".
COLE_FLAT_BAND_FRAC = 0.05

COLE_RULE = (
    "trend of F/E_g against G_p by weighted least squares, weights ∝ survey weight × δ² "
    "(δ = 1 − (p/z)/(p_i/z_i), since the noise of F/E_g scales as 1/δ); points with "
    f"δ < {COLE_MIN_DEPLETION_FRAC:.0%} are not used. 'rising'/'falling': slope significant "
    f"(two-sided p < {COLE_SIGNIFICANCE}) and F/E_g changes by more than "
    f"{COLE_MATERIAL_CHANGE_FRAC:.0%} across the G_p range; 'flat': otherwise, when the "
    f"95 % interval of that change lies within ±{COLE_FLAT_BAND_FRAC:.0%}; else 'undetermined'"
)


def underground_withdrawal_rb(gp_bscf, bg_rb_per_mscf_, wp_stb=0.0, bw_rb_per_stb=DEFAULT_BW_RB_PER_STB):
    """F = G_p B_g + W_p B_w [rb] (Havlena & Odeh 1963)."""
    return (
        np.asarray(gp_bscf, float) * 1e6 * np.asarray(bg_rb_per_mscf_, float)
        + np.asarray(wp_stb, float) * bw_rb_per_stb
    )


def gas_expansion_rb_per_mscf(bg_rb_per_mscf_, bgi_rb_per_mscf: float):
    """E_g = B_g − B_gi [rb/Mscf]."""
    return np.asarray(bg_rb_per_mscf_, float) - bgi_rb_per_mscf


def rock_water_expansion_rb_per_mscf(p_psia, *, initial_pressure_psia, bgi_rb_per_mscf, ce_per_psi):
    """E_fw = B_gi c_e (p_i − p) [rb/Mscf], c_e = (c_w S_wi + c_f)/(1 − S_wi) [1/psi]."""
    return bgi_rb_per_mscf * ce_per_psi * (initial_pressure_psia - np.asarray(p_psia, float))


@dataclass(frozen=True)
class HavlenaOdehTerms:
    """The material-balance terms at a set of pressures (one entry per point)."""

    p_psia: np.ndarray
    gp_bscf: np.ndarray
    z_factor: np.ndarray
    bg_rb_per_mscf: np.ndarray
    bgi_rb_per_mscf: float
    f_rb: np.ndarray  # underground withdrawal
    eg_rb_per_mscf: np.ndarray
    efw_rb_per_mscf: np.ndarray
    ce_per_psi: float
    initial_pressure_psia: float

    @property
    def et_rb_per_mscf(self) -> np.ndarray:
        """E_t = E_g + E_fw."""
        return self.eg_rb_per_mscf + self.efw_rb_per_mscf

    @property
    def depletion_frac(self) -> np.ndarray:
        """δ = 1 − (p/z)/(p_i/z_i) = E_g/B_g."""
        return self.eg_rb_per_mscf / self.bg_rb_per_mscf


def havlena_odeh_terms(
    p_psia,
    gp_bscf,
    *,
    t_degF: float,
    initial_pressure_psia: float,
    fluid: GasFluid | None = None,
    z=None,
    initial_z: float | None = None,
    z_method: str = "dak",
    wp_stb=0.0,
    bw_rb_per_stb: float = DEFAULT_BW_RB_PER_STB,
    ce_per_psi: float = 0.0,
    conditions: StandardConditions = OILFIELD_60F,
) -> HavlenaOdehTerms:
    """F, E_g and E_fw at each pressure.

    Parameters
    ----------
    p_psia, gp_bscf : arrays
        Average reservoir pressure [psia] and cumulative (wet) gas [Bscf] at each point.
    t_degF, initial_pressure_psia : float
        Reservoir temperature [degF] and initial pressure [psia].
    fluid, z_method
        Used to compute z by :func:`..pvt.gas.z_factor` when ``z``/``initial_z`` are not given.
    z, initial_z
        z at the points and at p_i (e.g. from a lab table, as prepared).
    wp_stb, bw_rb_per_stb : water produced [stb] and its formation volume factor [rb/stb].
    ce_per_psi : effective rock and connate-water compressibility [1/psi].
    """
    p = np.asarray(p_psia, float)
    gp = np.asarray(gp_bscf, float)
    if p.shape != gp.shape or p.ndim != 1:
        raise ValueError("p_psia and gp_bscf must be 1-D arrays of equal length")
    if ce_per_psi < 0:
        raise InputRangeError("the effective compressibility must not be negative")
    if z is None or initial_z is None:
        if fluid is None:
            raise ValueError("give either z and initial_z, or the fluid to compute them")
        z = z_factor(p, t_degF, fluid, z_method)
        initial_z = float(z_factor(initial_pressure_psia, t_degF, fluid, z_method))
    z = np.asarray(z, float)
    bg = bg_rb_per_mscf(p, t_degF, z, conditions)
    bgi = float(bg_rb_per_mscf(initial_pressure_psia, t_degF, initial_z, conditions))
    return HavlenaOdehTerms(
        p_psia=p,
        gp_bscf=gp,
        z_factor=z,
        bg_rb_per_mscf=bg,
        bgi_rb_per_mscf=bgi,
        f_rb=underground_withdrawal_rb(gp, bg, wp_stb, bw_rb_per_stb),
        eg_rb_per_mscf=gas_expansion_rb_per_mscf(bg, bgi),
        efw_rb_per_mscf=rock_water_expansion_rb_per_mscf(
            p, initial_pressure_psia=initial_pressure_psia, bgi_rb_per_mscf=bgi, ce_per_psi=ce_per_psi
        ),
        ce_per_psi=float(ce_per_psi),
        initial_pressure_psia=float(initial_pressure_psia),
    )


@dataclass(frozen=True)
class ColeTrend:
    """The fitted trend of a Cole plot and what it means."""

    direction: str  # "rising" | "falling" | "flat" | "undetermined"
    n_points: int
    slope: float  # d(F/E_g)/dG_p [Bscf per Bscf]
    slope_se: float
    intercept_bscf: float
    t_statistic: float
    p_value: float  # two-sided, H0: slope = 0
    change_frac: float  # slope x G_p range / weighted mean F/E_g
    change_ci_frac: tuple[float, float]  # 95 % interval of change_frac
    rule: str = COLE_RULE


@dataclass(frozen=True)
class ColePlot:
    modified: bool  # True: F/(E_g + E_fw)
    gp_bscf: np.ndarray
    ratio_bscf: np.ndarray  # F/E_g or F/E_t, NaN where undefined
    used: np.ndarray  # bool: used for the trend
    trend: ColeTrend
    notes: tuple[str, ...] = ()


def cole_plot(terms: HavlenaOdehTerms, *, modified: bool = False, weights=None) -> ColePlot:
    """F/E_g (or F/(E_g + E_fw)) against G_p with its trend (rule in :data:`COLE_RULE`).

    Parameters
    ----------
    terms : HavlenaOdehTerms
    modified : bool
        Use E_t = E_g + E_fw (Pletcher 2002's modified Cole plot).
    weights : array, optional
        Relative survey weights (1/variance of p/z); 1 when omitted.
    """
    gp = terms.gp_bscf
    expansion = terms.et_rb_per_mscf if modified else terms.eg_rb_per_mscf
    delta = terms.depletion_frac
    w_survey = np.ones_like(gp) if weights is None else np.asarray(weights, float)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(expansion > 0, terms.f_rb / expansion / 1e6, np.nan)
    used = np.isfinite(ratio) & (delta >= COLE_MIN_DEPLETION_FRAC) & (w_survey > 0)
    notes = []
    n_low = int(np.sum(np.isfinite(ratio) & (delta < COLE_MIN_DEPLETION_FRAC)))
    if n_low:
        notes.append(
            f"{n_low} point(s) with less than {COLE_MIN_DEPLETION_FRAC:.0%} p/z depletion are shown "
            "but not used for the trend: there E_g is so small that survey noise dominates F/E_g"
        )
    trend = _cole_trend(gp[used], ratio[used], w_survey[used] * delta[used] ** 2)
    return ColePlot(modified, gp, ratio, used, trend, tuple(notes))


def _cole_trend(x, y, w) -> ColeTrend:
    n = int(x.size)
    nan = float("nan")
    undetermined = ColeTrend("undetermined", n, nan, nan, nan, nan, nan, nan, (nan, nan))
    if n < 3 or np.ptp(x) <= 0 or not w.sum() > 0:
        return undetermined
    sw = w.sum()
    xm, ym = (w * x).sum() / sw, (w * y).sum() / sw
    sxx = (w * (x - xm) ** 2).sum()
    if not (sxx > 0 and ym != 0 and np.isfinite(sxx) and np.isfinite(ym)):  # no spread that counts
        return undetermined
    slope = (w * (x - xm) * (y - ym)).sum() / sxx
    intercept = ym - slope * xm
    dof = n - 2
    s2 = (w * (y - intercept - slope * x) ** 2).sum() / dof
    se = float(np.sqrt(s2 / sxx))
    scale = np.ptp(x) / ym
    change = slope * scale
    tq = t_quantile(0.975, dof)
    ci = (change - tq * se * scale, change + tq * se * scale)
    if se > 0:
        t_stat = slope / se
        p_value = float(2.0 * t_sf(abs(t_stat), dof))
    else:  # an exact line
        t_stat = np.inf if slope else 0.0
        p_value = 0.0 if slope else 1.0
    significant = p_value < COLE_SIGNIFICANCE
    if significant and change > COLE_MATERIAL_CHANGE_FRAC:
        direction = "rising"
    elif significant and change < -COLE_MATERIAL_CHANGE_FRAC:
        direction = "falling"
    elif ci[0] >= -COLE_FLAT_BAND_FRAC and ci[1] <= COLE_FLAT_BAND_FRAC:
        direction = "flat"
    else:
        direction = "undetermined"
    return ColeTrend(
        direction,
        n,
        float(slope),
        se,
        float(intercept),
        float(t_stat),
        p_value,
        float(change),
        (float(ci[0]), float(ci[1])),
    )


def field_effective_compressibility_per_psi(inputs: FieldInputs) -> float:
    """c_e used in E_fw: the engineer's given value when the overpressure mode is "given", else 0."""
    ch = inputs.choices
    if ch.overpressure_mode == "given" and ch.effective_compressibility_per_psi:
        return float(ch.effective_compressibility_per_psi)
    return 0.0


def produced_water_is_liquid(inputs: FieldInputs) -> bool:
    """True when produced water belongs in F as W_p B_w (not already counted as gas by prepare)."""
    return inputs.production_water_stb is not None and not inputs.choices.water_vapour_correction


def field_havlena_odeh_terms(
    inputs: FieldInputs, prepared: PreparedData, *, bw_rb_per_stb: float = DEFAULT_BW_RB_PER_STB
) -> HavlenaOdehTerms:
    """Havlena-Odeh terms at a field's included surveys, with z as prepared."""
    pts = [p for p in prepared.points if p.included]
    t = np.array([p.t_days for p in pts])
    wp = np.zeros(t.size)
    if produced_water_is_liquid(inputs) and t.size:
        wp = cumulative_at_times(t, prepared.production_end_t_days, inputs.production_water_stb)
    return havlena_odeh_terms(
        np.array([p.p_datum_psia for p in pts]),
        np.array([p.gp_bscf for p in pts]),
        t_degF=inputs.reservoir_temperature_degF,
        initial_pressure_psia=inputs.initial_pressure_psia,
        z=np.array([p.z_factor for p in pts]),
        initial_z=prepared.initial_z,
        wp_stb=wp,
        bw_rb_per_stb=bw_rb_per_stb,
        ce_per_psi=field_effective_compressibility_per_psi(inputs),
        conditions=inputs.standard_conditions,
    )


def field_cole_plots(inputs: FieldInputs, prepared: PreparedData) -> tuple[ColePlot, ColePlot | None]:
    """The Cole plot of a field's included surveys, and its modified form when c_e > 0."""
    terms = field_havlena_odeh_terms(inputs, prepared)
    weights = np.array([p.weight for p in prepared.points if p.included])
    plain = cole_plot(terms, weights=weights)
    modified = cole_plot(terms, modified=True, weights=weights) if terms.ce_per_psi > 0 else None
    return plain, modified
