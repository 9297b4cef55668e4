"""Shared inputs for the diagnosis tests: published tables, test oracles, field builders.

Nothing here is an estimator: histories come from the domain reference's tables or from
the independent forward simulator in server/synthetic/tank.py.
"""

from __future__ import annotations

import numpy as np
from scipy.interpolate import CubicSpline

from server.engine.inputs import FieldInputs
from server.engine.pvt.gas import GasFluid, gas_density_lb_per_ft3, gas_viscosity_lee_gonzalez_eakin, z_factor

GAS_065 = GasFluid(0.65)
MONTH_DAYS = 30.4375

# Domain reference §7.5 (check value 27): G1 = 60, G2 = 40 Bscf, Gamma = 0.04241
# scf/d/(psi^2/cP), pseudo-pressure with LGE viscosity, 20 MMscf/d from tank 1,
# gamma 0.65 Sutton/DAK, 200 degF, pi = 5000 psia (computed for the reference).
CV27_T_DAYS = np.array(
    [0, 183, 366, 548, 731, 914, 1096, 1279, 1461, 1644, 1827, 2009, 2192, 2375, 2557, 2740, 2922], float
)
CV27_GP_BSCF = np.array(
    [
        0,
        3.66,
        7.32,
        10.96,
        14.62,
        18.28,
        21.92,
        25.58,
        29.22,
        32.88,
        36.54,
        40.18,
        43.84,
        47.5,
        51.14,
        54.8,
        58.44,
    ]
)
CV27_P1_PSIA = np.array(
    [5000.00, 4619.99, 4327.51, 4073.86, 3839.21, 3618.29, 3409.06, 3207.33, 3013.98, 2825.80, 2642.86,
     2465.21, 2290.02, 2117.41, 1947.45, 1777.40, 1608.23]
)  # fmt: skip
CV27_P2_PSIA = np.array(
    [5000.00, 4905.37, 4716.24, 4503.33, 4287.62, 4077.84, 3877.27, 3683.97, 3499.68, 3321.78, 3150.66,
     2986.59, 2827.19, 2672.85, 2523.93, 2378.39, 2237.53]
)  # fmt: skip
CV27_PZ1_PSIA = np.array(
    [4968.08, 4707.01, 4490.54, 4291.06, 4096.31, 3903.67, 3712.74, 3520.81, 3329.71, 3137.20, 2944.23,
     2751.79, 2557.69, 2362.91, 2168.40, 1971.89, 1775.36]
)  # fmt: skip


def lge_viscosity_cp(p_psia, t_degF, fluid: GasFluid):
    """Lee, Gonzalez & Eakin (1966) viscosity at pressure, from the PVT module [cP]."""
    z = z_factor(p_psia, t_degF, fluid)
    rho = gas_density_lb_per_ft3(p_psia, t_degF, z, fluid.gas_gravity)
    return gas_viscosity_lee_gonzalez_eakin(t_degF, fluid.gas_gravity, rho)


def pressure_for_pz(pz_psia, t_degF, fluid: GasFluid):
    """Invert p/z for p by fixed-point iteration p = (p/z) z(p) (z varies slowly)."""
    target = np.asarray(pz_psia, float)
    p = target.copy()
    for _ in range(60):
        p = target * z_factor(p, t_degF, fluid)
    return p


def field_inputs(
    t_days,
    p_psia,
    ends_days,
    gas_mscf,
    *,
    fluid: GasFluid = GAS_065,
    t_degF: float = 200.0,
    pi_psia: float = 5000.0,
    datum_ft: float = 10000.0,
    wells=None,
    compartments=None,
    by_compartment=(),
    water_stb=None,
    quality=None,
    kind=None,
    **extra,
) -> FieldInputs:
    """FieldInputs with surveys at the datum (absolute pressures) and per-period gas."""
    t = np.asarray(t_days, float)
    n = t.size
    return FieldInputs(
        fluid=fluid,
        reservoir_temperature_degF=t_degF,
        initial_pressure_psia=pi_psia,
        abandonment_pressure_psia=extra.pop("abandonment_psia", 1000.0),
        datum_depth_ft=datum_ft,
        survey_t_days=t,
        survey_p_psia=np.asarray(p_psia, float),
        survey_gauge_depth_ft=np.full(n, datum_ft),
        survey_included=extra.pop("included", np.ones(n, bool)),
        production_end_t_days=np.asarray(ends_days, float),
        production_gas_mscf=np.asarray(gas_mscf, float),
        production_water_stb=None if water_stb is None else np.asarray(water_stb, float),
        survey_well=tuple(wells) if wells is not None else tuple("W-1" for _ in range(n)),
        survey_compartment=tuple(compartments) if compartments is not None else (),
        survey_quality=tuple(quality) if quality is not None else (),
        survey_kind=tuple(kind) if kind is not None else (),
        survey_id=tuple(range(1, n + 1)),
        production_by_compartment=tuple(by_compartment),
        **extra,
    )


def monthly_ends(years: float) -> np.ndarray:
    return np.arange(1, int(round(years * 12)) + 1) * MONTH_DAYS


def cv27_quarterly(noise_psia: float = 0.0, seed: int = 12345):
    """The §7.5 history at 33 quarterly surveys (cubic spline in time through the
    semi-annual table, whose rows are smooth), with Gaussian noise on p/z."""
    tq = np.arange(33) * 2922.0 / 32
    pz = CubicSpline(CV27_T_DAYS, CV27_PZ1_PSIA)(tq)
    pz = pz + np.random.default_rng(seed).normal(0.0, noise_psia, tq.size) if noise_psia else pz
    ends = np.arange(1, 97) * MONTH_DAYS
    return field_inputs(tq, pressure_for_pz(pz, 200.0, GAS_065), ends, np.full(ends.size, 20000 * MONTH_DAYS))


def surveys_from_history(hist, wells, *, pi_psia, noise_psi, seed, end_days=None):
    """Survey times and pressures per well from a synthetic TankHistory.

    ``wells`` lists (name, compartment, first_day, tank, every_days, bias_psi); tank 1 or 2
    picks the simulated pressure the well sees. Returns (t, p, names, compartments) sorted
    by time.
    """
    rng = np.random.default_rng(seed)
    grid = np.concatenate([[0.0], hist.t_days])
    end = hist.t_days[-1] if end_days is None else end_days
    rows = []
    for name, comp, first, tank, every, bias in wells:
        t = np.arange(first, end, every)
        series = hist.p1_psia if tank == 1 else hist.p2_psia
        p = np.interp(t, grid, np.concatenate([[pi_psia], series])) + bias + rng.normal(0, noise_psi, t.size)
        rows += [(float(ti), float(pi), name, comp) for ti, pi in zip(t, p, strict=True)]
    rows.sort(key=lambda r: r[0])
    t, p, names, comps = zip(*rows, strict=True)
    return np.array(t), np.array(p), list(names), list(comps)


def demo_field_inputs(name: str, *, spec=None, seed: int | None = None) -> FieldInputs:
    """A demo field's inputs built the way services/jobs/recompute.py builds them from rows,
    without a database (the service path is tested separately). ``spec`` and ``seed`` give
    a variant (as the portfolio benchmark makes them) instead of the demo's own field."""
    from server.engine.volumetrics.estimate import volumetric_range
    from server.services.demo import PORTFOLIO, build_field_history
    from server.services.timebase import days_from_date, month_end_exclusive

    if spec is None:
        i, spec = next((i, s) for i, s in enumerate(PORTFOLIO) if s.name == name)
        seed = 1000 + i
    hist = build_field_history(spec, seed=seed)
    comp = {w.name: w.compartment for w in spec.wells}
    months = sorted({m for _, m, *_ in hist["production"]})
    index = {m: k for k, m in enumerate(months)}
    gas, cond, water = np.zeros(len(months)), np.zeros(len(months)), np.zeros(len(months))
    by_comp: dict[str, np.ndarray] = {}
    for well, m, g, c, wat in hist["production"]:
        gas[index[m]] += round(g, 1)
        cond[index[m]] += round(c, 1)
        water[index[m]] += round(wat, 1)
        if comp[well] is not None:
            by_comp.setdefault(comp[well], np.zeros(len(months)))[index[m]] += round(g, 1)
    surveys = sorted(hist["surveys"], key=lambda s: (s[1], s[0]))
    fluid = GasFluid(spec.gravity, spec.co2, spec.h2s, spec.n2)
    return FieldInputs(
        fluid=fluid,
        reservoir_temperature_degF=spec.t_degF,
        initial_pressure_psia=spec.pi_psia,
        abandonment_pressure_psia=spec.abandonment_psia,
        datum_depth_ft=spec.datum_ft,
        survey_t_days=np.array([days_from_date(s[1]) for s in surveys]),
        survey_p_psia=np.array([s[2] for s in surveys]),
        survey_gauge_depth_ft=np.array([s[3] for s in surveys]),
        survey_included=np.ones(len(surveys), bool),
        production_end_t_days=np.array([days_from_date(month_end_exclusive(m)) for m in months]),
        production_gas_mscf=gas,
        production_condensate_stb=cond,
        production_water_stb=water,
        survey_well=tuple(s[0] for s in surveys),
        survey_compartment=tuple(comp[s[0]] for s in surveys),
        survey_quality=tuple(s[5] for s in surveys),
        survey_kind=tuple(s[4] for s in surveys),
        survey_id=tuple(range(1, len(surveys) + 1)),
        production_by_compartment=tuple(sorted(by_comp.items())),
        condensate_api=spec.api,
        volumetric=volumetric_range(*spec.volumetric),
    )


def synthetic_field(
    spec,
    *,
    years: float,
    rate_mscf_d: float,
    wells,
    noise_psi: float,
    seed: int,
    volumetric=None,
    datum_ft: float = 10000.0,
    water_base_stb_per_mmscf: float = 1.0,
    water_produced_share: float = 0.15,
):
    """FieldInputs from the forward simulator: constant-rate monthly production, surveys
    per well (see surveys_from_history), and water production: condensed water plus a
    small share of each month's simulated influx (as the demo portfolio makes it)."""
    from server.synthetic.tank import simulate

    ends = monthly_ends(years)
    hist = simulate(spec, ends, np.full(ends.size, rate_mscf_d))
    t, p, names, comps = surveys_from_history(
        hist, wells, pi_psia=spec.initial_pressure_psia, noise_psi=noise_psi, seed=seed
    )
    gas = np.full(ends.size, rate_mscf_d * MONTH_DAYS)
    water = gas / 1e3 * water_base_stb_per_mmscf + water_produced_share * np.diff(
        np.concatenate([[0.0], hist.we_rb])
    )
    labelled = [c for c in comps if c]
    by_comp = (("West", gas),) if labelled else ()
    return field_inputs(
        t, p, ends, gas, fluid=spec.fluid, t_degF=spec.temperature_degF, pi_psia=spec.initial_pressure_psia,
        datum_ft=datum_ft, wells=names, compartments=comps if labelled else None, by_compartment=by_comp,
        water_stb=water, volumetric=volumetric,
    )  # fmt: skip
