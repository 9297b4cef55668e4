"""Factories for test data (invented; for wiring tests, never for numerical checks)."""

from __future__ import annotations

import datetime as dt
import itertools

import numpy as np

from server.db.models import (
    Asset,
    Field,
    FieldAnalysisSettings,
    Fluid,
    PressureSurvey,
    ProductionMonth,
    VolumetricEstimate,
    Well,
    WellTest,
)
from server.engine.pvt.gas import GasFluid
from server.synthetic.schedule import month_starts
from server.synthetic.tank import TankSpec, simulate

_n = itertools.count(1)


def make_field(
    session,
    *,
    name=None,
    wells=("W-1", "W-2"),
    asset="Test Asset",
    pi_psia=5000.0,
    t_degF=200.0,
    gravity=0.65,
    datum_ft=10000.0,
    abandonment_psia=1000.0,
) -> Field:
    a = session.query(Asset).filter_by(name=asset).one_or_none() or Asset(name=asset, basin="Test Basin")
    f = Field(
        asset=a,
        name=name or f"Field {next(_n)}",
        datum_depth_ft=datum_ft,
        reservoir_temperature_degF=t_degF,
        initial_pressure_psia=pi_psia,
        abandonment_pressure_psia=abandonment_psia,
    )
    session.add(f)
    session.add(Fluid(field=f, gas_gravity=gravity))
    session.add(FieldAnalysisSettings(field=f))
    for w in wells:
        session.add(Well(field=f, name=w, gauge_reference_depth_ft=datum_ft))
    session.add(
        VolumetricEstimate(
            field=f,
            estimate_date=dt.date(2009, 1, 1),
            giip_low_bscf=80,
            giip_best_bscf=100,
            giip_high_bscf=125,
        )
    )
    session.flush()
    return f


def add_volumetric_history(
    session,
    field: Field,
    *,
    giip_bscf=100.0,
    start=dt.date(2010, 1, 1),
    end=dt.date(2016, 12, 1),
    rate_mscf_d=20000.0,
    survey_every_months=6,
):
    """Monthly production from the first well and noise-free surveys on it."""
    wells = sorted(field.wells, key=lambda w: w.name)
    months = month_starts(start, end)
    t = np.cumsum([30.4375] * len(months))
    spec = TankSpec(
        giip_bscf,
        field.initial_pressure_psia,
        field.reservoir_temperature_degF,
        GasFluid(field.fluid.gas_gravity),
    )
    hist = simulate(spec, t, np.full(len(months), rate_mscf_d))
    for k, m in enumerate(months):
        session.add(ProductionMonth(well_id=wells[0].id, month=m, gas_mscf=rate_mscf_d * 30.4375))
        if k % survey_every_months == 0:
            nxt = months[k + 1] if k + 1 < len(months) else m
            session.add(
                PressureSurvey(
                    well_id=wells[0].id,
                    survey_date=nxt,
                    pressure_psia=round(float(hist.p1_psia[k]), 2),
                    gauge_depth_ft=field.datum_depth_ft,
                )
            )
    session.flush()
    return hist


def add_well_test(session, well_id: int, *, test_date: dt.date, static_pressure_psia: float, points) -> None:
    """A multi-rate well test of one day: ``points`` are (rate [Mscf/d], flowing bottom-hole
    pressure [psia]) pairs."""
    for q, pwf in points:
        session.add(
            WellTest(
                well_id=well_id,
                test_date=test_date,
                rate_mscf_per_day=q,
                flowing_bhp_psia=pwf,
                static_pressure_psia=static_pressure_psia,
            )
        )


def field_with_estimate(db, name: str = "Upland", **field_kwargs) -> int:
    """A field with a volumetric history and its computed estimate; returns its id."""
    from server.services.jobs import queue as jobs
    from server.services.jobs import runner

    with db.session() as s:
        f = make_field(s, name=name, **field_kwargs)
        add_volumetric_history(s, f)
        jobs.enqueue_field_recompute(s, [f.id], reason="test")
        fid = f.id
    runner.drain(db)
    return fid
