"""The forecast's contract: well tests, the field plan, deliverability fits and the profiles.

Times are days since 1970-01-01 (the services' timebase), rates Mscf/d of separator gas at
the field's standard conditions unless named otherwise, pressures psia.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..plan import FieldPlan, PlannedWell, WellTest  # noqa: F401  (the forecast's inputs)

STOP_REASONS = ("economic limit", "abandonment pressure", "licence end", "watered out", "horizon")


@dataclass(frozen=True)
class Deliverability:
    """A well's (or the field's) back-pressure fit q = C (p̄² − p_wf²)^n, or in the
    pseudo-pressure form q = C [m(p̄) − m(p_wf)]^n (``form``)."""

    well: str  # a well name, or "" for the field as a whole
    c_mscf_per_day_psi2n: float  # C; in Mscf/d/(psi²/cP)^n when form is "pseudo_pressure"
    n: float
    source: str  # for people: "well test of 2021-03-04 (4 rates)", "calibrated from the last 12 months"
    n_points: int
    rms_log_rate: float | None = None  # scatter of ln q about the fit
    form: str = "pressure_squared"  # or "pseudo_pressure" (deliverability.FORMS)


@dataclass(frozen=True)
class Profile:
    """One case's monthly forecast from the month after the last production month."""

    case: str  # "low", "best", "high"
    giip_bscf: float  # the basis GIIP this case was run with
    month_end_t_days: np.ndarray
    rate_mscf_per_day: np.ndarray  # average field rate in the month (calendar, uptime applied)
    gas_bscf: np.ndarray  # produced in the month
    cumulative_bscf: np.ndarray  # field cumulative at month end, history included
    pressure_psia: np.ndarray  # average reservoir pressure at month end
    condensate_stb: np.ndarray | None
    end_t_days: float
    stop_reason: str  # one of STOP_REASONS
    eur_bscf: float  # cumulative at the stop (the commercial EUR)
    remaining_bscf: float  # from the end of the history
    water_stb: np.ndarray | None = None  # produced water in the month (forecast.water rule)


@dataclass(frozen=True)
class WaterRule:
    """How produced water follows the gas (engine/forecast/water.py).

    ``method``: "trend" (WGR linear in cumulative separator gas, a significant least-squares
    slope over the recent months), "constant" (the recent WGR) or "none" (no water forecast).
    WGR in stb/MMscf of separator gas, cumulative gas in Bscf.
    """

    method: str
    wgr_stb_per_mmscf: float | None  # at the end of the history (trend: the line's value there)
    slope_stb_per_mmscf_per_bscf: float | None  # d(WGR)/d(G_p) of the trend
    p_value: float | None  # two-sided t test of the slope (None: too few points to test)
    n_points: int  # months in the trend window
    sentence: str


@dataclass(frozen=True)
class Forecast:
    basis_model: str  # the headline basis the pressures come from
    deliverability: tuple[Deliverability, ...]
    profiles: tuple[Profile, ...]  # low, best, high
    notes: tuple[str, ...] = ()
    deliverability_form: str = "pressure_squared"  # the plan's form (planned wells stay in p²)
    water: WaterRule | None = None

    def case(self, name: str) -> Profile | None:
        return next((p for p in self.profiles if p.case == name), None)
