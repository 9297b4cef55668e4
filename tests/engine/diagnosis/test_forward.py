"""Diagnosis against independent forward models (server/synthetic/tank.py, written apart
from the fitters): for each mechanism the right flags are raised and the wrong ones are
not, the preferred model is the true one (or fits comparably), and GIIP is recovered
within the interval the noise allows."""

import dataclasses

import numpy as np
import pytest

from server.engine.compartments.multitank_fit import fit_two_tank
from server.engine.diagnosis.diagnose import DEFAULT_FITTERS, diagnose_field
from server.engine.prepare.points import prepare
from server.engine.volumetrics.estimate import volumetric_range
from server.synthetic.aquifer import VehAquifer
from server.synthetic.tank import FetkovichAquifer, PotAquifer, SecondTank, TankSpec
from tests.engine import section_7_2 as s72
from tests.engine.aquifer_cases import synthetic_field as aquifer_synthetic_field
from tests.engine.cases import GAS_065, cv27_quarterly, synthetic_field

VOL_100 = volumetric_range(85.0, 100.0, 120.0)
THREE_WELLS = [
    ("W-1", None, 45.0, 1, 270.0, 0.0),
    ("W-2", None, 200.0, 1, 270.0, 0.0),
    ("W-3", None, 700.0, 1, 270.0, 0.0),
]


# server/synthetic/tank.py connects its tanks in either form. Where a test's forward model uses
# the pressure-squared form the fits use it too, so that the interval test measures noise, not
# model-form error; the pseudo-pressure cases use the default fitters.
P2_FITTERS = (
    *DEFAULT_FITTERS[:2],
    ("two_tank", lambda inputs, prepared: fit_two_tank(inputs, prepared, potential="pressure_squared")),
)


def _diagnose(inputs, fitters=P2_FITTERS):
    d = diagnose_field(inputs, prepare(inputs), fitters=fitters)
    return d, {f.code for f in d.flags}


def _within_interval(row, truth):
    assert row.giip_low_bscf is not None and row.giip_high_bscf is not None, row
    assert row.giip_low_bscf <= truth <= row.giip_high_bscf, (row.giip_low_bscf, row.giip_high_bscf)


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_volumetric_field_with_noise_is_not_flagged(seed):
    spec = TankSpec(100.0, 5000.0, 200.0, GAS_065)
    inputs = synthetic_field(
        spec, years=10, rate_mscf_d=20000.0, wells=THREE_WELLS, noise_psi=12.0, seed=seed, volumetric=VOL_100
    )
    d, flags = _diagnose(inputs)
    assert flags == set()
    single = d.comparison.row("single_tank")
    assert single.support in ("best", "comparable")
    # 95 % interval from the scatter: the truth lies inside (seeds fixed, so this is repeatable)
    _within_interval(single, 100.0)


def test_hidden_neighbour_across_a_leaky_fault():
    # G1 = 60 (wells), G2 = 40 Bscf, Gamma' = 1.5 scf/d/psi^2; no compartment labels.
    spec = TankSpec(60.0, 5000.0, 200.0, GAS_065, second_tank=SecondTank(40.0, 1.5))
    inputs = synthetic_field(
        spec, years=8, rate_mscf_d=20000.0, wells=THREE_WELLS, noise_psi=10.0, seed=4, volumetric=VOL_100
    )
    d, flags = _diagnose(inputs)
    assert flags == {"compartment_signature"}
    assert d.comparison.preferred == "two_tank"
    two = d.comparison.row("two_tank")
    _within_interval(two, 100.0)
    assert d.comparison.row("single_tank").giip_bscf < 95.0  # the straight line under-reads (§4.3)
    # with the default (pseudo-pressure) connection the model choice and flag do not change
    d, flags = _diagnose(inputs, DEFAULT_FITTERS)
    assert flags == {"compartment_signature"} and d.comparison.preferred == "two_tank"


MECHANISMS = {"aquifer_signature", "compartment_signature", "overpressure_signature"}


@pytest.mark.parametrize("seed", [4, 5, 6, 7])
def test_hidden_neighbour_with_a_pseudo_pressure_connection(seed):
    # As above with the connection in the default fit's own form: c = 0.0315 scf cP/(d psi^2),
    # about Gamma' = 1.5 at mu z = 0.021 cP. The default fitters must prefer two tanks and
    # hold the truth (60 + 40 Bscf) in the interval. Seed 5's first survey sits 7 noise widths
    # above the field trend, a quadratic that cannot follow the two-tank curve's early bend;
    # the two-tank model explains it, so since engine 0.6.4 it raises no data_outliers.
    second = SecondTank(40.0, connection_scf_cp_per_day_psi2=0.0315)
    spec = TankSpec(60.0, 5000.0, 200.0, GAS_065, second_tank=second)
    inputs = synthetic_field(
        spec, years=8, rate_mscf_d=20000.0, wells=THREE_WELLS, noise_psi=10.0, seed=seed, volumetric=VOL_100
    )
    d, flags = _diagnose(inputs, DEFAULT_FITTERS)
    assert flags & MECHANISMS == {"compartment_signature"} and d.comparison.preferred == "two_tank"
    assert flags == {"compartment_signature"}
    _within_interval(d.comparison.row("two_tank"), 100.0)


def test_late_well_in_a_labelled_compartment_reads_near_initial():
    spec = TankSpec(58.0, 5000.0, 205.0, GAS_065, second_tank=SecondTank(42.0, 0.06))
    wells = [
        ("W-1", "West", 45.0, 1, 270.0, 0.0),
        ("W-2", "West", 300.0, 1, 270.0, 0.0),
        ("E-1", "East", 8 * 365.25, 2, 270.0, 0.0),
    ]
    inputs = synthetic_field(
        spec, years=12, rate_mscf_d=12000.0, wells=wells, noise_psi=12.0, seed=5, volumetric=VOL_100
    )
    d, flags = _diagnose(inputs)
    assert "compartment_signature" in flags and not flags & {"aquifer_signature", "overpressure_signature"}
    flag = next(f for f in d.flags if f.code == "compartment_signature")
    assert flag.severity == "alert" and "E-1" in flag.reason and "near the initial" in flag.reason
    assert d.comparison.preferred == "two_tank"
    _within_interval(d.comparison.row("two_tank"), 100.0)


def test_overpressured_field_is_flagged_for_overpressure_only():
    # Domain reference §7.4 truth: G = 100 Bscf, pi = 9000 psia, ce = 14.33e-6 1/psi, at a
    # datum of 13,600 ft (0.66 psi/ft).
    spec = TankSpec(100.0, 9000.0, 200.0, GAS_065, ce_per_psi=14.33e-6)
    inputs = synthetic_field(
        spec,
        years=6,
        rate_mscf_d=20000.0,
        wells=THREE_WELLS,
        noise_psi=12.0,
        seed=6,
        volumetric=VOL_100,
        datum_ft=13600.0,
    )
    d, flags = _diagnose(inputs)
    assert "overpressure_signature" in flags
    assert not flags & {"aquifer_signature", "compartment_signature", "too_little_depletion"}
    flag = next(f for f in d.flags if f.code == "overpressure_signature")
    assert flag.severity == "alert" and d.evidence.curvature.c2_psia_per_bscf2 < 0
    # the straight line over-reads (§2.4); the constant-ce tank is preferred and holds the truth
    assert d.comparison.row("single_tank").giip_low_bscf > 100.0
    assert d.comparison.preferred == "tank_ce"
    _within_interval(d.comparison.row("tank_ce"), 100.0)


@pytest.mark.parametrize(
    "aquifer",
    [
        PotAquifer(ct_wi_rb_per_psi=1500.0),
        FetkovichAquifer(wei_rb=6e-6 * 800e6 * 5000.0, j_rb_per_day_psi=15.0),
    ],
    ids=["pot", "fetkovich"],
)
def test_aquifer_support_is_found_and_its_model_holds_the_truth(aquifer):
    # A moderate pot aquifer (ct Wi = 1500 bbl/psi) and the demo's Fetkovich strength; the
    # produced water is condensed water plus 15 % of each month's influx (as in the demo).
    spec = TankSpec(100.0, 5000.0, 200.0, GAS_065, aquifer=aquifer)
    inputs = synthetic_field(
        spec, years=10, rate_mscf_d=20000.0, wells=THREE_WELLS, noise_psi=12.0, seed=7, volumetric=VOL_100
    )
    d, flags = _diagnose(inputs, DEFAULT_FITTERS)
    assert "aquifer_signature" in flags
    assert not flags & {"compartment_signature", "overpressure_signature"}
    best = d.comparison.rows[0]
    if isinstance(aquifer, PotAquifer):
        # A pot aquifer and a constant c_e are the same balance (domain reference §2.4): since
        # engine 0.6.8 the constant-ce tank weighs its surveys by their effective variance and
        # the two fit alike (before, it read about a third more misfit and ranked 5-11 AICc
        # behind on overpressured fields), so either may rank first.
        pot, ce = d.comparison.row("aquifer_pot"), d.comparison.row("tank_ce")
        assert abs(pot.aicc - ce.aicc) < d.comparison.comparable_delta
        assert best.name in ("aquifer_pot", "tank_ce", "aquifer_fetkovich", "aquifer_veh_radial")
    else:
        assert best.name.startswith("aquifer_")
    _within_interval(best, 100.0)


def test_weak_pot_aquifer_is_not_dressed_up_as_certain():
    # Domain reference §7.3 (ct Wi = 180 bbl/psi): the support is below what 12 psi surveys
    # can show. No mechanism flag is raised, several models fit comparably, and every
    # comparable model's GIIP lies within 2 % of the truth (F/Eg falls 102 -> 100.6 Bscf).
    spec = TankSpec(100.0, 5000.0, 200.0, GAS_065, aquifer=PotAquifer(ct_wi_rb_per_psi=180.0))
    inputs = synthetic_field(
        spec, years=10, rate_mscf_d=20000.0, wells=THREE_WELLS, noise_psi=12.0, seed=7, volumetric=VOL_100
    )
    d, flags = _diagnose(inputs, DEFAULT_FITTERS)
    assert flags == set()
    comparable = [d.comparison.row(n) for n in d.comparison.comparable]
    assert len(comparable) >= 2 and "do not single out one model" in d.comparison.statement
    assert all(abs(r.giip_bscf - 100.0) < 2.0 for r in comparable)


def _cv25_inputs(seed):
    sf = aquifer_synthetic_field(
        veh=VehAquifer(s72.U_RB_PER_PSI, s72.TD_PER_DAY), rate_mscf_per_day=20000.0, years=8, n_surveys=16,
        sigma_psia=10.0, seed=seed,
    )  # fmt: skip
    return dataclasses.replace(
        sf.inputs,
        volumetric=VOL_100,
        datum_depth_ft=10500.0,  # a normal pressure gradient (0.48 psi/ft)
        survey_gauge_depth_ft=np.full(sf.inputs.n_surveys, 10500.0),
    )


@pytest.mark.parametrize("seed", range(1, 9))
def test_check_value_25_true_model_is_comparable_and_the_range_covers_the_truth(seed):
    # Check value 25 (domain reference §7.2, infinite radial vEH aquifer, G = 100 Bscf). On 16
    # surveys with 10 psi noise a Fetkovich aquifer fits as well as the true vEH model (its RSS
    # is often lower: both fits are global minima, checked from the truth and from the scan's
    # start), and with the same four parameters neither can be singled out. The comparison must
    # say so: the vEH model is the best or comparable, the statement does not single out one
    # model, the span of the comparable models' intervals covers the truth, and so does vEH's own.
    d, _ = _diagnose(_cv25_inputs(seed), DEFAULT_FITTERS)
    cmp = d.comparison
    veh = cmp.row("aquifer_veh_radial")
    assert veh.n_params == 4  # infinite aquifer chosen: no r_eD parameter
    assert "aquifer_veh_radial" in cmp.comparable
    assert cmp.preferred == "aquifer_veh_radial" or "do not single out one model" in cmp.statement
    # An open envelope (a comparable model's interval is unbounded: on seed 6 the undetermined
    # two-tank model sits 1.99-2.01 AICc behind, on the edge of "comparable" by the fits' own
    # tolerance) contains the truth; a closed one must.
    low, high = cmp.comparable_giip_low_bscf, cmp.comparable_giip_high_bscf
    assert (low is None) == (high is None)
    if low is None:
        assert "no bounded GIIP range across these models" in cmp.statement
    else:
        assert low <= 100.0 <= high
        assert f"{low:.1f}-{high:.1f} Bscf across" in cmp.statement
    _within_interval(veh, 100.0)


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_check_value_25_water_drive_case(seed):
    # Check value 25 (domain reference §7.2): G = 100 Bscf, infinite radial aquifer
    # U = 644.544 bbl/psi; 20 MMscf/d for 8 years, 16 surveys with 10 psi noise, made by the
    # aquifer module's independent forward model (server/synthetic/aquifer.py). The naive
    # p/z line over-reads (122.52 Bscf noise-free; tolerance 1.5 half-widths of its 95 %
    # interval, about 3 standard errors, plus the 0.5 Bscf scheme tolerance of §8),
    # the field is flagged for the aquifer and for exceeding the volumetric high case, and
    # the true model has support with the truth inside its interval.
    d, flags = _diagnose(_cv25_inputs(seed), DEFAULT_FITTERS)
    assert flags == {"aquifer_signature", "dynamic_above_volumetric"}
    single = d.comparison.row("single_tank")
    half = (single.giip_high_bscf - single.giip_low_bscf) / 2
    assert abs(single.giip_bscf - 122.52) < 1.5 * half + 0.5
    assert d.comparison.preferred.startswith("aquifer_")
    veh = d.comparison.row("aquifer_veh_radial")
    assert veh.delta_aicc <= 10.0
    _within_interval(veh, 100.0)


def test_young_field_is_too_little_depleted_to_judge():
    spec = TankSpec(210.0, 5200.0, 215.0, GAS_065, second_tank=SecondTank(60.0, 0.5))
    inputs = synthetic_field(
        spec,
        years=1.5,
        rate_mscf_d=30000.0,
        wells=THREE_WELLS[:2],
        noise_psi=12.0,
        seed=8,
        volumetric=volumetric_range(170.0, 205.0, 250.0),
        datum_ft=11200.0,
    )
    _, flags = _diagnose(inputs)
    assert flags == {"too_little_depletion"}


def test_check_value_27_case_prefers_two_tanks_and_flags_compartments():
    # Check value 27 (§7.5, sigma = 15 psia, 33 quarterly surveys): two tanks preferred
    # by AICc, the single tank has little support, and the compartment flag is raised.
    inputs = cv27_quarterly(noise_psia=15.0)
    d, flags = _diagnose(inputs, DEFAULT_FITTERS)
    assert d.comparison.preferred == "two_tank"
    assert d.comparison.row("single_tank").support == "little support"
    assert flags == {"compartment_signature"}
    assert np.isclose(sum(r.akaike_weight for r in d.comparison.rows), 1.0)
