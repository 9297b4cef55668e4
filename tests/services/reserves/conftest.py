"""A small portfolio for the reserves services: estimates with a stored basis (and one with a
forecast), monthly production, and three users (two engineers, an approver)."""

import datetime as dt

import pytest

from server.db.models import Estimate, ProductionMonth, User
from server.services.audit import Actor
from tests.factories import make_field


def add_estimate(session, field, *, eur=(40.0, 50.0, 60.0), forecast_eur=None, source="automatic", flags=()):
    """A stored estimate whose detail carries the headline basis (and optionally a forecast)."""
    detail = {
        "basis": {
            "model": "single_tank",
            "title": "Single tank",
            "source": source,
            "giip_bscf": 70.0,
            "giip_low_bscf": 60.0,
            "giip_high_bscf": 80.0,
            "eur_low_bscf": eur[0],
            "eur_bscf": eur[1],
            "eur_high_bscf": eur[2],
        }
    }
    if forecast_eur is not None:
        detail["forecast"] = {
            "basis_model": "single_tank",
            "profiles": [
                {
                    "case": c,
                    "eur_bscf": v,
                    "remaining_bscf": v - 1,
                    "stop_reason": "economic limit",
                    "end_t_days": 9e3,
                }
                for c, v in zip(("low", "best", "high"), forecast_eur, strict=True)
            ],
        }
    e = Estimate(
        field_id=field.id,
        method="headline",
        status="ok",
        message="",
        flags=[dict(f) for f in flags],
        detail=detail,
        inputs_fingerprint=f"fp-{field.id}-{eur[1]}",
        engine_version="t",
        cumulative_gas_bscf=0.0,
    )
    session.add(e)
    session.flush()
    return e


def add_production(session, field, start: dt.date, months: int, gas_mscf: float, condensate_stb: float = 0.0):
    well = sorted(field.wells, key=lambda w: w.name)[0]
    y, m = start.year, start.month
    for _ in range(months):
        session.add(
            ProductionMonth(
                well=well, month=dt.date(y, m, 1), gas_mscf=gas_mscf, condensate_stb=condensate_stb
            )
        )
        y, m = (y + 1, 1) if m == 12 else (y, m + 1)
    session.flush()


def _user(session, name, role):
    u = User(
        username=name,
        display_name=name,
        role=role,
        is_active=True,
        failed_logins=0,
        password_hash="x",
        all_assets=True,
    )
    session.add(u)
    session.flush()
    return Actor(u.id, name)


@pytest.fixture
def people(session):
    return {
        "eng": _user(session, "eng-a", "engineer"),
        "eng2": _user(session, "eng-b", "engineer"),
        "appr": _user(session, "appr-a", "approver"),
        "appr2": _user(session, "appr-b", "approver"),
    }


@pytest.fixture
def portfolio(session):
    """Two fields of one asset: Upland (basis only) and Lowmoor (with a forecast)."""
    up = make_field(session, name="Upland", asset="North")
    low = make_field(session, name="Lowmoor", asset="North")
    add_estimate(session, up, eur=(40.0, 50.0, 60.0))
    add_estimate(session, low, eur=(20.0, 25.0, 30.0), forecast_eur=(18.0, 22.0, 27.0))
    # 1 Bscf a year on Upland from 2023 (30 stb/MMscf), 0.5 on Lowmoor from 2024
    add_production(session, up, dt.date(2023, 1, 1), 36, 1e6 / 12, condensate_stb=30.0 * 1000 / 12)
    add_production(session, low, dt.date(2024, 1, 1), 24, 0.5e6 / 12)
    return {"up": up, "low": low}
