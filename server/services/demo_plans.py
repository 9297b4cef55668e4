"""The demo portfolio's field plans (invented): every field a contract rate and an economic
limit; compression on Brackenhold and Hollinsway; one planned well (Gorsewick's east
compartment); a licence that ends while Lowmarsh Deep still produces well above its economic
limit; Cindervale with no economic limit (it produces on to the forecast's horizon). So the
demo's forecasts show the ways production stops: the economic limit (most fields), the
abandonment pressure (Brackenhold, whose compression lowers the flowing pressure below it), the
licence end (Lowmarsh Deep) and the horizon (Cindervale). Dunmarrow has too little depletion for
material balance: its forecast runs a closed tank from its volumetric estimate.

Fields not named here (the benchmark's variants) get the default: their plateau rate as the
contract rate and an economic limit of 6 % of it (a rule of thumb for the demo only)."""

from __future__ import annotations

import datetime as dt

from sqlalchemy.orm import Session

from ..db.models import FieldPlan, PlannedWell

DEFAULT_ECONOMIC_FRAC = 0.06
#: name -> the plan's values besides the contract rate (Mscf/d, psia, dates).
DEMO_PLANS: dict[str, dict] = {
    "Amberlode": {"economic_limit_mscf_per_day": 2500.0},
    "Brackenhold": {
        "economic_limit_mscf_per_day": 1500.0,
        "min_flowing_bhp_psia": 1100.0,
        "compression_start_date": dt.date(2029, 1, 1),
        "compression_min_flowing_bhp_psia": 450.0,
    },
    "Cindervale": {"economic_limit_mscf_per_day": 0.0},
    "Dunmarrow": {"economic_limit_mscf_per_day": 2000.0},
    "Emberline": {"economic_limit_mscf_per_day": 1500.0, "min_flowing_bhp_psia": 2200.0},
    "Fallowmere": {"economic_limit_mscf_per_day": 1500.0},
    "Gorsewick": {"economic_limit_mscf_per_day": 1200.0},
    "Hollinsway": {
        "economic_limit_mscf_per_day": 2000.0,
        "min_flowing_bhp_psia": 1500.0,
        "compression_start_date": dt.date(2028, 7, 1),
        "compression_min_flowing_bhp_psia": 600.0,
    },
    "Ivorcombe": {"economic_limit_mscf_per_day": 1300.0, "uptime_frac": 0.93},
    "Juniper Knoll": {"economic_limit_mscf_per_day": 1000.0, "uptime_frac": 0.9},
    "Kettlebrook": {"economic_limit_mscf_per_day": 1100.0},
    "Lowmarsh Deep": {"economic_limit_mscf_per_day": 5000.0, "licence_end_date": dt.date(2036, 12, 31)},
}
#: field name -> its planned wells (name, start, compartment, C [Mscf/d/psi^2n], n).
DEMO_PLANNED_WELLS: dict[str, tuple] = {
    "Gorsewick": (("GRW-4", dt.date(2027, 7, 1), "East", 0.004, 0.82),),
}


def add_demo_plan(session: Session, field_id: int, name: str, plateau_mmscf_d: float) -> None:
    """The field's plan (and planned wells) from the tables above, in the caller's transaction."""
    plateau = plateau_mmscf_d * 1000.0
    values = {"economic_limit_mscf_per_day": round(DEFAULT_ECONOMIC_FRAC * plateau, 1)}
    values |= DEMO_PLANS.get(name, {})
    session.add(FieldPlan(field_id=field_id, plateau_rate_mscf_per_day=plateau, **values))
    for well, start, compartment, c, n in DEMO_PLANNED_WELLS.get(name, ()):
        session.add(
            PlannedWell(
                field_id=field_id,
                name=well,
                start_date=start,
                compartment=compartment,
                c_mscf_per_day_psi2n=c,
                n=n,
            )
        )
