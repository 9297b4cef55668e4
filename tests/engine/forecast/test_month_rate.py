"""The month's rate solver against scipy.optimize.brentq as the reference.

The reference solves the same mid-point equation q = rate((p_start + p_end(q))/2) by Brent's
method (scipy.optimize.brentq; Brent 1973) on the whole bracket [0, q_hi] to xtol 1e-14 q_hi;
the rate rule U min(plateau, C (p̄² − p_wf²)^n) is written out here (Rawlins & Schellhardt
1936), not taken from the profile. The solver's stated bound is RATE_RTOL q_hi.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.optimize import brentq

from server.engine.forecast.aquifer_stepper import MONTH_DAYS, AquiferStepper
from server.engine.forecast.month_rate import RATE_RTOL, MonthSeed, month_rate_mscf_per_day
from server.engine.forecast.profile import CaseSettings, month_ends_t_days, run_case
from server.engine.forecast.steppers import LineStepper, field_pz_table
from server.engine.forecast.types import Deliverability
from server.engine.plan import FieldPlan
from server.synthetic.tank import FetkovichAquifer
from tests.engine.aquifer_cases import PI_PSIA, synthetic_field

PLATEAU, PWF = 10000.0, 1000.0
C_WELL, N_WELL = 10000.0 / (2800.0**2 - 1000.0**2) ** 0.8, 0.8  # potential = plateau at 2800 psia
WET = 1e3  # scf of model gas per Mscf (no condensate correction)


def _rate(plateau=PLATEAU, pwf=PWF, uptime=0.95, c=C_WELL, n=N_WELL):
    def rate(p):
        x = p * p - pwf * pwf
        return uptime * min(plateau, c * x**n) if x > 0 else 0.0

    return rate


def _reference(stepper, rate, days):
    """scipy brentq on [0, q_hi] to 1e-14 q_hi: the month's rate by the mid-point rule."""
    p0 = stepper.p_psia
    q_hi = rate(p0)

    def f(q):
        return q - rate(0.5 * (p0 + stepper.trial(q * days * WET, days)))

    if f(q_hi) <= 0:
        return q_hi, q_hi
    return brentq(f, 0.0, q_hi, xtol=1e-14 * q_hi, rtol=4 * np.finfo(float).eps), q_hi


@pytest.fixture(scope="module")
def field():
    return synthetic_field(sigma_psia=0.0, years=5)  # 100 Bscf tank, 10 MMscf/d for 5 years


def _line(field, giip_bscf=100.0):
    pr = field.prepared
    table = field_pz_table(field.inputs, pr)
    return LineStepper(table, pr.initial_pz_psia, giip_bscf * 1e9, pr.cumulative_gas_bscf * 1e9)


def _aquifer():
    aq = FetkovichAquifer(wei_rb=1.0e8, j_rb_per_day_psi=40.0)
    f = synthetic_field(aquifer=aq, sigma_psia=0.0, years=5)
    params = {
        "giip_bscf": 100.0,
        "initial_pressure_psia": PI_PSIA,
        "wei_rb": aq.wei_rb,
        "j_rb_per_day_psi": aq.j_rb_per_day_psi,
    }
    return AquiferStepper(f.inputs, f.prepared, "aquifer_fetkovich", params)


@pytest.mark.parametrize("guess_frac", [None, 1e-6, 0.3, 0.9, 0.999999])
@pytest.mark.parametrize("plateau", [PLATEAU, 4000.0, None])
def test_one_month_matches_scipy_brentq_from_any_seed(field, plateau, guess_frac):
    rate = _rate(plateau=plateau if plateau is not None else math.inf)
    for giip_bscf in (60.0, 100.0, 400.0):  # from a tank near its end to one barely touched
        stepper = _line(field, giip_bscf)
        want, q_hi = _reference(stepper, rate, 31.0)
        seed = MonthSeed()
        if guess_frac is not None:  # a seed that has seen one month at that rate
            seed.update(guess_frac * q_hi, q_hi, 31.0, 1.0)
        got = month_rate_mscf_per_day(stepper, rate, PWF, 31.0, WET, seed)
        assert abs(got - want) <= RATE_RTOL * q_hi, (giip_bscf, got, want)
        assert stepper.trial(got * 31.0 * WET, 31.0) > PWF


def test_a_plateau_month_is_the_plateau_exactly(field):
    stepper = _line(field, 400.0)  # a big tank: the wells hold the plateau over the month
    rate = _rate(uptime=1.0)
    q = month_rate_mscf_per_day(stepper, rate, PWF, 30.0, WET, MonthSeed())
    assert q == PLATEAU
    assert rate(0.5 * (stepper.p_psia + stepper.trial(q * 30.0 * WET, 30.0))) == PLATEAU


def test_no_rate_when_the_tank_is_below_the_flowing_pressure(field):
    stepper = _line(field)
    assert month_rate_mscf_per_day(stepper, _rate(pwf=1.05 * stepper.p_psia), PWF, 30.0, WET) == 0.0


@pytest.mark.parametrize("kind", ["line", "aquifer"])
def test_months_in_sequence_match_scipy_brentq_stepped_alongside(field, kind):
    # Decline months as run_case steps them (the seed carried over), each against the reference
    # from the same state; the month lengths of a calendar (28 to 31 days).
    stepper = _line(field) if kind == "line" else _aquifer()
    rate = _rate(c=0.35 * C_WELL)  # weak wells: the field declines from the first month
    seed = MonthSeed()
    for k in range(60):
        days = (31.0, 28.0, 31.0, 30.0)[k % 4]
        want, q_hi = _reference(stepper, rate, days)
        got = month_rate_mscf_per_day(stepper, rate, PWF, days, WET, seed)
        assert want < q_hi  # a decline month: the equation was solved
        assert abs(got - want) <= RATE_RTOL * q_hi, (k, got, want)
        stepper.commit(got * days * WET, days)


def test_a_case_s_monthly_rates_match_a_scipy_brentq_march(field):
    # run_case's monthly rates and EUR against the same tank marched month by month with the
    # reference solve (calendar months, 95 % uptime, the plateau, then decline to the limit).
    t_last = float(field.prepared.production_end_t_days[-1])
    plan = FieldPlan(PLATEAU, 0.95, PWF, economic_limit_mscf_per_day=300.0)
    ends = month_ends_t_days(t_last)
    wells = ((Deliverability("A", C_WELL, N_WELL, "test", 0), -math.inf),)
    p_ab, cum = field.inputs.abandonment_pressure_psia, field.prepared.cumulative_separator_gas_bscf
    s = CaseSettings(plan, t_last, ends, cum, 1.0, None, p_ab, PWF, wells)
    prof = run_case("best", 100.0, _line(field), s)
    assert prof.stop_reason == "economic limit"
    ref, rate, t_a = _line(field), _rate(), t_last
    n_full = prof.rate_mscf_per_day.size
    for k, t_b in enumerate(ends[:n_full]):
        days = float(t_b - t_a)
        q, _ = _reference(ref, rate, days)
        assert prof.rate_mscf_per_day[k] == pytest.approx(q, rel=2 * RATE_RTOL), k
        ref.commit(q * days * WET, days)
        # Each month's gas is within RATE_RTOL of the reference's, so the cumulative and the
        # pressure stay within that share too (here about 1e-12 after a hundred months).
        assert prof.pressure_psia[k] == pytest.approx(ref.p_psia, rel=RATE_RTOL, abs=0.0), k
        t_a = float(t_b)
    assert prof.rate_mscf_per_day[0] == pytest.approx(0.95 * PLATEAU, rel=1e-15)  # starts on the plateau
    assert prof.rate_mscf_per_day[-1] < 0.1 * PLATEAU  # and declines to near the limit
    days = float(ends[n_full] - t_a)  # the month that would fall below the limit, not produced
    assert _reference(ref, rate, days)[0] < 300.0
    assert prof.eur_bscf == pytest.approx(ref.gp_scf / 1e9, rel=RATE_RTOL)


def test_the_aquifer_month_bound_holds_at_month_length_average(field):
    # The aquifer stepper's influx clock moves by average months: one such month as a check.
    stepper = _aquifer()
    rate = _rate(c=0.35 * C_WELL)
    want, q_hi = _reference(stepper, rate, MONTH_DAYS)
    got = month_rate_mscf_per_day(stepper, rate, PWF, MONTH_DAYS, WET)
    assert abs(got - want) <= RATE_RTOL * q_hi


def test_a_rate_with_a_step_falls_back_to_brent_and_finds_the_step(field):
    # A rate that jumps where the mid-point pressure crosses p_step: F(q) jumps over zero, no q
    # has |F(q)| within the bound, and the solver's fallback (scipy brentq) finds the jump as
    # the reference does.
    stepper = _line(field)
    p0 = stepper.p_psia
    p_step = p0 - 0.5 * (p0 - stepper.trial(0.5 * PLATEAU * 31.0 * WET, 31.0))  # p̄ at q = plateau/2

    def rate(p):
        return PLATEAU if p >= p0 else 0.8 * PLATEAU if p >= p_step else 0.2 * PLATEAU

    want, q_hi = _reference(stepper, rate, 31.0)
    got = month_rate_mscf_per_day(stepper, rate, PWF, 31.0, WET, MonthSeed())
    assert want == pytest.approx(0.5 * PLATEAU, rel=1e-9)
    assert abs(got - want) <= RATE_RTOL * q_hi
