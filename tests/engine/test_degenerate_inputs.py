"""Degenerate fields (issue 18, point 1): the engine either answers or refuses with its
documented refusal (``EngineError``: ``InsufficientDataError`` or ``InputRangeError``);
never a numpy error, a ZeroDivisionError or anything else that would stop a portfolio.

The fields are built so that the data cannot support a line: surveys that all predate
the first production (no gas produced at any survey, the case that stopped every
recompute with "SVD did not converge"), surveys on one date, no production at all,
production of zero, one pressure for every survey, pressures above the initial one,
one well or one compartment. Hypothesis draws them; the degenerate shapes are forced
by the strategies, not hoped for.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from server.engine.analysis import analyse_field
from server.engine.errors import EngineError
from server.engine.inputs import AnalysisChoices, FieldInputs
from server.engine.pvt.gas import GasFluid

MONTH_DAYS = 30.4375
FIRST_PRODUCTION_DAY = 1000.0


def _field(
    survey_days,
    pressures,
    wells,
    included,
    gas_per_month,
    n_months,
    *,
    compartments=None,
    choices=None,
) -> FieldInputs:
    n = len(survey_days)
    order = np.argsort(np.asarray(survey_days, float), kind="stable")
    end = FIRST_PRODUCTION_DAY + MONTH_DAYS * np.arange(1, n_months + 1)
    return FieldInputs(
        fluid=GasFluid(0.65),
        reservoir_temperature_degF=200.0,
        initial_pressure_psia=5000.0,
        abandonment_pressure_psia=500.0,
        datum_depth_ft=8000.0,
        survey_t_days=np.asarray(survey_days, float)[order],
        survey_p_psia=np.asarray(pressures, float)[order],
        survey_gauge_depth_ft=np.full(n, 8000.0),
        survey_included=np.asarray(included, bool)[order],
        production_end_t_days=end,
        production_gas_mscf=np.asarray(gas_per_month, float)[:n_months],
        production_condensate_stb=np.zeros(n_months),
        production_water_stb=np.zeros(n_months),
        survey_well=tuple(wells[i] for i in order),
        survey_compartment=tuple((compartments or [None] * n)[i] for i in order),
        survey_quality=("good",) * n,
        survey_kind=("static",) * n,
        survey_exclusion_reason=tuple(None if included[i] else "set aside" for i in order),
        survey_id=tuple(range(1, n + 1)),
        choices=choices or AnalysisChoices(bootstrap_samples=0),
    )


def _outcome(inputs: FieldInputs) -> str:
    """'ok', 'refused' or 'engine error': anything else propagates and fails the test."""
    try:
        result = analyse_field(inputs)
    except EngineError as exc:
        assert str(exc), "a refusal must say why"
        return "engine error"
    assert result.status in ("ok", "refused")
    if result.status == "refused":
        assert result.message
    return result.status


def test_surveys_before_first_production_are_refused_with_a_reason():
    # The field of the issue: nine surveys, three wells, all before the first month of
    # production. Before the fix: numpy.linalg.LinAlgError from the diagnosis' trend fit.
    days = [100.0 + 30 * i for i in range(9)]
    inputs = _field(days, [5000.0 - i for i in range(9)], ["A", "B", "C"] * 3, [True] * 9, [1e4] * 12, 12)
    try:
        result = analyse_field(inputs)
    except EngineError as exc:
        message = str(exc)
    else:
        assert result.status == "refused"
        message = result.message
    assert "production" in message.lower() or "depletion" in message.lower()


def test_identical_pressures_at_one_cumulative_are_refused_not_a_numpy_error():
    # Every survey on the same day after production began: one Gp, so no trend in Gp.
    days = [FIRST_PRODUCTION_DAY + 400.0] * 6
    inputs = _field(days, [4200.0] * 6, ["A", "B", "C"] * 2, [True] * 6, [1e4] * 24, 24)
    assert _outcome(inputs) in ("refused", "engine error")


# Shapes the strategies below force: where the surveys lie relative to production.
_SURVEY_DAYS = {
    "before production": st.floats(0.0, FIRST_PRODUCTION_DAY - 1.0),
    "one date": st.just(FIRST_PRODUCTION_DAY + 500.0),
    "anywhere": st.floats(0.0, FIRST_PRODUCTION_DAY + 3000.0),
}
_PRESSURES = st.one_of(
    st.just(4000.0),  # one pressure for every survey
    st.floats(4000.0, 4001.0),  # nearly one
    st.floats(100.0, 9000.0),  # below abandonment to above initial
)


@st.composite
def degenerate_fields(draw) -> FieldInputs:
    shape = draw(st.sampled_from(sorted(_SURVEY_DAYS)))
    n = draw(st.integers(0, 10))
    days = draw(st.lists(_SURVEY_DAYS[shape], min_size=n, max_size=n))
    pressure = draw(_PRESSURES)
    same = draw(st.booleans())
    pressures = [pressure] * n if same else draw(st.lists(_PRESSURES, min_size=n, max_size=n))
    wells = draw(st.lists(st.sampled_from(["A", "B", "C"]), min_size=n, max_size=n))
    compartments = draw(
        st.one_of(st.none(), st.lists(st.sampled_from(["north", "south"]), min_size=n, max_size=n))
    )
    included = draw(st.lists(st.booleans(), min_size=n, max_size=n))
    n_months = draw(st.integers(0, 30))
    gas = draw(
        st.one_of(
            st.just([0.0] * n_months),  # production rows of zero gas
            st.lists(st.floats(0.0, 5e5), min_size=n_months, max_size=n_months),
        )
    )
    choices = AnalysisChoices(
        bootstrap_samples=0,
        anchor_initial=draw(st.booleans()),
        overpressure_mode=draw(st.sampled_from(["off", "fitted"])),
        weighting=draw(st.sampled_from(["quality", "none"])),
    )
    return _field(days, pressures, wells, included, gas, n_months, compartments=compartments, choices=choices)


@pytest.mark.slow
@settings(
    max_examples=100,
    deadline=None,
    derandomize=True,
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large],
)
@given(degenerate_fields())
def test_random_degenerate_fields_never_raise_anything_but_the_engines_refusal(inputs):
    _outcome(inputs)
