"""One case's monthly profile: the rate the wells deliver, month by month, to the stop.

Each calendar month (from the end of the last production month; month ends are the first
day of the next month, as production periods are stored) the field rate is

    q = U · min(q_plateau, Σ_wells C (p̄² − p_wf,min²)^n)            [Mscf/d, calendar]

(or C [m(p̄) − m(p_wf,min)]^n for the wells in the pseudo-pressure form)

with U the uptime fraction and p̄ the month's mid-point average pressure (p_start + p_end)/2
of the basis model stepped with the month's withdrawal (solved for q: second order in the
step, where the start-of-month pressure would be first order). p_wf,min is the plan's
minimum flowing pressure, the compression minimum from the month compression starts.
Production stops, whichever comes first, at:

* the **economic limit**: the month's rate would fall below the plan's limit (the month is
  not produced); also when the wells can no longer flow against p_wf,min;
* the **abandonment pressure**: the month is cut where the average pressure reaches it;
* the **licence end**: the month is cut at the licence end;
* **watered out** (aquifer models): water has invaded 65 % of the gas pore volume
  (:data:`..aquifer.extend.WATERED_OUT_PV_FRAC`), at the end of that month;
* the **horizon**: 50 years of forecast (:data:`..modelfit.HORIZON_YEARS`).

Volumes are separator gas [Bscf]; the model withdraws the wet-gas equivalent (``wet_per_sep``).
"""

from __future__ import annotations

import datetime as dt
from bisect import bisect_right
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq

from ..aquifer.extend import WATERED_OUT_PV_FRAC
from ..modelfit import HORIZON_YEARS
from ..plan import FieldPlan
from .deliverability import potential_mscf_per_day
from .month_rate import MonthSeed, month_rate_mscf_per_day
from .steppers import Stepper
from .types import Deliverability, Profile, WaterRule
from .water import monthly_water_stb

_EPOCH = dt.date(1970, 1, 1)


def month_ends_t_days(t_last_days: float, years: float = HORIZON_YEARS) -> np.ndarray:
    """First days of the months after ``t_last_days`` (exclusive month ends) [days since 1970]."""
    day = np.datetime64(int(np.floor(t_last_days + 1e-9)), "D")
    months = day.astype("datetime64[M]") + np.arange(1, int(round(years * 12)) + 1)
    return months.astype("datetime64[D]").astype(np.int64).astype(float)


@dataclass(frozen=True)
class CaseSettings:
    """What every case of one field shares."""

    plan: FieldPlan
    t_last_days: float  # end of the last production month
    month_ends_t_days: np.ndarray
    cumulative_separator_gas_bscf: float  # at the end of the history
    wet_per_sep: float  # model gas per separator gas (1 without condensate correction)
    cgr_stb_per_mscf: float | None  # recent condensate-gas ratio
    abandonment_pressure_psia: float
    min_flowing_bhp_psia: float  # before compression
    wells: tuple[tuple[Deliverability, float], ...]  # (fit, start t_days; -inf for existing wells)
    pseudo_pressure: object = None  # the field's m(p) table, for wells in the pseudo-pressure form
    water: WaterRule | None = None  # how produced water follows the gas

    def pwf_psia(self, t_days: float) -> float:
        p = self.plan
        start, pwf = p.compression_start_t_days, p.compression_min_flowing_bhp_psia
        if start is not None and pwf is not None and t_days >= start:
            return pwf
        return self.min_flowing_bhp_psia

    def active(self, t_days: float) -> tuple[tuple[float, float, str], ...]:
        """(C, n, form) of the wells on stream at ``t_days``."""
        return tuple((d.c_mscf_per_day_psi2n, d.n, d.form) for d, start in self.wells if start <= t_days)


def _field_rate(s: CaseSettings, pwf: float, wells):
    """q(p̄) = U min(plateau, Σ C (p̄² − p_wf²)^n) of the wells on stream in the month [Mscf/d]."""
    u, plateau = s.plan.uptime_frac, s.plan.plateau_rate_mscf_per_day
    m_of_p = s.pseudo_pressure
    if m_of_p is None or not any(form == "pseudo_pressure" for _, _, form in wells):
        wells, m_of_p = tuple((c, n) for c, n, _ in wells), None  # all in the p² form: (C, n) pairs

    def rate(p_mid: float) -> float:
        d = potential_mscf_per_day(wells, p_mid, pwf, m_of_p)
        return u * (d if plateau is None else min(plateau, d))

    return rate


def run_case(case: str, giip_bscf: float, stepper: Stepper, s: CaseSettings) -> Profile:
    """The monthly profile of one case (low, best or high) from the stepper's state."""
    plan = s.plan
    licence = plan.licence_end_t_days
    p_ab = s.abandonment_pressure_psia
    wet = s.wet_per_sep * 1e3  # scf of model gas per Mscf of separator gas
    rows: list[tuple[float, float, float, float]] = []  # month end, rate, gas [Mscf], pressure
    t_a, reason, end_t = s.t_last_days, "horizon", None
    seed = MonthSeed()
    starts = sorted(start for _, start in s.wells)
    rates = {}  # (p_wf, wells on stream) -> the month's rate function; wells only come on stream
    for t_b in s.month_ends_t_days.tolist():  # floats: numpy scalars would slow every step
        if licence is not None and licence <= t_a + 1e-9:
            reason, end_t = "licence end", t_a
            break
        if stepper.p_psia <= p_ab:
            reason, end_t = "abandonment pressure", t_a
            break
        if stepper.invaded_frac >= WATERED_OUT_PV_FRAC:
            reason, end_t = "watered out", t_a
            break
        days = min(t_b, licence) - t_a if licence is not None else t_b - t_a
        pwf, t_mid = s.pwf_psia(t_a), t_a + 0.5 * (t_b - t_a)
        key = (pwf, bisect_right(starts, t_mid))  # how many wells are on stream
        rate = rates.get(key)
        if rate is None:
            rate = rates[key] = _field_rate(s, pwf, s.active(t_mid))
        q = month_rate_mscf_per_day(stepper, rate, pwf, days, wet, seed)
        if q <= 0 or q < plan.economic_limit_mscf_per_day:
            reason, end_t = "economic limit", t_a
            break
        gas = q * days
        if stepper.trial(gas * wet, days) <= p_ab:  # cut the month where the pressure reaches p_a
            gas = brentq(lambda x, d=days: stepper.trial(x * wet, d) - p_ab, 0.0, gas, xtol=1e-9 * gas)
            reason, end_t = "abandonment pressure", t_a + gas / q
        stepper.commit(gas * wet, days)
        rows.append((t_b, gas / (t_b - t_a), gas, stepper.p_psia))
        if end_t is not None:
            break
        if stepper.invaded_frac >= WATERED_OUT_PV_FRAC:
            reason, end_t = "watered out", t_b
            break
        if licence is not None and licence < t_b:
            reason, end_t = "licence end", licence
            break
        t_a = t_b
    if end_t is None:
        end_t = t_a
    arr = np.array(rows, float).reshape(-1, 4)
    gas_bscf = arr[:, 2] / 1e6
    cum = s.cumulative_separator_gas_bscf + np.cumsum(gas_bscf)
    eur = float(cum[-1]) if cum.size else s.cumulative_separator_gas_bscf
    return Profile(
        case=case,
        giip_bscf=float(giip_bscf),
        month_end_t_days=arr[:, 0],
        rate_mscf_per_day=arr[:, 1],
        gas_bscf=gas_bscf,
        cumulative_bscf=cum,
        pressure_psia=arr[:, 3],
        condensate_stb=None if s.cgr_stb_per_mscf is None else arr[:, 2] * s.cgr_stb_per_mscf,
        end_t_days=float(end_t),
        stop_reason=reason,
        eur_bscf=eur,
        remaining_bscf=eur - s.cumulative_separator_gas_bscf,
        water_stb=monthly_water_stb(s.water, cum, gas_bscf, s.cumulative_separator_gas_bscf),
    )


def stop_sentence(p: Profile, s: CaseSettings) -> str:
    """Why and when a case stops, in words."""
    day = (_EPOCH + dt.timedelta(days=round(p.end_t_days))).isoformat()
    return f"{p.case}: stops {day} ({p.stop_reason}), {p.remaining_bscf:.2f} Bscf remaining"


def cases_of(low: float | None, best: float, high: float | None) -> Sequence[tuple[str, float]]:
    """(case, GIIP) of the cases that have a GIIP (an unbounded high case is left out)."""
    return [(c, g) for c, g in (("low", low), ("best", best), ("high", high)) if g is not None and g > 0]
