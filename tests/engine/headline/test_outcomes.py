"""Each model's EUR at the abandonment pressure, checked against closed forms and against the
project's forward simulator (server/synthetic/tank.py) run on to the same end."""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from server.engine.aquifer.extend import WATERED_OUT_PV_FRAC, aquifer_recovery
from server.engine.aquifer.history_match import fit_aquifer_model
from server.engine.compartments.extend import two_tank_recovery
from server.engine.headline.outcomes import closed_form_eur_bscf
from server.engine.modelfit import ModelFit
from server.engine.prepare.cumulative import recent_rate_bscf_per_day
from server.synthetic.tank import FetkovichAquifer, TankSpec, simulate
from tests.engine.aquifer_cases import FLUID, MONTH_DAYS, PI_PSIA, T_DEGF, synthetic_field
from tests.engine.two_tanks import two_tank_case


def _fit(name, g, **params):
    return ModelFit(name, name, 2, 10, 1.0, np.zeros(1), np.zeros(1), g, params={"giip_bscf": g, **params})


def test_closed_form_eur_of_the_line_and_of_rock_and_water_expansion():
    # Straight line: Gp = G (1 - (p/z)_a / (p/z)_i) (Havlena & Odeh 1963; domain reference §2.2).
    f = synthetic_field(sigma_psia=0.0, years=10)
    pr = f.prepared
    line = _fit("single_tank", 100.0, initial_pz_psia=pr.initial_pz_psia)
    assert closed_form_eur_bscf(line, pr) == pytest.approx(
        100.0 * (1 - pr.abandonment_pz_psia / pr.initial_pz_psia)
    )
    # Ramagost & Farshad (1981): (p/z)[1 - ce (pi - p)] = (p/z)_i (1 - Gp/G).
    ce = 1.5e-5
    tank = _fit("tank_ce", 100.0, initial_pz_psia=pr.initial_pz_psia, ce_per_psi=ce)
    pi, pa = PI_PSIA, f.inputs.abandonment_pressure_psia
    expect = 100.0 * (1 - pr.abandonment_pz_psia * (1 - ce * (pi - pa)) / pr.initial_pz_psia)
    assert closed_form_eur_bscf(tank, pr) == pytest.approx(expect, rel=1e-6)
    # Rock and water expansion push gas out too: more is recovered from the same G.
    assert closed_form_eur_bscf(tank, pr) > closed_form_eur_bscf(line, pr)


def _forward_end(spec, rate_mscf_d, p_ab, months=12 * 80, pore_frac=None):
    """Gp [Bscf] when the forward simulator's tank reaches p_ab (or the invaded share of the
    gas pore volume reaches ``pore_frac``), at a constant rate."""
    t = np.arange(1, months + 1) * MONTH_DAYS
    h = simulate(spec, t, np.full(months, rate_mscf_d))
    ended = h.p1_psia <= p_ab
    if pore_frac is not None:
        from server.engine.pvt.gas import bg_rcf_per_scf, z_factor
        from server.engine.units import FT3_PER_BBL

        bgi = bg_rcf_per_scf(PI_PSIA, T_DEGF, z_factor(PI_PSIA, T_DEGF, FLUID)) / FT3_PER_BBL
        ended |= h.we_rb / (spec.giip_bscf * 1e9 * bgi) >= pore_frac
    k = int(np.argmax(ended))
    assert ended[k], "the forward run did not reach the end"
    return float(h.gp_bscf[k])


@pytest.mark.parametrize(
    "aquifer, weak",
    [(FetkovichAquifer(wei_rb=2.0e7, j_rb_per_day_psi=20.0), True), (FetkovichAquifer(2.0e8, 60.0), False)],
)
def test_a_fitted_aquifer_model_stepped_on_agrees_with_the_forward_model(aquifer, weak):
    f = synthetic_field(aquifer=aquifer, sigma_psia=2.0, years=12, seed=4)
    fit = fit_aquifer_model(f.inputs, f.prepared, "aquifer_fetkovich")
    rate = recent_rate_bscf_per_day(f.prepared.production_end_t_days, f.prepared.cumulative_gas_at_end_bscf)
    assert rate * 1e6 == pytest.approx(10000.0)
    spec = TankSpec(100.0, PI_PSIA, T_DEGF, FLUID, aquifer=aquifer)
    truth = _forward_end(spec, 10000.0, f.inputs.abandonment_pressure_psia, pore_frac=WATERED_OUT_PV_FRAC)
    # The model at the true parameters: only the stepping is tested (monthly steps, 0.3 Bscf each).
    true = {**fit.params, "giip_bscf": 100.0, "initial_pressure_psia": PI_PSIA}
    true |= {"wei_rb": aquifer.wei_rb, "j_rb_per_day_psi": aquifer.j_rb_per_day_psi}
    stepped = aquifer_recovery(
        f.inputs, f.prepared, dataclasses.replace(fit, params=true, giip_bscf=100.0), rate
    )
    assert stepped.eur_bscf == pytest.approx(truth, rel=0.01)
    assert stepped.reached_abandonment is weak  # a strong aquifer waters the wells out first
    # The fitted model carries its own GIIP error (a few % on these seeds) into its EUR.
    got = aquifer_recovery(f.inputs, f.prepared, fit, rate)
    assert got.eur_bscf == pytest.approx(truth, rel=0.10)


def test_a_two_tank_model_stepped_on_agrees_with_the_forward_model():
    # The model at the true tank sizes and connection, so only the stepping is tested here.
    case = two_tank_case()
    inputs, prepared = case.inputs, case.prepared
    fit = dataclasses.replace(case.fit, params=case.true_params, giip_bscf=100.0)
    got = two_tank_recovery(inputs, prepared, fit, 0.012)
    truth = _forward_end(case.spec, 12000.0, inputs.abandonment_pressure_psia)
    assert got.reached_abandonment
    assert got.eur_bscf == pytest.approx(truth, rel=0.02)
    assert got.eur_bscf < 100.0 * (1 - prepared.abandonment_pz_psia / prepared.initial_pz_psia)
