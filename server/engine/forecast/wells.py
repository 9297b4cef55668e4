"""The wells a forecast produces from: tested, calibrated and planned, with their start times.

* A well with a multi-rate test gets the test's C and n (:func:`.deliverability.fit_back_pressure`);
  C is taken as constant through the well's life (common practice; skin and liquid loading
  change it in reality).
* Every other well that produced in the last 12 months (``production_by_well``), or the
  field as one "field" well when production is not split by well and no well was tested,
  gets C calibrated from its recent on-stream rate (calendar rate / uptime), the average
  datum pressure of the included surveys of the same 12 months (the well's own, else all)
  and the plan's minimum flowing pressure, with n = ``plan.deliverability_exponent``.
* Planned wells add their C and n from their start date.

With the plan's pseudo-pressure form (``pseudo_pressure``, the field's m(p) table) tests are
fitted and wells calibrated with m(p̄) − m(p_wf) in place of p̄² − p_wf²; planned wells'
C and n are given in the p² form and stay in it.

Rates Mscf/d of separator gas, pressures psia, times days since 1970-01-01.
"""

from __future__ import annotations

import math
from collections import defaultdict

import numpy as np

from ..errors import InputRangeError
from ..inputs import FieldInputs
from ..plan import FieldPlan
from ..prepare.cumulative import cumulative_at_times, production_start_t_days
from ..prepare.points import PreparedData
from .deliverability import calibrate, date_text, fit_back_pressure
from .types import Deliverability

WINDOW_DAYS = 365.25


def recent_volume_per_day(ends, volume, window_days: float = WINDOW_DAYS) -> float:
    """Average of a per-period volume over the last ``window_days`` of production [unit/day]."""
    ends = np.asarray(ends, float)
    t_end = float(ends[-1])
    start = max(t_end - window_days, production_start_t_days(ends))
    got = cumulative_at_times(np.array([start, t_end]), ends, np.asarray(volume, float))
    return float(got[1] - got[0]) / max(t_end - start, 1.0)


def recent_survey_pressure(prepared: PreparedData, well: str | None) -> float | None:
    """Mean datum pressure of the included surveys in the last 12 months of production [psia]."""
    t_end = float(prepared.production_end_t_days[-1])
    pts = [p for p in prepared.points if p.included and p.t_days >= t_end - WINDOW_DAYS]
    own = [p.p_datum_psia for p in pts if p.well == well] if well else []
    use = own or [p.p_datum_psia for p in pts]
    return float(np.mean(use)) if use else None


def field_wells(
    inputs: FieldInputs,
    prepared: PreparedData,
    plan: FieldPlan,
    pwf_psia: float,
    model_p_psia: float,
    pseudo_pressure=None,
) -> tuple[tuple[tuple[Deliverability, float], ...], list[str]]:
    """((deliverability, start t_days), ...) of every well the forecast produces, and notes."""
    notes: list[str] = []
    out: list[tuple[Deliverability, float]] = []
    by_test = defaultdict(list)
    for t in inputs.well_tests:
        by_test[t.well].append(t)
    for well in sorted(by_test):
        d, note = fit_back_pressure(
            by_test[well], default_n=plan.deliverability_exponent, pseudo_pressure=pseudo_pressure
        )
        out.append((d, -math.inf))
        if note:
            notes.append(note)
    ends = inputs.production_end_t_days
    u = plan.uptime_frac
    n = plan.deliverability_exponent
    if inputs.production_by_well:
        candidates = [(w, np.asarray(v, float)) for w, v in inputs.production_by_well if w not in by_test]
    elif not by_test:
        candidates = [("field", np.asarray(inputs.production_gas_mscf, float))]
    else:
        candidates = []
        notes.append(
            "production is not split by well, so the forecast produces from the tested wells only "
            f"({', '.join(sorted(by_test))})"
        )
    for well, volume in candidates:
        rate = recent_volume_per_day(ends, volume)
        if rate <= 0:
            continue  # not producing: left out
        p = recent_survey_pressure(prepared, None if well == "field" else well)
        where = "the surveys of the last 12 months"
        if p is None:
            p, where = model_p_psia, "the basis model's pressure at the end of the history (no recent survey)"
        try:
            d = calibrate(
                "" if well == "field" else well,
                rate / u,
                p,
                pwf_psia,
                n,
                f"calibrated from the last 12 months' rate ({rate:,.0f} Mscf/d) and {where}, n = {n:g}"
                + (", in m(p)" if pseudo_pressure is not None else ""),
                pseudo_pressure,
            )
        except InputRangeError as exc:
            notes.append(f"not calibrated: {exc}")
            continue
        out.append((d, -math.inf))
    for w in plan.planned_wells:
        if not (w.c_mscf_per_day_psi2n > 0 and 0.5 <= w.n <= 1.0):
            raise InputRangeError(
                f"planned well {w.name}: C must be positive and n within 0.5-1.0 "
                f"(got C {w.c_mscf_per_day_psi2n}, n {w.n})"
            )
        source = f"planned well from {date_text(w.start_t_days)}" + (
            f" in {w.compartment}" if w.compartment else ""
        )
        out.append((Deliverability(w.name, w.c_mscf_per_day_psi2n, w.n, source, 0), w.start_t_days))
    if not out:
        raise InputRangeError("no well can deliver: no test, no recent production and no planned well")
    return tuple(out), notes
