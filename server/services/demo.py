"""The demo portfolio: a dozen invented gas fields in an invented basin.

Every history comes from the forward simulator in :mod:`server.synthetic.tank`, with
survey noise and realistic survey spacing, so the demo shows what the diagnostics are
for: clean volumetric fields, a young field, an overpressured field, aquifer support,
a compartmentalised field whose late well reads near-initial pressure, a rich
condensate field and a field whose gauges sit above the datum. All names are invented.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass, field

import numpy as np
from sqlalchemy import select
from sqlalchemy.orm import Session

from ..db.models import (
    Asset,
    Field,
    FieldAnalysisSettings,
    Fluid,
    PressureSurvey,
    ProductionMonth,
    VolumetricEstimate,
    Well,
)
from ..engine.pvt.gas import GasFluid
from ..synthetic.schedule import Deliverability, days, month_starts, survey_dates
from ..synthetic.tank import (
    FetkovichAquifer,
    PotAquifer,
    SecondTank,
    TankSpec,
    gas_column_pressure_psia,
    simulate,
)
from .demo_plans import add_demo_plan
from .jobs.queue import enqueue_field_recompute

BASIN = "Harrowfen Basin"
CONDENSED_WATER_STB_PER_MMSCF = 1.0
WATER_PRODUCED_SHARE = 0.15  # of the water influx, produced in the same month (rb taken as stb)
LAST_MONTH = dt.date(2026, 10, 1)


@dataclass(frozen=True)
class DemoWell:
    name: str
    online: dt.date
    compartment: str | None = None
    producing: bool = True
    gauge_above_datum_ft: float = 0.0


@dataclass(frozen=True)
class DemoField:
    name: str
    asset: str
    story: str
    start: dt.date
    giip_bscf: float
    pi_psia: float
    t_degF: float
    datum_ft: float
    abandonment_psia: float
    gravity: float
    wells: tuple[DemoWell, ...]
    plateau_mmscf_d: float
    volumetric: tuple[float, float, float]
    co2: float = 0.0
    h2s: float = 0.0
    n2: float = 0.0
    api: float | None = None
    condensate_stb_per_mmscf: float = 0.0
    ce_per_psi: float = 0.0
    aquifer: object | None = None
    second_tank: SecondTank | None = None
    noise_psi: float = 12.0
    survey_every_days: float = 270.0
    outliers: dict[int, float] = field(default_factory=dict)  # survey index -> psi offset
    settings: dict = field(default_factory=dict)


def _w(name, y, m=1, **kw) -> DemoWell:
    return DemoWell(name, dt.date(y, m, 1), **kw)


PORTFOLIO: tuple[DemoField, ...] = (
    DemoField(
        "Amberlode",
        "North Shelf",
        "mature volumetric field, clean data",
        dt.date(2009, 3, 1),
        142.0,
        4650.0,
        195.0,
        9800.0,
        700.0,
        0.64,
        (_w("AMB-1", 2009, 3), _w("AMB-2", 2009, 9), _w("AMB-3", 2011, 5)),
        38.0,
        (118.0, 138.0, 165.0),
    ),
    DemoField(
        "Brackenhold",
        "North Shelf",
        "mid-life volumetric field",
        dt.date(2015, 6, 1),
        86.0,
        4200.0,
        180.0,
        9100.0,
        650.0,
        0.62,
        (_w("BRK-1", 2015, 6), _w("BRK-2", 2016, 2)),
        22.0,
        (70.0, 84.0, 101.0),
    ),
    DemoField(
        "Cindervale",
        "North Shelf",
        "volumetric field with noisy gauges and one bad build-up",
        dt.date(2012, 1, 1),
        64.0,
        3900.0,
        170.0,
        8600.0,
        600.0,
        0.66,
        (_w("CDV-1", 2012, 1), _w("CDV-2", 2013, 7)),
        15.0,
        (52.0, 62.0, 76.0),
        noise_psi=28.0,
        outliers={5: -320.0},
    ),
    DemoField(
        "Dunmarrow",
        "North Shelf",
        "young field, too little depletion to judge",
        dt.date(2025, 4, 1),
        210.0,
        5200.0,
        215.0,
        11200.0,
        800.0,
        0.63,
        (_w("DNM-1", 2025, 4), _w("DNM-2", 2025, 10)),
        30.0,
        (170.0, 205.0, 250.0),
        survey_every_days=150.0,
    ),
    DemoField(
        "Emberline",
        "South Trough",
        "overpressured: 0.66 psi/ft, rock and water expansion",
        dt.date(2020, 6, 1),
        100.0,
        9000.0,
        245.0,
        13600.0,
        1200.0,
        0.65,
        (_w("EMB-1", 2020, 6), _w("EMB-2", 2021, 1), _w("EMB-3", 2022, 4)),
        20.0,
        (85.0, 102.0, 122.0),
        ce_per_psi=14.3e-6,
        settings={"overpressure_mode": "fitted"},
    ),
    DemoField(
        "Fallowmere",
        "South Trough",
        "aquifer-supported: water arrives, p/z flattens",
        dt.date(2010, 7, 1),
        95.0,
        4800.0,
        200.0,
        10200.0,
        900.0,
        0.65,
        (_w("FLW-1", 2010, 7), _w("FLW-2", 2011, 3), _w("FLW-3", 2012, 8)),
        24.0,
        (80.0, 96.0, 114.0),
        aquifer=FetkovichAquifer(wei_rb=6e-6 * 800e6 * 4800, j_rb_per_day_psi=15.0),
    ),
    DemoField(
        "Gorsewick",
        "South Trough",
        "two compartments across a leaky fault; late well reads near-initial",
        dt.date(2011, 5, 1),
        58.0,
        5000.0,
        205.0,
        10500.0,
        850.0,
        0.65,
        (
            _w("GRW-1", 2011, 5, compartment="West"),
            _w("GRW-2", 2012, 2, compartment="West"),
            _w("GRW-3", 2019, 9, compartment="East", producing=False),
        ),
        20.0,
        (82.0, 100.0, 121.0),
        # Pseudo-pressure connection, the form the two-tank fit uses
        # (engine/compartments/multitank_fit.py), so the fitted model can recover this truth;
        # c = 0.0013 scf cP/(d psi^2) is c' = c/(mu z) = 0.06 scf/d/psi^2 at mu z = 0.021 cP
        # (about 4000 psia).
        second_tank=SecondTank(42.0, connection_scf_cp_per_day_psi2=0.0013),
    ),
    DemoField(
        "Hollinsway",
        "South Trough",
        "rich gas condensate (about 110 stb/MMscf)",
        dt.date(2014, 9, 1),
        120.0,
        5600.0,
        230.0,
        11800.0,
        1000.0,
        0.68,
        (_w("HLW-1", 2014, 9), _w("HLW-2", 2015, 3), _w("HLW-3", 2016, 10)),
        34.0,
        (98.0, 118.0, 142.0),
        api=50.0,
        condensate_stb_per_mmscf=110.0,
    ),
    DemoField(
        "Ivorcombe",
        "North Shelf",
        "gauges hung 850 ft above the datum",
        dt.date(2013, 10, 1),
        76.0,
        4400.0,
        190.0,
        9600.0,
        700.0,
        0.64,
        (_w("IVC-1", 2013, 10, gauge_above_datum_ft=850.0), _w("IVC-2", 2014, 6, gauge_above_datum_ft=850.0)),
        21.0,
        (62.0, 75.0, 90.0),
    ),
    DemoField(
        "Juniper Knoll",
        "North Shelf",
        "sour gas (6 % CO2, 2 % H2S), volumetric",
        dt.date(2016, 4, 1),
        54.0,
        4300.0,
        185.0,
        9300.0,
        700.0,
        0.72,
        (_w("JNK-1", 2016, 4), _w("JNK-2", 2017, 1)),
        14.0,
        (44.0, 53.0, 64.0),
        co2=0.06,
        h2s=0.02,
        n2=0.01,
    ),
    DemoField(
        "Kettlebrook",
        "South Trough",
        "weak pot aquifer: small extra support",
        dt.date(2012, 8, 1),
        70.0,
        4700.0,
        198.0,
        10000.0,
        750.0,
        0.64,
        (_w("KTB-1", 2012, 8), _w("KTB-2", 2013, 5)),
        17.0,
        (58.0, 71.0, 85.0),
        aquifer=PotAquifer(ct_wi_rb_per_psi=260.0),
    ),
    DemoField(
        "Lowmarsh Deep",
        "North Shelf",
        "large volumetric field in early plateau",
        dt.date(2020, 2, 1),
        320.0,
        6100.0,
        240.0,
        12900.0,
        1000.0,
        0.62,
        (_w("LMD-1", 2020, 2), _w("LMD-2", 2020, 8), _w("LMD-3", 2021, 6), _w("LMD-4", 2022, 3)),
        85.0,
        (260.0, 315.0, 380.0),
    ),
)


def _gas_equivalent_scf_per_stb(api: float) -> float:
    """133,000 gamma_o / M_o with Cragoe's M_o = 6084/(API - 5.9) (demo's own arithmetic)."""
    gamma_o = 141.5 / (131.5 + api)
    return 133000.0 * gamma_o / (6084.0 / (api - 5.9))


def _wellstream_gravity(spec: DemoField) -> float:
    if not spec.condensate_stb_per_mmscf or spec.api is None:
        return spec.gravity
    gor = 1e6 / spec.condensate_stb_per_mmscf
    gamma_o = 141.5 / (131.5 + spec.api)
    mo = 6084.0 / (spec.api - 5.9)
    return (gor * spec.gravity + 4584.0 * gamma_o) / (gor + 132800.0 * gamma_o / mo)


def build_field_history(spec: DemoField, seed: int) -> dict:
    """Simulate one demo field: monthly production per well and surveys per well."""
    rng = np.random.default_rng(seed)
    fluid = GasFluid(_wellstream_gravity(spec), spec.co2, spec.h2s, spec.n2)
    tank = TankSpec(
        spec.giip_bscf, spec.pi_psia, spec.t_degF, fluid, spec.ce_per_psi, spec.aquifer, spec.second_tank
    )
    months = month_starts(spec.start, LAST_MONTH)
    ends = [dt.date(m.year + (m.month == 12), m.month % 12 + 1, 1) for m in months]
    t0 = days(spec.start)
    t_end = np.array([days(e) - t0 for e in ends])
    uptime = rng.uniform(0.88, 1.0, len(months))
    deliv = Deliverability(spec.plateau_mmscf_d * 1e3, 0.55 * spec.pi_psia, 0.18 * spec.pi_psia)
    step_of = {float(t): k for k, t in enumerate(t_end)}
    producers = [w for w in spec.wells if w.producing]

    def active_fraction(k):
        return sum(1 for w in producers if w.online <= months[k]) / len(producers)

    def rate(t, p1):
        k = step_of[float(t)]
        return deliv.rate(p1) * uptime[k] * (0.5 + 0.5 * active_fraction(k))

    hist = simulate(tank, t_end, rate)
    wet_mscf = np.diff(np.concatenate([[0.0], hist.gp_bscf])) * 1e6
    ge = _gas_equivalent_scf_per_stb(spec.api) if spec.api else 0.0
    y = spec.condensate_stb_per_mmscf
    sep_mscf = wet_mscf / (1.0 + ge * y / 1e6)
    cond_stb = sep_mscf / 1e3 * y
    # Water: condensed water (about 1 stb/MMscf) plus a share of each month's influx that
    # reaches the wells. The forward model keeps all of We in the tank, so the share is kept
    # small (WATER_PRODUCED_SHARE) to leave the balance nearly consistent.
    influx_rb = np.diff(np.concatenate([[0.0], hist.we_rb]))
    production = []
    for k, m in enumerate(months):
        online = [w for w in producers if w.online <= m]
        shares = rng.dirichlet(np.full(len(online), 6.0))
        for w, s in zip(online, shares, strict=True):
            water = (
                sep_mscf[k] * 1e-3 * CONDENSED_WATER_STB_PER_MMSCF + WATER_PRODUCED_SHARE * influx_rb[k]
            ) * s
            production.append((w.name, m, sep_mscf[k] * s, cond_stb[k] * s, water))
    surveys = []
    grid_t = np.concatenate([[0.0], t_end])
    for w in spec.wells:
        tank_p = hist.p2_psia if w.compartment == "East" and spec.second_tank else hist.p1_psia
        dates = survey_dates(rng, w.online, dt.date(2026, 9, 30), spec.survey_every_days)
        p = np.interp([days(d) - t0 for d in dates], grid_t, np.concatenate([[spec.pi_psia], tank_p]))
        if w.gauge_above_datum_ft:
            p = gas_column_pressure_psia(
                p, spec.datum_ft, spec.datum_ft - w.gauge_above_datum_ft, spec.t_degF, fluid
            )
        p = p + rng.normal(0.0, spec.noise_psi, p.size)
        for j, d in enumerate(dates):
            bad = w is spec.wells[0] and j in spec.outliers
            pj = p[j] + (spec.outliers[j] if bad else 0.0)
            surveys.append(
                (
                    w.name,
                    d,
                    round(float(pj), 1),
                    spec.datum_ft - w.gauge_above_datum_ft,
                    "buildup" if bad else "static",
                    "poor" if bad else "good",
                )
            )
    return {"production": production, "surveys": surveys}


def demo_is_loaded(session: Session) -> bool:
    return session.execute(select(Field.id).limit(1)).first() is not None


def load_demo(session: Session, specs: tuple[DemoField, ...] = PORTFOLIO) -> list[int]:
    """Insert the demo portfolio (in the caller's transaction) and queue its recomputes.

    ``specs`` defaults to the demo's fields; the portfolio benchmark passes many variants.
    """
    assets: dict[str, Asset] = {}
    field_ids = []
    for i, spec in enumerate(specs):
        asset = assets.get(spec.asset)
        if asset is None:
            asset = session.execute(select(Asset).where(Asset.name == spec.asset)).scalar_one_or_none()
            if asset is None:
                asset = Asset(name=spec.asset, basin=BASIN)
                session.add(asset)
            assets[spec.asset] = asset
        f = Field(
            asset=asset,
            name=spec.name,
            description=spec.story,
            datum_depth_ft=spec.datum_ft,
            reservoir_temperature_degF=spec.t_degF,
            initial_pressure_psia=spec.pi_psia,
            abandonment_pressure_psia=spec.abandonment_psia,
        )
        session.add(f)
        session.add(
            Fluid(
                field=f,
                gas_gravity=spec.gravity,
                y_co2_frac=spec.co2,
                y_h2s_frac=spec.h2s,
                y_n2_frac=spec.n2,
                condensate_api=spec.api,
            )
        )
        session.add(FieldAnalysisSettings(field=f, **spec.settings))
        wells = {}
        for w in spec.wells:
            wells[w.name] = Well(
                field=f,
                name=w.name,
                compartment=w.compartment,
                gauge_reference_depth_ft=spec.datum_ft - w.gauge_above_datum_ft,
            )
            session.add(wells[w.name])
        lo, best, hi = spec.volumetric
        session.add(
            VolumetricEstimate(
                field=f,
                estimate_date=dt.date(spec.start.year - 1, 6, 30),
                author="Static modelling team",
                giip_low_bscf=lo,
                giip_best_bscf=best,
                giip_high_bscf=hi,
            )
        )
        session.flush()
        add_demo_plan(session, f.id, spec.name, spec.plateau_mmscf_d)
        hist = build_field_history(spec, seed=1000 + i)
        session.add_all(
            ProductionMonth(
                well_id=wells[n].id,
                month=m,
                gas_mscf=round(g, 1),
                condensate_stb=round(c, 1),
                water_stb=round(wat, 1),
            )
            for n, m, g, c, wat in hist["production"]
        )
        session.add_all(
            PressureSurvey(
                well_id=wells[n].id, survey_date=d, pressure_psia=p, gauge_depth_ft=gd, kind=k, quality=q
            )
            for n, d, p, gd, k, q in hist["surveys"]
        )
        field_ids.append(f.id)
    session.flush()
    enqueue_field_recompute(session, field_ids, reason="demo portfolio loaded")
    return field_ids
