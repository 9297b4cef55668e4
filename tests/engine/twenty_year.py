"""Three 20-year fields made by the forward simulator: the cases benchmarks/bench_diagnosis.py
times, and the tests use to check that the speed-ups of the fitters left the results where they
were."""

import numpy as np

from server.engine.inputs import FieldInputs
from server.engine.pvt.gas import GasFluid
from server.engine.volumetrics.estimate import volumetric_range
from server.synthetic.tank import FetkovichAquifer, SecondTank, TankSpec, simulate

MONTH = 30.4375
GAS = GasFluid(0.65)
CASES = {
    "volumetric": TankSpec(120.0, 5000.0, 200.0, GAS),
    "hidden neighbour": TankSpec(70.0, 5000.0, 200.0, GAS, second_tank=SecondTank(50.0, 1.0)),
    "aquifer": TankSpec(
        120.0,
        5000.0,
        200.0,
        GAS,
        aquifer=FetkovichAquifer(wei_rb=6e-6 * 900e6 * 5000.0, j_rb_per_day_psi=20.0),
    ),
}


def twenty_year_field(name: str) -> FieldInputs:
    """240 months depleting the field by about 70 %, 40 surveys from 4 wells, 12 psi noise."""
    spec = CASES[name]
    seed = list(CASES).index(name)
    ends = np.arange(1, 241) * MONTH
    total = spec.giip_bscf + (spec.second_tank.giip_bscf if spec.second_tank else 0.0)
    rate = 0.7 * total * 1e6 / ends[-1]
    hist = simulate(spec, ends, np.full(ends.size, rate))
    rng = np.random.default_rng(seed)
    t = np.sort(rng.uniform(30.0, ends[-1], 40))
    p = np.interp(
        t, np.concatenate([[0.0], ends]), np.concatenate([[spec.initial_pressure_psia], hist.p1_psia])
    )
    p += rng.normal(0.0, 12.0, t.size)
    gas = np.full(ends.size, rate * MONTH)
    water = gas / 1e3 * (1.0 + 40.0 * hist.we_rb / 1e6)
    return FieldInputs(
        fluid=spec.fluid,
        reservoir_temperature_degF=spec.temperature_degF,
        initial_pressure_psia=spec.initial_pressure_psia,
        abandonment_pressure_psia=800.0,
        datum_depth_ft=10500.0,
        survey_t_days=t,
        survey_p_psia=p,
        survey_gauge_depth_ft=np.full(t.size, 10500.0),
        survey_included=np.ones(t.size, bool),
        production_end_t_days=ends,
        production_gas_mscf=gas,
        production_water_stb=water,
        survey_well=tuple(f"W-{1 + i % 4}" for i in range(t.size)),
        volumetric=volumetric_range(0.85 * total, total, 1.2 * total),
    )
