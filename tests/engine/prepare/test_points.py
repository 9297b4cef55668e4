"""Stage 1 (prepare): corrections checked against independent forward models.

The forward model is server/synthetic/tank.py (its own tabulated z, root finding on
the tank balance, its own midpoint gas column) plus, for condensate, arithmetic
written here with the textbook constants (133,000 and 4,584/132,800, Craft & Hawkins,
from memory) rather than the engine's constants derived from standard conditions.
A plain numpy line fit stands in for the estimators, which are tested elsewhere.
"""

import dataclasses

import numpy as np
import pytest

from server.engine.errors import EngineError
from server.engine.inputs import AnalysisChoices, FieldInputs, LabTable
from server.engine.prepare.points import prepare
from server.engine.pvt.gas import GasFluid, bg_rcf_per_scf, z_factor
from server.synthetic.tank import TankSpec, gas_column_pressure_psia, simulate

MONTHS = np.arange(1, 121) * 30.4375  # ten years of monthly steps [days]


def _line_giip(gp, pz):
    slope, intercept = np.polyfit(gp, pz, 1)
    return -intercept / slope


def _anchored_giip(gp, pz, pz_i):
    return -pz_i / (np.sum(gp * (pz - pz_i)) / np.sum(gp * gp))


def _inputs(*, fluid, t_degF, pi, datum_ft, t_surv, p_surv, gauge_ft, gas_mscf, **kw):
    n = len(t_surv)
    return FieldInputs(
        fluid=fluid,
        reservoir_temperature_degF=t_degF,
        initial_pressure_psia=pi,
        abandonment_pressure_psia=700.0,
        datum_depth_ft=datum_ft,
        survey_t_days=np.asarray(t_surv, float),
        survey_p_psia=np.asarray(p_surv, float),
        survey_gauge_depth_ft=np.broadcast_to(np.asarray(gauge_ft, float), (n,)).copy(),
        survey_included=np.ones(n, bool),
        production_end_t_days=MONTHS[: len(gas_mscf)],
        production_gas_mscf=np.asarray(gas_mscf, float),
        **kw,
    )


# --- gauges hung above the datum (like the demo field Ivorcombe) ----------------------------

IVC_FLUID = GasFluid(0.64)
IVC = {"giip": 76.0, "pi": 4400.0, "t": 190.0, "datum": 9600.0, "above": 850.0}


@pytest.fixture(scope="module")
def gauges_above_datum():
    hist = simulate(
        TankSpec(IVC["giip"], IVC["pi"], IVC["t"], IVC_FLUID), MONTHS, np.full(MONTHS.size, 20000.0)
    )
    k = np.arange(5, 60, 6)  # surveys at period ends, to about 48 % depletion
    p_datum = hist.p1_psia[k]
    gauge = IVC["datum"] - IVC["above"]
    p_gauge = gas_column_pressure_psia(p_datum, IVC["datum"], gauge, IVC["t"], IVC_FLUID)
    gas = np.diff(np.r_[0.0, hist.gp_bscf]) * 1e6

    def make(**choices):
        return _inputs(
            fluid=IVC_FLUID,
            t_degF=IVC["t"],
            pi=IVC["pi"],
            datum_ft=IVC["datum"],
            t_surv=MONTHS[k],
            p_surv=p_gauge,
            gauge_ft=gauge,
            gas_mscf=gas,
            choices=AnalysisChoices(**choices),
        )

    return make, p_datum


def test_datum_correction_recovers_truth(gauges_above_datum):
    make, p_datum = gauges_above_datum
    prep = prepare(make())
    np.testing.assert_allclose([p.p_datum_psia for p in prep.points], p_datum, atol=1e-5)
    _, gp, pz, _ = prep.arrays()
    # Noise-free: the forward model's z table (4000 points) and 100-step column are good to
    # about 1e-7 psi, so the line must return the truth to far better than 1e-5.
    assert _line_giip(gp, pz) == pytest.approx(IVC["giip"], rel=1e-5)
    assert any("850 ft above datum (10 surveys): pressures raised by" in c for c in prep.corrections)


def test_naive_analysis_is_off_by_about_the_issues_two_percent(gauges_above_datum):
    make, _ = gauges_above_datum
    prep = prepare(make(datum_correction=False))
    _, gp, pz, _ = prep.arrays()
    # The column lowers every p/z nearly in proportion, so a free line keeps most of the
    # answer (-0.7 % here); tied to the initial p/z measured at the datum, the naive line
    # is off by the issue's "2 %" order (-3.1 % here, at 48 % depletion).
    free = _line_giip(gp, pz) / IVC["giip"] - 1
    anchored = _anchored_giip(gp, pz, prep.initial_pz_psia) / IVC["giip"] - 1
    assert -0.02 < free < -0.003
    assert -0.05 < anchored < -0.015
    assert any(c.startswith("datum correction off: gauges 850 ft above datum") for c in prep.corrections)


# --- rich gas condensate (like the demo field Hollinsway) ------------------------------------

HLW = {"giip_wet": 120.0, "pi": 5600.0, "t": 230.0, "sep_gravity": 0.68, "api": 50.0, "yield": 110.0}


def _textbook_condensate(api, yield_stb_per_mmscf, sep_gravity):
    """(GE scf/stb, well-stream gravity) with the printed textbook constants."""
    go = 141.5 / (131.5 + api)
    mo = 6084.0 / (api - 5.9)
    r = 1e6 / yield_stb_per_mmscf
    return 133000.0 * go / mo, (r * sep_gravity + 4584.0 * go) / (r + 132800.0 * go / mo)


@pytest.fixture(scope="module")
def condensate_field():
    ge, gw = _textbook_condensate(HLW["api"], HLW["yield"], HLW["sep_gravity"])
    hist = simulate(
        TankSpec(HLW["giip_wet"], HLW["pi"], HLW["t"], GasFluid(gw)), MONTHS, np.full(MONTHS.size, 30000.0)
    )
    wet = np.diff(np.r_[0.0, hist.gp_bscf]) * 1e6
    sep = wet / (1.0 + ge * HLW["yield"] / 1e6)
    k = np.arange(5, 96, 6)

    def make(gravity=HLW["sep_gravity"], **choices):
        return _inputs(
            fluid=GasFluid(gravity),
            t_degF=HLW["t"],
            pi=HLW["pi"],
            datum_ft=11800.0,
            t_surv=MONTHS[k],
            p_surv=hist.p1_psia[k],
            gauge_ft=11800.0,
            gas_mscf=sep,
            production_condensate_stb=sep / 1e3 * HLW["yield"],
            condensate_api=HLW["api"],
            choices=AnalysisChoices(**choices),
        )

    return make, ge, gw


def test_condensate_correction_recovers_wet_gas_in_place(condensate_field):
    make, ge, gw = condensate_field
    prep = prepare(make())
    _, gp, pz, _ = prep.arrays()
    # The engine's rho_w V_m = 132,880 against the textbook 133,000 (-0.09 %) moves the
    # 8.3 % equivalent by 0.007 % of Gp; the gravity constants differ by less still.
    assert _line_giip(gp, pz) == pytest.approx(HLW["giip_wet"], rel=3e-4)
    assert prep.fluid.gas_gravity == pytest.approx(gw, rel=1e-3)
    assert prep.cumulative_gas_bscf / prep.cumulative_separator_gas_bscf - 1 == pytest.approx(
        ge * HLW["yield"] / 1e6, rel=2e-3
    )
    assert any(
        c.startswith("condensate 110 stb/MMscf (50 °API, 751 scf/stb) adds 8.3 %") for c in prep.corrections
    )
    assert "gas gravity 0.99" in prep.z_source


def test_naive_condensate_analysis_understates(condensate_field):
    make, ge, gw = condensate_field
    # Volumes alone (separator gas, z of the well stream): G falls by the equivalent's
    # share, 1 - 1/(1 + GE y) = 7.6 %, close to the issue's "9 %".
    volumes_only = prepare(make(gravity=gw, condensate_correction=False))
    share = ge * HLW["yield"] / 1e6
    err_vol = _line_giip(*volumes_only.arrays()[1:3]) / HLW["giip_wet"] - 1
    assert err_vol == pytest.approx(-share / (1 + share), abs=0.01)
    # Fully naive (separator gravity for z too): a second, similar error from z: -13 %.
    naive = prepare(make(condensate_correction=False))
    err = _line_giip(*naive.arrays()[1:3]) / HLW["giip_wet"] - 1
    assert -0.16 < err < -0.09
    assert any(c.startswith("condensate correction off: ") for c in naive.corrections)


def test_a_given_wellstream_gravity_is_used_directly(condensate_field):
    make, ge, gw = condensate_field
    # Only the well-stream gravity (the forward model's own gas), no separator gravity: z is
    # computed for it as it is, the condensate still adds its equivalent, and the line recovers
    # the forward model's wet gas in place as well as the recombination does.
    given = dataclasses.replace(make(gravity=gw), wellstream_gravity=gw, separator_gravity_given=False)
    prep = prepare(given)
    assert prep.fluid.gas_gravity == gw and prep.gravity_source == "given"
    assert prep.initial_z == pytest.approx(float(z_factor(HLW["pi"], HLW["t"], GasFluid(gw))), rel=1e-12)
    assert _line_giip(*prep.arrays()[1:3]) == pytest.approx(HLW["giip_wet"], rel=3e-4)
    assert any(f"z uses the well-stream gravity {gw:.4f} as given" in c for c in prep.corrections)
    assert prep.fluid_warnings == ()
    # Both given: the given one is used (here 2 % off the recombination: no warning) ...
    both = prepare(dataclasses.replace(make(), wellstream_gravity=gw * 1.02))
    assert both.fluid.gas_gravity == gw * 1.02 and both.fluid_warnings == ()
    assert any("recombining the separator gas 0.6800" in c for c in both.corrections)
    # ... and 6 % off, the reader is told they disagree.
    apart = prepare(dataclasses.replace(make(), wellstream_gravity=gw * 1.06))
    assert apart.fluid.gas_gravity == gw * 1.06 and "disagree" in apart.fluid_warnings[0]


def test_a_wellstream_gravity_entered_as_separator_gravity_is_warned_about(condensate_field):
    make, ge, gw = condensate_field
    # The issue's mistake: the only gravity the team had (the well stream's) typed as the separator
    # gravity. Recombined again, z is for a far heavier gas and the line is well off the truth.
    wrong = prepare(make(gravity=gw))
    (warning,) = wrong.fluid_warnings
    assert f"the separator gas gravity {gw:.3f} is heavier than separator gas usually is" in warning
    assert any(c.startswith("check the gas gravity: ") for c in wrong.corrections)
    err = _line_giip(*wrong.arrays()[1:3]) / HLW["giip_wet"] - 1
    assert abs(err) > 0.05
    # Normal data (the true separator gravity): no warning.
    assert prepare(make()).fluid_warnings == ()


# --- the demo generator (its own condensate arithmetic and gas column) -----------------------


@pytest.mark.parametrize("name", ["Ivorcombe", "Hollinsway"])
def test_demo_fields_recover_their_truth_within_the_noise(name):
    from server.services.demo import PORTFOLIO, build_field_history
    from server.synthetic.schedule import days

    i = [f.name for f in PORTFOLIO].index(name)
    spec = PORTFOLIO[i]
    hist = build_field_history(spec, seed=1000 + i)
    months = sorted({m for _, m, *_ in hist["production"]})
    idx = {m: j for j, m in enumerate(months)}
    gas, cond = np.zeros(len(months)), np.zeros(len(months))
    for _, m, g, c, _ in hist["production"]:
        gas[idx[m]] += g
        cond[idx[m]] += c
    ends = [days(m.replace(year=m.year + (m.month == 12), month=m.month % 12 + 1)) for m in months]
    surveys = [s for s in hist["surveys"] if s[4] == "static"]
    inputs = FieldInputs(
        fluid=GasFluid(spec.gravity, spec.co2, spec.h2s, spec.n2),
        reservoir_temperature_degF=spec.t_degF,
        initial_pressure_psia=spec.pi_psia,
        abandonment_pressure_psia=spec.abandonment_psia,
        datum_depth_ft=spec.datum_ft,
        survey_t_days=np.array([days(s[1]) for s in surveys]),
        survey_p_psia=np.array([s[2] for s in surveys]),
        survey_gauge_depth_ft=np.array([s[3] for s in surveys]),
        survey_included=np.ones(len(surveys), bool),
        production_end_t_days=np.array(ends),
        production_gas_mscf=gas,
        production_condensate_stb=cond,
        condensate_api=spec.api,
        survey_well=tuple(s[0] for s in surveys),
    )
    _, gp, pz, _ = prepare(inputs).arrays()
    (slope, intercept), cov = np.polyfit(gp, pz, 1, cov=True)
    giip = -intercept / slope
    # Delta-method standard error of G = -a/b from the fit's own scatter (12 psi gauges).
    grad = np.array([intercept / slope**2, -1 / slope])
    se = float(np.sqrt(grad @ cov @ grad))
    assert abs(giip - spec.giip_bscf) < 3 * se + 1e-3 * spec.giip_bscf


# --- z source, water, averages and bad input -----------------------------------------------


def _simple(**kw):
    base = dict(
        fluid=GasFluid(0.65),
        t_degF=200.0,
        pi=5000.0,
        datum_ft=10000.0,
        t_surv=[40.0, 40.0, 200.0, 400.0],
        p_surv=[4800.0, 4810.0, 4500.0, 800.0],
        gauge_ft=10000.0,
        gas_mscf=np.full(14, 3.0e5),
    )
    base.update(kw)
    return _inputs(**base)


def test_lab_table_takes_precedence_and_flags_extrapolation():
    p_tab = np.array([1500.0, 3000.0, 4500.0, 6000.0])
    z_lab = 1.01 * z_factor(p_tab, 200.0, GasFluid(0.65))  # a lab 1 % above the correlation
    inputs = _simple(lab_table=LabTable(p_tab, z_factor=z_lab), survey_well=("A", "B", "A", "A"))
    prep = prepare(inputs)
    z_pts = np.array([p.z_factor for p in prep.points])
    corr = z_factor(np.array([p.p_datum_psia for p in prep.points]), 200.0, GasFluid(0.65))
    # Inside the table PCHIP of 1.01 x correlation; 800 psia lies below it: scaled correlation.
    np.testing.assert_allclose(z_pts / corr, 1.01, rtol=2e-3)
    assert [p.z_extrapolated for p in prep.points] == [False, False, False, True]
    assert prep.z_source.startswith("laboratory table (4 points of z, 1500-6000 psia)")
    assert any("for 1 survey(s), the abandonment pressure" in c for c in prep.corrections)
    off = prepare(dataclasses.replace(inputs, choices=AnalysisChoices(use_lab_table=False)))
    assert off.points[0].z_factor == pytest.approx(z_factor(4800.0, 200.0, GasFluid(0.65)))
    assert any("not used (choice)" in c for c in off.corrections)


def test_bg_lab_table_at_the_field_standard_conditions():
    p_tab = np.linspace(500.0, 6000.0, 12)
    z_tab = z_factor(p_tab, 200.0, GasFluid(0.65))
    bg = bg_rcf_per_scf(p_tab, 200.0, z_tab)
    prep = prepare(_simple(lab_table=LabTable(p_tab, bg_rcf_per_scf=bg)))
    assert prep.points[2].z_factor == pytest.approx(z_factor(4500.0, 200.0, GasFluid(0.65)), rel=2e-3)
    assert "Bg (at 60 °F, 14.696 psia) converted to z" in prep.z_source
    with pytest.raises(EngineError, match="neither z nor Bg"):
        prepare(_simple(lab_table=LabTable(p_tab)))


def test_water_vapour_counts_only_when_chosen():
    water = np.full(14, 300.0)  # 1 stb/MMscf
    off = prepare(_simple(production_water_stb=water))
    on = prepare(_simple(production_water_stb=water, choices=AnalysisChoices(water_vapour_correction=True)))
    assert off.cumulative_gas_bscf == off.cumulative_separator_gas_bscf
    assert on.cumulative_gas_bscf - on.cumulative_separator_gas_bscf == pytest.approx(
        7376 * 14 * 300 / 1e9, rel=1e-3
    )
    assert any("treated as liquid formation water" in c for c in off.corrections)
    assert any("counted as condensed vapour at 7376 scf/stb" in c for c in on.corrections)


def test_pseudo_critical_choice_reaches_the_fluid():
    prep = prepare(_simple(choices=AnalysisChoices(pseudo_critical_method="standing_natural_gas")))
    assert prep.fluid.pseudo_critical_method == "standing_natural_gas"
    assert prep.initial_z == pytest.approx(z_factor(5000.0, 200.0, prep.fluid))
    assert "Standing (1977) natural gas" in prep.z_source
    hy = prepare(_simple(choices=AnalysisChoices(z_method="hall_yarborough")))
    assert hy.initial_z == pytest.approx(z_factor(5000.0, 200.0, GasFluid(0.65), "hall_yarborough"))


def test_campaign_averages_sit_beside_the_per_well_points():
    inputs = _simple(
        survey_well=("A", "B", "A", "B"),
        survey_compartment=(None, None, None, "East"),
        survey_quality=("good", "fair", "good", "good"),
    )
    prep = prepare(inputs)
    assert len(prep.points) == 4  # the fit still sees every survey
    first = prep.field_averages[0]
    assert first.wells == ("A", "B") and first.member_indices == (0, 1)
    assert first.p_datum_psia == pytest.approx((4800 + 0.5 * 4810) / 1.5)
    assert first.pz_psia == pytest.approx(
        first.p_datum_psia / z_factor(first.p_datum_psia, 200.0, GasFluid(0.65))
    )
    assert [a.compartment for a in prep.field_averages] == [None, None, "East"]
    assert any("1 survey campaign(s) with several wells" in c for c in prep.corrections)


def test_excluded_surveys_keep_their_reason_and_stay_out_of_averages():
    inputs = dataclasses.replace(
        _simple(survey_well=("A", "B", "A", "A")),
        survey_included=np.array([True, False, True, True]),
        survey_exclusion_reason=(None, "gauge drift", None, None),
    )
    prep = prepare(inputs)
    assert prep.points[1].reason == "gauge drift" and not prep.points[1].included
    assert all(1 not in a.member_indices for a in prep.field_averages)
    assert prep.arrays()[0].size == 3


@pytest.mark.parametrize(
    ("change", "message"),
    [
        (
            {"p_surv": [4800.0, np.nan, 4500.0, 800.0], "survey_id": (11, 12, 13, 14)},
            "survey 12: pressure nan",
        ),
        (
            {"gauge_ft": [10000.0, np.nan, 10000.0, 10000.0], "survey_well": ("A", "B", "A", "A")},
            r"well B\): gauge",
        ),
        ({"gas_mscf": np.r_[np.full(13, 3e5), -1.0]}, "production_gas_mscf: period 14"),
    ],
)
def test_bad_inputs_name_the_row(change, message):
    with pytest.raises(EngineError, match=message):
        prepare(_simple(**change))


def test_bad_initial_or_abandonment_pressure_is_named():
    with pytest.raises(EngineError, match="initial pressure must be a positive absolute pressure.*nan"):
        prepare(dataclasses.replace(_simple(), initial_pressure_psia=float("nan")))
    with pytest.raises(
        EngineError, match=r"abandonment pressure .* below the initial pressure \(5000 psia\), got 6000"
    ):
        prepare(dataclasses.replace(_simple(), abandonment_pressure_psia=6000.0))


def test_condensate_without_gas_is_refused():
    with pytest.raises(EngineError, match="condensate reported with no separator gas"):
        prepare(
            _simple(gas_mscf=np.zeros(14), production_condensate_stb=np.full(14, 5.0), condensate_api=50.0)
        )


def test_no_surveys_and_no_production():
    prep = prepare(_simple(t_surv=[], p_surv=[], gas_mscf=np.zeros(0)))
    assert prep.points == () and prep.field_averages == () and prep.cumulative_gas_bscf == 0.0
    assert prep.initial_pz_psia == pytest.approx(5000.0 / z_factor(5000.0, 200.0, GasFluid(0.65)))
