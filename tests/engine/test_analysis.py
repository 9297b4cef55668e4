"""Stage 2 orchestration (server/engine/analysis/): choices are honoured, the summary
names its interval kinds, the models share the screened points, refusals keep the data."""

import dataclasses

import numpy as np
import pytest

from server.engine.analysis import CAUTION, analyse_field, analyse_prepared, screened_data
from server.engine.errors import InputRangeError
from server.engine.inputs import AnalysisChoices
from server.engine.prepare.points import prepare
from tests.engine.forward_histories import history_inputs, with_choices


@pytest.fixture(scope="module")
def base():
    return history_inputs(seed=21, noise_psi=12.0, offsets_psi={4: -280.0}, excluded={9: "tool failure"})[0]


def test_summary_fields_come_from_the_estimate_with_named_kinds(base):
    a = analyse_field(base)
    g = a.pz.giip_range_bscf
    assert a.status == "ok" and a.method == "pz-ols"
    line = (a.line_giip_low_bscf, a.line_giip_best_bscf, a.line_giip_high_bscf)
    assert line == (g.bootstrap.p90, a.pz.giip_bscf, g.bootstrap.p10)
    # The headline's basis is the line here; its booked range adds model spread and systematic
    # input errors to the bootstrap's scatter, so it is wider on both sides.
    assert a.basis.model == "single_tank" and a.giip_best_bscf == a.pz.giip_bscf
    assert a.giip_low_bscf < g.bootstrap.p90 and a.giip_high_bscf > g.bootstrap.p10
    assert a.giip_range_kind.startswith("P90-P10: survey scatter")
    assert (a.giip_ci_low_bscf, a.giip_ci_high_bscf) == (g.ci_fieller.low, g.ci_fieller.high)
    assert a.giip_ci_kind == "Fieller 95 % confidence interval"
    assert a.eur_bscf == a.pz.eur_bscf and a.remaining_bscf == a.pz.remaining_bscf
    assert a.recovery_factor_frac == a.pz.recovery_factor_frac
    assert a.remaining_bscf == pytest.approx(a.eur_bscf - a.cumulative_gas_bscf)
    assert CAUTION in a.notes
    assert "1 set aside as outliers" in a.message


def test_every_point_has_a_status_and_the_models_use_the_screened_points(base):
    a = analyse_field(base)
    status = {s.index: s for s in a.pz.points}
    assert sorted(status) == [p.index for p in a.prepared.points]
    assert status[4].status == "outlier" and status[9].status == "excluded"
    assert status[9].reason == "tool failure"
    assert a.pz.n_used == len(a.prepared.points) - 2
    screened = screened_data(a.prepared, a.pz)
    assert not screened.points[4].included and screened.points[4].reason.startswith("outlier rule: ")
    assert [m.name for m in a.models] == ["single_tank", "tank_ce"]
    single = a.models[0]
    assert single.n_obs == a.pz.n_used
    assert single.giip_bscf == pytest.approx(a.pz.giip_bscf, rel=1e-9)  # same fit, same points


def test_choices_are_honoured(base):
    anchored = analyse_field(with_choices(base, anchor_initial=True))
    assert anchored.method == "pz-ols-anchored" and anchored.pz.anchored
    assert anchored.pz.intercept_psia == pytest.approx(anchored.prepared.initial_pz_psia)
    assert anchored.models[0].n_params == 1
    level = analyse_field(with_choices(base, confidence_level=0.90))
    assert level.giip_ci_kind == "Fieller 90 % confidence interval"
    g90, g95 = level.pz.giip_range_bscf.ci_fieller, analyse_field(base).pz.giip_range_bscf.ci_fieller
    assert g95.low < g90.low < g90.high < g95.high
    off = analyse_field(with_choices(base, bootstrap_samples=0))
    assert off.giip_ci_kind == "Fieller 95 % confidence interval"
    assert off.line_giip_low_bscf == off.giip_ci_low_bscf
    poor = dataclasses.replace(base, survey_quality=("poor",) + base.survey_quality[1:])
    assert analyse_field(poor).method == "pz-wls"
    assert analyse_field(with_choices(poor, weighting="none")).method == "pz-ols"


def test_overpressure_modes_keep_the_plain_line_for_comparison():
    inputs, _ = history_inputs(seed=1, pi_psia=9000.0, ce_per_psi=14.333e-6)
    plain = analyse_field(inputs)
    assert plain.pz_uncorrected is None and plain.pz.ce_per_psi == 0.0
    ce = {"overpressure_mode": "given", "effective_compressibility_per_psi": 14.333e-6}
    given = analyse_field(with_choices(inputs, **ce))
    assert given.method == "pz-ols-ce-given" and given.pz.ce_per_psi == 14.333e-6
    assert given.pz_uncorrected.giip_bscf == pytest.approx(plain.line_giip_best_bscf)
    assert given.basis.model == "tank_ce" and given.basis.source == "engineer"
    assert given.giip_best_bscf == pytest.approx(given.pz.giip_bscf)
    p = given.prepared.points[3]
    corrected = p.pz_psia * (1 - 14.333e-6 * (9000.0 - p.p_datum_psia))
    assert given.pz.points[3].corrected_pz_psia == pytest.approx(corrected)
    assert given.pz.abandonment_pz_psia < given.prepared.abandonment_pz_psia


def test_bad_choices_raise_clear_errors(base):
    with pytest.raises(InputRangeError, match="unknown overpressure mode 'sometimes'"):
        analyse_field(with_choices(base, overpressure_mode="sometimes"))
    with pytest.raises(InputRangeError, match="needs a positive effective_compressibility_per_psi"):
        analyse_field(with_choices(base, overpressure_mode="given"))
    with pytest.raises(InputRangeError, match="unknown weighting"):
        analyse_field(with_choices(base, weighting="heavy"))


def test_refusal_keeps_the_prepared_points(base):
    few = dataclasses.replace(base, survey_included=np.arange(base.n_surveys) < 3)
    a = analyse_field(few)
    assert a.status == "refused" and "needs at least 4" in a.message
    assert a.method == "pz-ols" and a.pz is None and a.models == ()
    assert len(a.prepared.points) == base.n_surveys
    assert CAUTION in a.notes


def test_analyse_prepared_is_the_same_as_analyse_field(base):
    a = analyse_field(base)
    b = analyse_prepared(prepare(base), AnalysisChoices())
    assert a.line_giip_best_bscf == b.giip_best_bscf and a.line_giip_low_bscf == b.giip_low_bscf


def test_a_non_finite_point_is_named(base):
    prepared = prepare(base)
    bad = dataclasses.replace(prepared.points[2], pz_psia=float("nan"))
    broken = dataclasses.replace(prepared, points=prepared.points[:2] + (bad,) + prepared.points[3:])
    named = r"survey of well W-1 on \d{4}-\d\d-\d\d \(row 3 of the surveys\)"
    with pytest.raises(InputRangeError, match=named):
        analyse_prepared(broken, AnalysisChoices())


def test_an_unbounded_high_case_is_stored_as_none():
    # A decline significant only at a low confidence level (60 %): a fifth of the resamples
    # do not fall, so P10 has no upper bound (at 95 % this field would be refused).
    inputs, _ = history_inputs(
        seed=26,
        months=36,
        survey_every_months=6,
        rate_mscf_d=40000.0,
        noise_psi=400.0,
        choices=AnalysisChoices(confidence_level=0.6),
    )
    a = analyse_field(inputs)
    assert a.status == "ok" and a.pz.bootstrap_declining_frac < 0.9
    assert a.giip_high_bscf is None and a.giip_range_kind.endswith("the high case is unbounded")
    assert any("P10) is unbounded" in n for n in a.notes)
