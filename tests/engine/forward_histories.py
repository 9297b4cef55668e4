"""Field inputs from the independent forward simulator (server/synthetic/tank.py).

The simulator steps a tank's material balance monthly and knows nothing of the
estimators; here its pressures become surveys with Gaussian gauge noise, at the ends of
production months (so the cumulative at each survey is exact).
"""

from __future__ import annotations

import dataclasses

import numpy as np

from server.engine.inputs import AnalysisChoices, FieldInputs
from server.engine.pvt.gas import GasFluid, z_factor
from server.synthetic.tank import TankSpec, gas_column_pressure_psia, simulate

MONTH_DAYS = 30.4375
FLUID = GasFluid(0.65)


def history_inputs(
    *,
    giip_bscf=100.0,
    pi_psia=5000.0,
    t_degF=200.0,
    ce_per_psi=0.0,
    rate_mscf_d=20000.0,
    months=96,
    survey_every_months=6,
    noise_psi=15.0,
    seed=0,
    wells=("W-1", "W-2"),
    quality=None,
    offsets_psi=None,
    excluded=None,
    abandonment_psia=1000.0,
    gauge_above_datum_ft=0.0,
    condensate=None,
    choices=AnalysisChoices(),
):
    """FieldInputs and the truth for a simulated tank with noisy surveys.

    quality : dict survey index -> "good" | "fair" | "poor" (noise scales with 1/sqrt(weight))
    offsets_psi : dict survey index -> gross error added to that survey [psi]
    excluded : dict survey index -> the engineer's reason for setting it aside
    gauge_above_datum_ft : gauges hung this far above the datum; the simulator's datum
        pressure is carried up the static gas column by the simulator's own integrator
    condensate : (API, yield stb/MMscf, separator gas gravity): the tank holds the well
        stream (GIIP in wet-gas equivalent); production is reported as separator gas and
        condensate with the textbook constants (Craft & Hawkins, from memory), not the
        engine's
    """
    fluid, ge_scf_per_stb, condensate_yield = FLUID, 0.0, 0.0
    sep_fluid = FLUID
    if condensate is not None:
        api, condensate_yield, sep_gravity = condensate
        go = 141.5 / (131.5 + api)
        mo = 6084.0 / (api - 5.9)
        r = 1e6 / condensate_yield
        ge_scf_per_stb = 133000.0 * go / mo
        fluid = GasFluid((r * sep_gravity + 4584.0 * go) / (r + 132800.0 * go / mo))
        sep_fluid = GasFluid(sep_gravity)
    spec = TankSpec(giip_bscf, pi_psia, t_degF, fluid, ce_per_psi)
    t_end = np.arange(1, months + 1) * MONTH_DAYS
    hist = simulate(spec, t_end, np.full(months, rate_mscf_d))
    k = np.arange(survey_every_months - 1, months, survey_every_months)
    n = k.size
    rng = np.random.default_rng(seed)
    quality = quality or {}
    q = tuple(quality.get(i, "good") for i in range(n))
    sd = noise_psi / np.sqrt(np.array([{"good": 1.0, "fair": 0.5, "poor": 0.25}[x] for x in q]))
    p_true = hist.p1_psia[k]
    gauge_ft = 10000.0 - gauge_above_datum_ft
    p_gauge = p_true
    if gauge_above_datum_ft:
        p_gauge = gas_column_pressure_psia(p_true, 10000.0, gauge_ft, t_degF, fluid)
    p = p_gauge + rng.normal(0.0, 1.0, n) * sd
    for i, dp in (offsets_psi or {}).items():
        p[i] += dp
    excluded = excluded or {}
    wet_mscf = np.diff(np.concatenate([[0.0], hist.gp_bscf])) * 1e6
    sep_mscf = wet_mscf / (1.0 + ge_scf_per_stb * condensate_yield / 1e6)
    inputs = FieldInputs(
        fluid=sep_fluid,
        reservoir_temperature_degF=t_degF,
        initial_pressure_psia=pi_psia,
        abandonment_pressure_psia=abandonment_psia,
        datum_depth_ft=10000.0,
        survey_t_days=t_end[k],
        survey_p_psia=p,
        survey_gauge_depth_ft=np.full(n, gauge_ft),
        survey_included=np.array([i not in excluded for i in range(n)]),
        production_end_t_days=t_end,
        production_gas_mscf=sep_mscf,
        production_condensate_stb=sep_mscf / 1e3 * condensate_yield,
        condensate_api=condensate[0] if condensate else None,
        survey_well=tuple(wells[i % len(wells)] for i in range(n)),
        survey_quality=q,
        survey_exclusion_reason=tuple(excluded.get(i) for i in range(n)),
        survey_id=tuple(range(100, 100 + n)),
        choices=choices,
    )
    truth = {
        "giip_bscf": giip_bscf,
        "gp_bscf": hist.gp_bscf[k],
        "p_psia": p_true,
        "sd_p_psia": sd,
        "fluid": fluid,
    }
    return inputs, truth


def with_choices(inputs: FieldInputs, **changes) -> FieldInputs:
    return dataclasses.replace(inputs, choices=dataclasses.replace(inputs.choices, **changes))


def giip_sd_theory(truth, t_degF=200.0, pi_psia=5000.0, ce_per_psi=0.0, used=None, anchored=False):
    """Standard deviation of the least-squares G implied by the known gauge noise.

    Each survey's p/z error is sd_p |d(corrected p/z)/dp|; the weighted line through the
    true points with those variances gives var(a), var(b), cov(a, b) and the delta method
    gives sd(G) (domain-reference §2.7). Independent of the estimator's own scatter.
    """
    p = truth["p_psia"]
    x = truth["gp_bscf"]
    h = 0.01
    fluid = truth.get("fluid", FLUID)
    z = np.asarray(z_factor(np.concatenate([p - h, p + h]), t_degF, fluid))

    def corrected(pp, zz):
        return pp / zz * (1.0 - ce_per_psi * (pi_psia - pp))

    slope = (corrected(p + h, z[p.size :]) - corrected(p - h, z[: p.size])) / (2 * h)
    var = (truth["sd_p_psia"] * slope) ** 2
    m = np.ones(p.size, bool) if used is None else used
    zi = float(z_factor(pi_psia, t_degF, fluid))
    a = pi_psia / zi
    b = -a / truth["giip_bscf"]
    w = 1.0 / var[m]
    if anchored:
        vb = 1.0 / np.sum(w * x[m] ** 2)
        return float(np.sqrt(a**2 / b**4 * vb))
    design = np.column_stack([np.ones(m.sum()), x[m]])
    cov = np.linalg.inv(design.T @ (design * w[:, None]))
    g = np.array([-1.0 / b, a / b**2])
    return float(np.sqrt(g @ cov @ g))
