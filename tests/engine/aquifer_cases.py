"""Synthetic gas fields with aquifers for the history-match tests (forward models only).

Histories come from the independent simulators in ``server.synthetic`` (``tank.simulate``
for pot and Fetkovich aquifers, ``aquifer.simulate_veh`` for van Everdingen-Hurst);
surveys are sampled at step ends with Gaussian pressure noise and fed through the real
``prepare`` stage, exactly as a field from the database would be.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from server.engine.inputs import AnalysisChoices, FieldInputs
from server.engine.prepare.points import PreparedData, prepare
from server.engine.pvt.gas import GasFluid
from server.synthetic.aquifer import VehAquifer, simulate_veh
from server.synthetic.tank import TankHistory, TankSpec, simulate

FLUID = GasFluid(0.65)  # the domain reference's §7 fluid (Sutton/DAK, 200 degF)
T_DEGF = 200.0
PI_PSIA = 5000.0
MONTH_DAYS = 30.4375
T0_DAYS = 12000.0  # an arbitrary start date (days since 1970)


@dataclass(frozen=True)
class SyntheticField:
    inputs: FieldInputs
    prepared: PreparedData
    history: TankHistory
    survey_index: np.ndarray  # step index of each survey after the initial one
    sigma_psia: float


def synthetic_field(
    *,
    aquifer=None,
    veh: VehAquifer | None = None,
    giip_bscf=100.0,
    rate_mscf_per_day=10000.0,
    years=20.0,
    n_surveys=40,
    sigma_psia=10.0,
    seed=1,
    choices: AnalysisChoices | None = None,
) -> SyntheticField:
    """Monthly production at a constant rate; an initial survey and ``n_surveys`` later ones."""
    spec = TankSpec(giip_bscf, PI_PSIA, T_DEGF, FLUID, aquifer=aquifer)
    n = int(round(years * 12))
    t = np.arange(1, n + 1) * MONTH_DAYS
    rate = np.full(n, rate_mscf_per_day)
    history = simulate_veh(spec, veh, t, rate) if veh is not None else simulate(spec, t, rate)
    idx = np.unique(np.linspace(5, n - 1, n_surveys).round().astype(int))
    rng = np.random.default_rng(seed)
    p = np.concatenate([[PI_PSIA], history.p1_psia[idx]]) + rng.normal(0.0, sigma_psia, idx.size + 1)
    ts = T0_DAYS + np.concatenate([[0.0], t[idx]])
    inputs = FieldInputs(
        fluid=FLUID,
        reservoir_temperature_degF=T_DEGF,
        initial_pressure_psia=PI_PSIA,
        abandonment_pressure_psia=500.0,
        datum_depth_ft=8000.0,
        survey_t_days=ts,
        survey_p_psia=p,
        survey_gauge_depth_ft=np.full(ts.size, 8000.0),
        survey_included=np.ones(ts.size, bool),
        production_end_t_days=T0_DAYS + t,
        production_gas_mscf=rate * MONTH_DAYS,
        choices=choices or AnalysisChoices(),
    )
    return SyntheticField(inputs, prepare(inputs), history, idx, sigma_psia)


def aicc(fit) -> float:
    """Corrected Akaike criterion from a ModelFit's RSS (Burnham & Anderson; common practice)."""
    n, k = fit.n_obs, fit.n_params + 1  # + the residual variance
    return n * np.log(fit.rss_psia2 / n) + 2 * k + 2 * k * (k + 1) / (n - k - 1)
