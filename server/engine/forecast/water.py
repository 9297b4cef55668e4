"""Produced water in the forecast: the water-gas ratio (WGR) history carried forward.

The rule (common practice for a decline or water forecast from a ratio history; the numbers
below are this project's choices):

1. **trend**: over the production periods that end in the last ``TREND_WINDOW_DAYS`` (24
   months) and produced gas, the least-squares line of each period's WGR [stb/MMscf] against
   the cumulative separator gas at the period's middle [Bscf]. The trend is clear when there
   are at least ``MIN_TREND_POINTS`` (6) periods and the slope differs from zero at the 5 %
   level (two-sided Student t test on n − 2 degrees of freedom). The forecast WGR is then the
   line, WGR(G_p) = WGR_end + b (G_p − G_p,end), never below zero;
2. **constant**: otherwise, when water was produced in the last 12 months, their ratio
   Σ water / Σ gas held constant (as the condensate-gas ratio);
3. **none**: no water history, or no water in the last 12 months: no water forecast.

Each month's water is ∫ WGR dG_p over the month's gas (exact for the line clipped at zero).
A rising trend extrapolated over decades can overstate water: the line is a statistical
summary of the recent months, not a model of water breakthrough or coning.
"""

from __future__ import annotations

import numpy as np

from ..stats import t_sf
from .types import WaterRule
from .wells import recent_volume_per_day

TREND_WINDOW_DAYS = 2 * 365.25
MIN_TREND_POINTS = 6
SIGNIFICANCE = 0.05


def _slope_test(x: np.ndarray, y: np.ndarray) -> tuple[float, float, float | None]:
    """(intercept, slope, two-sided p-value of the slope) of the least-squares line y = a + b x."""
    n = x.size
    xm, ym = x.mean(), y.mean()
    sxx = float(np.sum((x - xm) ** 2))
    if sxx <= 0.0:
        return float(ym), 0.0, None
    b = float(np.sum((x - xm) * (y - ym)) / sxx)
    a = float(ym - b * xm)
    resid = y - a - b * x
    s2 = float(np.sum(resid**2)) / (n - 2)
    se = (s2 / sxx) ** 0.5
    if se == 0.0:
        return a, b, 0.0 if b != 0.0 else 1.0
    return a, b, float(2.0 * t_sf(abs(b / se), n - 2))


def water_rule(ends_t_days, gas_mscf, water_stb) -> WaterRule:
    """How water follows the gas, from the production history.

    Parameters
    ----------
    ends_t_days : 1-D array
        Ends of the production periods [days since 1970-01-01], ascending.
    gas_mscf : 1-D array
        Separator gas produced in each period [Mscf].
    water_stb : 1-D array or None
        Water produced in each period [stb]; None: no water history.
    """
    if water_stb is None:
        return WaterRule(
            "none", None, None, None, 0, "No water is forecast: the history has no produced water."
        )
    ends = np.asarray(ends_t_days, float)
    gas = np.asarray(gas_mscf, float)
    water = np.asarray(water_stb, float)
    g_recent = recent_volume_per_day(ends, gas)
    w_recent = recent_volume_per_day(ends, water)
    if not (g_recent > 0 and w_recent > 0):
        return WaterRule(
            "none", None, None, None, 0, "No water is forecast: no water was produced in the last 12 months."
        )
    cum_end_bscf = float(np.sum(gas)) / 1e6
    mid_bscf = (np.cumsum(gas) - 0.5 * gas) / 1e6
    sel = (ends > ends[-1] - TREND_WINDOW_DAYS) & (gas > 0)
    x, y = mid_bscf[sel], water[sel] / gas[sel] * 1e3
    constant = w_recent / g_recent * 1e3
    p_value = None
    if x.size >= MIN_TREND_POINTS:
        a, b, p_value = _slope_test(x, y)
        if p_value is not None and p_value < SIGNIFICANCE:
            wgr_end = max(a + b * cum_end_bscf, 0.0)
            return WaterRule(
                "trend",
                wgr_end,
                b,
                p_value,
                int(x.size),
                f"Water follows the trend of the water-gas ratio over the last {x.size} periods: "
                f"{wgr_end:.1f} stb/MMscf at the end of the history, {b:+.2f} stb/MMscf per Bscf produced "
                f"(slope significant, p = {p_value:.2g}); never below zero.",
            )
    why = (
        f"no clear trend over the last {x.size} periods (p = {p_value:.2g})"
        if p_value is not None
        else f"too few periods ({x.size}) to test a trend"
    )
    return WaterRule(
        "constant",
        constant,
        None,
        p_value,
        int(x.size),
        f"Water follows the gas at the last 12 months' water-gas ratio, {constant:.1f} stb/MMscf ({why}).",
    )


def monthly_water_stb(rule: WaterRule | None, cumulative_bscf, gas_bscf, history_bscf: float):
    """Water of each forecast month [stb]: ∫ WGR dG_p over the month (None without a rule).

    ``cumulative_bscf`` is separator gas at each month end (history included), ``gas_bscf`` the
    month's gas and ``history_bscf`` the cumulative at the end of the history.
    """
    if rule is None or rule.method == "none":
        return None
    g1 = np.asarray(cumulative_bscf, float)
    g0 = g1 - np.asarray(gas_bscf, float)
    if rule.method == "constant":
        return rule.wgr_stb_per_mmscf * (g1 - g0) * 1e3
    b = rule.slope_stb_per_mmscf_per_bscf
    a = rule.wgr_stb_per_mmscf - b * history_bscf  # WGR = a + b G_p [stb/MMscf, G_p in Bscf]
    if b == 0.0:
        lo, hi = g0, (g1 if a > 0 else g0)
    elif b > 0:
        lo, hi = np.maximum(g0, -a / b), g1
    else:
        lo, hi = g0, np.minimum(g1, -a / b)
    hi = np.maximum(hi, lo)
    return (a * (hi - lo) + 0.5 * b * (hi * hi - lo * lo)) * 1e3
