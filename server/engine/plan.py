"""The forecast's inputs: multi-rate well tests and the field plan (a plain input type).

Kept at the top of the engine, beside :mod:`.inputs`, which carries them; the forecast
itself is :mod:`.forecast`. Times are days since 1970-01-01, rates Mscf/d of separator gas,
pressures psia.
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class WellTest:
    """One stabilised flow period of a multi-rate (back-pressure) test."""

    well: str
    t_days: float
    rate_mscf_per_day: float
    flowing_bhp_psia: float
    static_pressure_psia: float


@dataclass(frozen=True)
class PlannedWell:
    name: str
    start_t_days: float
    compartment: str | None
    c_mscf_per_day_psi2n: float  # back-pressure coefficient C of q = C (p^2 - pwf^2)^n
    n: float  # back-pressure exponent, 0.5 (turbulent) to 1 (laminar)


@dataclass(frozen=True)
class FieldPlan:
    """How the field will be produced (per field, edited by the engineer, audited)."""

    plateau_rate_mscf_per_day: float | None = None  # contract or plant rate; None: no limit
    uptime_frac: float = 0.95  # share of calendar time on stream
    min_flowing_bhp_psia: float | None = None  # None: the abandonment pressure's flowing equivalent
    compression_start_t_days: float | None = None
    compression_min_flowing_bhp_psia: float | None = None  # lower minimum once compression runs
    economic_limit_mscf_per_day: float = 0.0  # field rate below which production stops
    licence_end_t_days: float | None = None
    planned_wells: tuple[PlannedWell, ...] = ()
    deliverability_exponent: float = 0.85  # n when C is calibrated from monthly rates (common practice)
    # The back-pressure equation's form: "pressure_squared" q = C (p̄² − p_wf²)^n, or
    # "pseudo_pressure" q = C [m(p̄) − m(p_wf)]^n (forecast/deliverability.py); planned wells'
    # C and n are given in the p² form and stay in it.
    deliverability_form: str = "pressure_squared"
