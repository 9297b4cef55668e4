"""Two years of reviews with every kind of movement, for the movements dashboard's tests (service,
API, browser). Invented fields; the numbers below are worked by hand from these inputs.

Year-end 2024 (approved): remaining = case EUR - gas produced to the date.
  North  Upland      EUR 40/50/60, 1 Bscf a year from 2023      -> 38 / 48 / 58
  North  Lowmoor     forecast EUR 18/22/27, 0.5 Bscf a year 2024 -> 17.5 / 21.5 / 26.5
  South  Southcombe  EUR 10/12/14, produces 0.6 Bscf in 2025 only -> 10 / 12 / 14
  East   Eastfold    EUR 3/4/5, never produces                   -> 3 / 4 / 5
Year-end 2025 (draft), after new estimates for Upland (42/53/63) and Southcombe (9/11/13) and a
new field Newdale (South, EUR 5/6/7, no production):
  Upland 39/50/60, Lowmoor 17/21/26, Southcombe 8.4/10.4/12.4, Eastfold 3/4/5, Newdale 5/6/7.
2P assignments: Upland improved recovery +2, revisions +1; Lowmoor acquisitions +1, revisions -1;
Newdale extensions +6; Southcombe and Eastfold keep the default (the remainder to revisions).
"""

import datetime as dt

from server.services.reserves import reconcile, workflow
from tests.factories import make_field

from .conftest import add_estimate, add_production

YE24, YE25 = dt.date(2024, 12, 31), dt.date(2025, 12, 31)


def build_two_years(session, preparer, approver) -> dict:
    """Returns the reviews and field ids: {"ye24": review, "ye25": review, "fields": {name: id}}."""
    up = make_field(session, name="Upland", asset="North")
    low = make_field(session, name="Lowmoor", asset="North")
    south = make_field(session, name="Southcombe", asset="South")
    east = make_field(session, name="Eastfold", asset="East")
    add_estimate(session, up, eur=(40.0, 50.0, 60.0))
    add_estimate(session, low, eur=(20.0, 25.0, 30.0), forecast_eur=(18.0, 22.0, 27.0))
    add_estimate(session, south, eur=(10.0, 12.0, 14.0))
    add_estimate(session, east, eur=(3.0, 4.0, 5.0))
    add_production(session, up, dt.date(2023, 1, 1), 36, 1e6 / 12)
    add_production(session, low, dt.date(2024, 1, 1), 24, 0.5e6 / 12)
    add_production(session, south, dt.date(2025, 1, 1), 12, 0.05e6)
    ye24 = workflow.create_review(session, preparer, "Year-end 2024", YE24)
    workflow.submit(session, preparer, ye24)
    workflow.approve(session, approver, ye24, "as presented")
    add_estimate(session, up, eur=(42.0, 53.0, 63.0))
    add_estimate(session, south, eur=(9.0, 11.0, 13.0))
    new = make_field(session, name="Newdale", asset="South")
    add_estimate(session, new, eur=(5.0, 6.0, 7.0))
    ye25 = workflow.create_review(session, preparer, "Year-end 2025", YE25)
    for field, values in (
        (up, {"improved_recovery_bscf": 2.0, "revisions_bscf": 1.0}),
        (low, {"acquisitions_bscf": 1.0, "revisions_bscf": -1.0}),
        (new, {"extensions_discoveries_bscf": 6.0, "revisions_bscf": 0.0}),
    ):
        reconcile.assign(session, preparer, ye25, field.id, "2P", values)
    session.flush()
    ids = {f.name: f.id for f in (up, low, south, east, new)}
    return {
        "ye24": ye24,
        "ye25": ye25,
        "fields": ids,
        "assets": {f.name: f.asset_id for f in (up, south, east)},
    }
