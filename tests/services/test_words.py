"""services/words.py: every key the engine can emit has words (issue 12, point 9).

The keys are collected from the engine itself, not listed by hand: the basis models of the
headline's contract, the aquifer specifications, the p/z method keys of every choice, and the
models, parameters and outcomes of full analyses of demo fields that exercise every model
(Fallowmere: aquifer models; Gorsewick: two tanks and the connected tank; Emberline: ce)."""

from __future__ import annotations

import itertools
import re

import pytest

from server.engine.analysis import analyse_field
from server.engine.aquifer.models import SPECS as AQUIFER_SPECS
from server.engine.headline.types import AUTOMATIC, BASIS_CHOICES, BASIS_MODELS
from server.engine.inputs import OVERPRESSURE_MODES
from server.engine.tank.pz_estimate import method_key
from server.services import words
from tests.engine.cases import demo_field_inputs

KEY = re.compile(r"[a-z]+(?:_[a-z0-9]+)+")  # what an internal name looks like: snake_case


def _is_words(text: str, key: str) -> bool:
    return bool(text) and text != key and not KEY.fullmatch(text)


def test_every_basis_choice_and_aquifer_model_has_a_title():
    for key in (*BASIS_CHOICES, *AQUIFER_SPECS):
        assert _is_words(words.model_title(key), key), key
    assert words.model_title(AUTOMATIC) == words.AUTOMATIC_TITLE
    assert words.model_title(BASIS_MODELS[0]) == "Straight p/z line (volumetric tank)"


@pytest.mark.parametrize(
    ("weighted", "anchored", "mode"),
    list(itertools.product((False, True), (False, True), OVERPRESSURE_MODES)),
)
def test_every_method_key_has_words(weighted, anchored, mode):
    key = method_key(weighted, anchored, mode)
    text = words.method_words(key)
    assert _is_words(text, key) and "p/z line" in text
    assert ("anchored" in text) == anchored and ("Weighted" in text) == weighted


@pytest.fixture(scope="module")
def analyses():
    return [analyse_field(demo_field_inputs(name)) for name in ("Fallowmere", "Gorsewick", "Emberline")]


def test_every_model_parameter_and_outcome_the_engine_emits_has_words(analyses):
    seen_models, seen_params = set(), set()
    for a in analyses:
        for fit in a.diagnosis.models:
            seen_models.add(fit.name)
            seen_params |= set(fit.params)
        seen_models |= {o.model for o in a.outcomes}
        seen_models.add(a.basis.model)
    assert {
        "two_tank",
        "connected_tank",
        "tank_ce",
        "aquifer_fetkovich",
    } <= seen_models  # the sample is broad
    assert {"giip_tank1_bscf", "ce_per_psi", "influx_frac_of_gas_pv"} <= seen_params
    for key in seen_models:
        assert _is_words(words.model_title(key), key), key
    for key in seen_params:
        text = words.parameter_words(key)
        assert _is_words(text, key) and not KEY.search(text.replace("p/z", "")), (key, text)


def test_engine_text_is_put_in_words():
    """Notes and flag reasons the engine writes: names and day numbers become words."""
    text = words.plain(
        "rss_psia2 is the weighted sum; giip_low/high: Fieller; giip_tank2_bscf is not determined; "
        "the chosen basis (aquifer_pot) has no GIIP; GRW-3 on day 16773 reads high"
    )
    assert not KEY.search(text), text
    # 16773 days after 1970-01-01 (the engine's time origin, DEVELOPERS.md glossary) is 2015-12-04:
    # 16436 days to 2015-01-01 (45 years, 11 leap days: 45*365 + 11), then 337 more (day 338 of 2015)
    assert "GRW-3 on 2015-12-04 reads high" in text
    assert "Tank with a pot aquifer" in text and "GIIP of tank 2 is not determined" in text
    assert words.plain("a red flag") == "a red flag"  # the parameter "red" is not a word in prose
