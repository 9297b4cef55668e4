"""An aquifer prolongs the plateau: the forecast's aquifer stepper against the project's
independent forward simulator (server/synthetic/tank.py, Fetkovich 1971 pseudo-steady-state
aquifer) run with the same deliverability rule on short steps; and the marching stepper
against the history match's whole-history Newton solve of the same grid."""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest

from server.engine.aquifer.extend import WATERED_OUT_PV_FRAC
from server.engine.aquifer.models import SPECS
from server.engine.aquifer.tank_solver import TankSolver
from server.engine.forecast.aquifer_stepper import MONTH_DAYS, AquiferStepper
from server.engine.forecast.profile import CaseSettings, month_ends_t_days, run_case
from server.engine.forecast.steppers import LineStepper, field_pz_table
from server.engine.forecast.types import Deliverability
from server.engine.plan import FieldPlan
from server.engine.pvt.gas import bg_rcf_per_scf, z_factor
from server.engine.units import FT3_PER_BBL
from server.synthetic.tank import FetkovichAquifer, TankSpec, simulate
from tests.engine.aquifer_cases import FLUID, PI_PSIA, T0_DAYS, T_DEGF, synthetic_field

PLATEAU, PWF, C_WELL = (
    10000.0,
    1000.0,
    10000.0 / (2800.0**2 - 1000.0**2),
)  # n = 1: potential = plateau at 2800 psia


def _params(aq: FetkovichAquifer):
    return {
        "giip_bscf": 100.0,
        "initial_pressure_psia": PI_PSIA,
        "wei_rb": aq.wei_rb,
        "j_rb_per_day_psi": aq.j_rb_per_day_psi,
    }


def _settings(f, plan, pwf=PWF, c=C_WELL):
    t_last = float(f.prepared.production_end_t_days[-1])
    wells = ((Deliverability("A", c, 1.0, "test", 0), -math.inf),)
    return CaseSettings(
        plan,
        t_last,
        month_ends_t_days(t_last),
        f.prepared.cumulative_separator_gas_bscf,
        1.0,
        None,
        f.inputs.abandonment_pressure_psia,
        pwf,
        wells,
    )


def _plateau_months(rate):
    return int(np.argmax(rate < PLATEAU * (1 - 1e-9)))


def test_influx_prolongs_the_plateau_as_the_forward_simulator_does():
    aq = FetkovichAquifer(wei_rb=1.0e8, j_rb_per_day_psi=40.0)
    f = synthetic_field(aquifer=aq, sigma_psia=0.0, years=5)
    t_last = float(f.prepared.production_end_t_days[-1])
    plan = FieldPlan(PLATEAU, 1.0, PWF, licence_end_t_days=t_last + 25 * 365.25)
    prof = run_case(
        "best",
        100.0,
        AquiferStepper(f.inputs, f.prepared, "aquifer_fetkovich", _params(aq)),
        _settings(f, plan),
    )
    # The forward model: 5 years at 10 MMscf/d, then the same rule
    # q = min(plateau, C (p² − pwf²)) on 2-day steps.
    hist_end = t_last - T0_DAYS
    t = np.concatenate([np.arange(1, 61) * MONTH_DAYS, hist_end + np.arange(2.0, 25 * 365.25 + 2.0, 2.0)])

    def rate(tk, p):
        return PLATEAU if tk <= hist_end + 1e-9 else min(PLATEAU, C_WELL * max(p * p - PWF * PWF, 0.0))

    fwd = simulate(TankSpec(100.0, PI_PSIA, T_DEGF, FLUID, aquifer=aq), t, rate)
    t_rel = prof.month_end_t_days - T0_DAYS
    gp_fwd = np.interp(t_rel, np.concatenate([[0.0], fwd.t_days]), np.concatenate([[0.0], fwd.gp_bscf]))
    assert prof.cumulative_bscf[:-1] == pytest.approx(gp_fwd[:-1], rel=3e-3)
    # The plateau ends within two months of the forward model's.
    fwd_rates = (
        np.diff(np.concatenate([[0.0], fwd.gp_bscf])) / np.diff(np.concatenate([[0.0], fwd.t_days])) * 1e6
    )
    fwd_end = fwd.t_days[np.argmax((fwd.t_days > hist_end) & (fwd_rates < PLATEAU * (1 - 1e-9)))]
    ours = _plateau_months(prof.rate_mscf_per_day)
    assert prof.month_end_t_days[ours] - T0_DAYS == pytest.approx(fwd_end, abs=2 * MONTH_DAYS)
    # Without the aquifer (the same G, a volumetric tank) the plateau ends years earlier.
    vol = synthetic_field(sigma_psia=0.0, years=5)
    line = LineStepper(
        field_pz_table(vol.inputs, vol.prepared),
        vol.prepared.initial_pz_psia,
        100e9,
        vol.prepared.cumulative_gas_bscf * 1e9,
    )
    volumetric = run_case("best", 100.0, line, _settings(vol, plan))
    assert _plateau_months(volumetric.rate_mscf_per_day) < ours - 24, (
        ours,
        _plateau_months(volumetric.rate_mscf_per_day),
    )


def test_a_strong_aquifer_waters_the_wells_out_at_the_forward_model_s_cumulative():
    aq = FetkovichAquifer(wei_rb=2.0e8, j_rb_per_day_psi=60.0)
    f = synthetic_field(aquifer=aq, sigma_psia=0.0, years=5)
    plan = FieldPlan(PLATEAU, 1.0, 300.0)
    prof = run_case(
        "best",
        100.0,
        AquiferStepper(f.inputs, f.prepared, "aquifer_fetkovich", _params(aq)),
        _settings(f, plan, pwf=300.0, c=1e3),
    )
    assert prof.stop_reason == "watered out"
    # The forward model at 10 MMscf/d until water has invaded the same share of the gas pore volume.
    months = 12 * 60
    fwd = simulate(
        TankSpec(100.0, PI_PSIA, T_DEGF, FLUID, aquifer=aq),
        np.arange(1, months + 1) * MONTH_DAYS,
        np.full(months, PLATEAU),
    )
    bgi = bg_rcf_per_scf(PI_PSIA, T_DEGF, z_factor(PI_PSIA, T_DEGF, FLUID)) / FT3_PER_BBL
    k = int(np.argmax(fwd.we_rb / (100e9 * bgi) >= WATERED_OUT_PV_FRAC))
    assert prof.eur_bscf == pytest.approx(float(fwd.gp_bscf[k]), abs=0.35)  # one month is 0.3 Bscf


def test_marching_reproduces_the_whole_history_solve_at_a_constant_rate():
    aq = FetkovichAquifer(wei_rb=1.0e8, j_rb_per_day_psi=40.0)
    f = synthetic_field(aquifer=aq, sigma_psia=0.0, years=5)
    st = AquiferStepper(f.inputs, f.prepared, "aquifer_fetkovich", _params(aq))
    n_hist, months = len(st.p_hist), 120
    got = []
    for _ in range(months):
        st.commit(PLATEAU * 1e3 * MONTH_DAYS, MONTH_DAYS)
        got.append(st.p_psia)
    grid = st.solver.grid
    n = n_hist + months
    ext = dataclasses.replace(
        grid,
        t_days=MONTH_DAYS * np.arange(1, n + 1),
        gp_scf=np.concatenate(
            [grid.gp_scf, grid.gp_scf[-1] + PLATEAU * 1e3 * MONTH_DAYS * np.arange(1, months + 1)]
        ),
        wp_rb=np.zeros(n),
    )
    whole = TankSolver(ext, SPECS["aquifer_fetkovich"].influx).solve(st.g, st.pi, st.kernel[:n])
    assert whole.converged
    assert np.array(got) == pytest.approx(whole.p_psia[n_hist:], abs=1e-5)
