"""The demo portfolio's fields are flagged for the reasons their stories give, and the
clean ones are not (engine level; the pages are tested in tests/web and tests/browser).
Hollinsway (rich condensate) and Ivorcombe (gauges above the datum) are clean only
because the prepare stage corrects them.
"""

import pytest

from server.engine.diagnosis.diagnose import diagnose_field
from server.engine.prepare.points import prepare
from tests.engine.cases import demo_field_inputs


def _flags(name):
    inputs = demo_field_inputs(name)
    return {f.code: f for f in diagnose_field(inputs, prepare(inputs)).flags}


@pytest.mark.parametrize(
    "name", ["Amberlode", "Brackenhold", "Hollinsway", "Ivorcombe", "Juniper Knoll", "Lowmarsh Deep"]
)
def test_clean_fields_are_not_flagged(name):
    assert _flags(name) == {}


def test_fallowmere_aquifer():
    flags = _flags("Fallowmere")
    assert set(flags) == {"aquifer_signature"}
    assert "water-gas ratio rose" in flags["aquifer_signature"].reason


def test_gorsewick_compartments_with_the_late_well_near_initial():
    flags = _flags("Gorsewick")
    assert set(flags) == {"compartment_signature"}
    f = flags["compartment_signature"]
    assert f.severity == "alert" and "GRW-3" in f.reason and "near the initial p/z" in f.reason


def test_emberline_overpressure():
    flags = _flags("Emberline")
    assert set(flags) == {"overpressure_signature"}
    assert "0.66 psi/ft" in flags["overpressure_signature"].reason


def test_dunmarrow_too_little_depletion():
    assert set(_flags("Dunmarrow")) == {"too_little_depletion"}


def test_cindervale_bad_buildup_survey():
    flags = _flags("Cindervale")
    assert set(flags) == {"data_outliers"}
    reason = flags["data_outliers"].reason
    assert reason.startswith("1 survey(s)") and "CDV-1" in reason and "buildup, poor" in reason


def test_gorsewick_two_tank_fit_recovers_the_demo_truth():
    # The demo simulates Gorsewick with the pseudo-pressure connection the fit uses
    # (server/services/demo.py: 58 + 42 Bscf, c = 0.0013 scf cP/(d psi^2)), so the fitted
    # model is the true one and must cover the truth: before, the forward model's
    # pressure-squared connection gave 96.3 Bscf (93.9-98.7).
    inputs = demo_field_inputs("Gorsewick")
    two = next(m for m in diagnose_field(inputs, prepare(inputs)).models if m.name == "two_tank")
    assert two.identifiable and two.giip_low_bscf < 100.0 < two.giip_high_bscf
    p, se = two.params, two.param_se
    assert abs(p["giip_tank1_bscf"] - 58.0) < 3 * se["giip_tank1_bscf"]
    assert abs(p["giip_tank2_bscf"] - 42.0) < 3 * se["giip_tank2_bscf"]
    gamma = "transmissibility_tank2_scf_cp_per_day_psi2"
    assert abs(p[gamma] - 0.0013) < 3 * se[gamma]
