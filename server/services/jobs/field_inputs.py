"""Engine inputs from plain records: shared by the recompute (rows from the database)
and the offline ``tankbook analyse`` command (rows from upload files)."""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

import numpy as np

from ...engine.inputs import AnalysisChoices, FieldInputs, LabTable
from ...engine.plan import FieldPlan, WellTest
from ...engine.pvt.gas import GasFluid
from ...engine.volumetrics.estimate import VolumetricResult, volumetric_range
from ..timebase import days_from_date, month_end_exclusive


@dataclass(frozen=True)
class SurveyRecord:
    survey_date: dt.date
    pressure_psia: float  # absolute, at the gauge
    gauge_depth_ft: float
    well: str
    compartment: str | None = None
    quality: str = "good"
    kind: str = "static"
    included: bool = True
    exclusion_reason: str | None = None
    survey_id: int | None = None


@dataclass(frozen=True)
class ProductionRecord:
    month: dt.date  # first day of the month
    gas_mscf: float
    condensate_stb: float = 0.0
    water_stb: float = 0.0
    compartment: str | None = None
    well: str | None = None  # production per well feeds the forecast's deliverability


@dataclass(frozen=True)
class WellTestRecord:
    test_date: dt.date
    well: str
    rate_mscf_per_day: float
    flowing_bhp_psia: float
    static_pressure_psia: float


@dataclass(frozen=True)
class VolumetricRecord:
    estimate_date: dt.date
    giip_low_bscf: float
    giip_best_bscf: float
    giip_high_bscf: float


def field_volumetric(records: list[VolumetricRecord]) -> VolumetricResult | None:
    """The static estimate the flags compare with: the newest by estimate date (the last
    given among equal dates), as low/best/high. None without any."""
    if not records:
        return None
    newest = max(enumerate(records), key=lambda ir: (ir[1].estimate_date, ir[0]))[1]
    return volumetric_range(newest.giip_low_bscf, newest.giip_best_bscf, newest.giip_high_bscf)


def lab_table_from_points(points: list[tuple[float, float | None, float | None]]) -> LabTable | None:
    """(pressure_psia, z_factor, bg_rcf_per_scf) points, sorted; a column is used only if complete."""
    if not points:
        return None
    points = sorted(points, key=lambda t: t[0])
    zs = [z for _, z, _ in points]
    bgs = [b for _, _, b in points]
    return LabTable(
        pressure_psia=np.array([p for p, _, _ in points], float),
        z_factor=np.array(zs, float) if all(z is not None for z in zs) else None,
        bg_rcf_per_scf=np.array(bgs, float) if all(b is not None for b in bgs) else None,
    )


def fluid_inputs(
    gas_gravity: float | None,
    wellstream_gravity: float | None,
    y_co2_frac: float = 0.0,
    y_h2s_frac: float = 0.0,
    y_n2_frac: float = 0.0,
) -> dict:
    """``fluid``, ``wellstream_gravity`` and ``separator_gravity_given`` for :func:`build_field_inputs`
    from a stored or uploaded fluid (separator gravity, well-stream gravity, or both)."""
    if gas_gravity is None and wellstream_gravity is None:
        raise ValueError("the fluid has neither a separator gas gravity nor a well-stream gravity")
    stand_in = gas_gravity if gas_gravity is not None else wellstream_gravity
    return {
        "fluid": GasFluid(stand_in, y_co2_frac, y_h2s_frac, y_n2_frac),
        "wellstream_gravity": wellstream_gravity,
        "separator_gravity_given": gas_gravity is not None,
    }


def build_field_inputs(
    *,
    fluid: GasFluid,
    reservoir_temperature_degF: float,
    initial_pressure_psia: float,
    abandonment_pressure_psia: float,
    datum_depth_ft: float,
    surveys: list[SurveyRecord],
    production: list[ProductionRecord],
    condensate_api: float | None = None,
    lab_table: LabTable | None = None,
    choices: AnalysisChoices | None = None,
    well_tests: list[WellTestRecord] = (),
    plan: FieldPlan | None = None,
    wellstream_gravity: float | None = None,
    separator_gravity_given: bool = True,
) -> FieldInputs:
    """Surveys in date order (then well); production summed per month, per compartment and
    per well (records with a well name); well tests by well, date and rate."""
    surveys = sorted(surveys, key=lambda s: (s.survey_date, s.well))
    months = sorted({p.month for p in production})
    index = {m: i for i, m in enumerate(months)}
    gas = np.zeros(len(months))
    cond = np.zeros(len(months))
    water = np.zeros(len(months))
    by_comp: dict[str, np.ndarray] = {}
    by_well: dict[str, np.ndarray] = {}
    for p in production:
        i = index[p.month]
        gas[i] += p.gas_mscf
        cond[i] += p.condensate_stb
        water[i] += p.water_stb
        if p.compartment is not None:
            by_comp.setdefault(p.compartment, np.zeros(len(months)))[i] += p.gas_mscf
        if p.well is not None:
            by_well.setdefault(p.well, np.zeros(len(months)))[i] += p.gas_mscf
    tests = sorted(well_tests, key=lambda t: (t.well, t.test_date, t.rate_mscf_per_day))
    return FieldInputs(
        fluid=fluid,
        reservoir_temperature_degF=reservoir_temperature_degF,
        initial_pressure_psia=initial_pressure_psia,
        abandonment_pressure_psia=abandonment_pressure_psia,
        datum_depth_ft=datum_depth_ft,
        survey_t_days=np.array([days_from_date(s.survey_date) for s in surveys]),
        survey_p_psia=np.array([s.pressure_psia for s in surveys]),
        survey_gauge_depth_ft=np.array([s.gauge_depth_ft for s in surveys]),
        survey_included=np.array([s.included for s in surveys], dtype=bool),
        production_end_t_days=np.array([days_from_date(month_end_exclusive(m)) for m in months]),
        production_gas_mscf=gas,
        production_condensate_stb=cond,
        production_water_stb=water,
        survey_well=tuple(s.well for s in surveys),
        survey_compartment=tuple(s.compartment for s in surveys),
        survey_quality=tuple(s.quality for s in surveys),
        survey_kind=tuple(s.kind for s in surveys),
        survey_exclusion_reason=tuple(s.exclusion_reason for s in surveys),
        survey_id=tuple(s.survey_id for s in surveys),
        production_by_compartment=tuple(sorted(by_comp.items())),
        condensate_api=condensate_api,
        wellstream_gravity=wellstream_gravity,
        separator_gravity_given=separator_gravity_given,
        lab_table=lab_table,
        choices=choices or AnalysisChoices(),
        well_tests=tuple(
            WellTest(
                t.well,
                days_from_date(t.test_date),
                t.rate_mscf_per_day,
                t.flowing_bhp_psia,
                t.static_pressure_psia,
            )
            for t in tests
        ),
        plan=plan,
        production_by_well=tuple(sorted(by_well.items())),
    )
