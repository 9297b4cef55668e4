"""The accuracy benchmark's truths, checked independently of the estimators.

``benchmarks/accuracy_cases.py`` builds invented fields from the forward simulators; the
benchmark judges the engine against their ``Truth``. Here one seed of every case is built
and its truth is checked against textbook relations the estimators are not involved in:
the volumetric p/z line (domain reference §2.2; Havlena-Odeh form F = G E_g + W_e, §2.5),
the Ramagost-Farshad corrected p/z line for rock and water expansion (§2.4), conservation
of gas between two tanks, the static gas column (dp/dh = rho_g/144), and the condensate
recombination of the engine's own PVT module (Craft & Hawkins constants, from memory).
A case whose truth failed these checks would grade the engine against a wrong answer.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

from benchmarks.accuracy_cases import CASES, NOISE_PSI, build_case
from server.engine.pvt.condensate import condensate_gas_equivalent_scf_per_stb, wellstream_gravity
from server.engine.pvt.gas import gas_density_lb_per_ft3, z_factor

SEED = 1
RB_FT3 = 5.614583  # ft3 per barrel (exact: 42 US gal of 231 in3)


@pytest.fixture(scope="module")
def built():
    return {c.name: build_case(c.name, SEED) for c in CASES}


def _pz(truth, p_psia):
    p = np.asarray(p_psia, float)
    return p / np.asarray(z_factor(p, truth.temperature_degF, truth.reservoir_fluid))


def _line_giip(gp_bscf, y):
    slope, intercept = np.polyfit(gp_bscf, y, 1)
    return -intercept / slope


def _tank1_surveys(truth):
    m = truth.survey_tank == 1
    return truth.survey_gp_bscf[m], truth.survey_p_datum_psia[m]


def _bg_rcf_per_scf(truth, p_psia):
    """B_g = (p_sc/T_sc) z T/p at 14.696 psia and 60 degF (common practice)."""
    p = np.asarray(p_psia, float)
    z = np.asarray(z_factor(p, truth.temperature_degF, truth.reservoir_fluid))
    return 14.696 / 519.67 * z * (truth.temperature_degF + 459.67) / p


def _wgr(inputs, months):
    return inputs.production_water_stb[months].sum() / inputs.production_gas_mscf[months].sum() * 1e3


@pytest.mark.parametrize("name", [c.name for c in CASES])
def test_inputs_carry_the_stated_noise_and_a_volumetric_range_around_the_mapped_volume(built, name):
    b = built[name]
    inp, truth = b.inputs, b.truth
    assert inp.n_surveys >= 8 and np.all(np.diff(inp.survey_t_days) >= 0)
    # Gaussian noise of NOISE_PSI at the gauge (values rounded to 0.1 psi): mean and spread
    # within their 1-in-10,000 sampling limits (normal mean, chi-square variance).
    e = inp.survey_p_psia - truth.survey_p_gauge_psia
    n = e.size
    assert abs(e.mean()) < 3.9 * NOISE_PSI / np.sqrt(n)
    lo, hi = stats.chi2.ppf([5e-5, 1 - 5e-5], n - 1)
    assert lo / (n - 1) < np.var(e, ddof=1) / NOISE_PSI**2 < hi / (n - 1)
    mapped = truth.total_giip_bscf  # the map covers every tank
    assert inp.volumetric.p90_bscf < mapped < inp.volumetric.p10_bscf


@pytest.mark.parametrize("name", ["volumetric", "little_depletion", "gauges_off_datum"])
def test_depletion_drive_truth_is_the_exact_pz_line(built, name):
    # Domain reference §2.2: p/z = (p_i/z_i)(1 - G_p/G) for a volumetric dry-gas tank, so the
    # line through the noise-free survey points crosses zero at the true GIIP.
    truth = built[name].truth
    gp, p = _tank1_surveys(truth)
    assert _line_giip(gp, _pz(truth, p)) == pytest.approx(truth.giip_bscf, rel=1e-3)
    if name == "little_depletion":
        assert truth.produced_frac < 0.10
    else:
        assert 0.35 < truth.produced_frac < 0.75


def test_condensate_truth_is_the_wet_gas_line_and_the_engine_recombines_the_same_fluid(built):
    b = built["condensate"]
    inp, truth = b.inputs, b.truth
    gp, p = _tank1_surveys(truth)
    assert _line_giip(gp, _pz(truth, p)) == pytest.approx(truth.giip_bscf, rel=1e-3)
    # What the app is given (separator gas, condensate, API, separator gravity) recombines,
    # by the engine's PVT functions, to the forward model's well stream and wet gas.
    sep_mmscf = inp.production_gas_mscf.sum() / 1e3
    yield_stb_per_mmscf = inp.production_condensate_stb.sum() / sep_mmscf
    assert yield_stb_per_mmscf == pytest.approx(truth.condensate_yield_stb_per_mmscf, rel=1e-3)
    gw = wellstream_gravity(inp.fluid.gas_gravity, yield_stb_per_mmscf, inp.condensate_api)
    assert gw == pytest.approx(truth.reservoir_fluid.gas_gravity, rel=2e-3)
    assert gw > inp.fluid.gas_gravity
    ge = float(condensate_gas_equivalent_scf_per_stb(inp.condensate_api))
    wet_bscf = (inp.production_gas_mscf.sum() + ge * inp.production_condensate_stb.sum() / 1e3) / 1e6
    assert wet_bscf == pytest.approx(truth.history.gp_bscf[-1], rel=1e-3)


def test_overpressured_truth_is_the_corrected_line_and_the_plain_line_over_reads(built):
    # Ramagost & Farshad (domain reference §2.4): (p/z)[1 - c_e (p_i - p)] is linear in G_p
    # and crosses zero at G.
    truth = built["overpressured"].truth
    gp, p = _tank1_surveys(truth)
    pz = _pz(truth, p)
    corrected = pz * (1.0 - truth.ce_per_psi * (truth.initial_pressure_psia - p))
    assert _line_giip(gp, corrected) == pytest.approx(truth.giip_bscf, rel=1e-3)
    assert 1e-5 <= truth.ce_per_psi <= 2e-5
    assert truth.initial_pressure_psia / truth.datum_depth_ft >= 0.66  # well above hydrostatic
    assert _line_giip(gp, pz) > 1.05 * truth.giip_bscf  # what the case is about


@pytest.mark.parametrize(
    ("name", "over_read"),
    [
        ("strong_aquifer_water", (1.10, 3.0)),
        ("strong_aquifer_dry", (1.10, 3.0)),
        ("weak_aquifer_water", (1.03, 1.30)),
        ("weak_aquifer_dry", (1.03, 1.30)),
    ],
)
def test_aquifer_truth_balances_with_a_growing_influx(built, name, over_read):
    b = built[name]
    inp, truth = b.inputs, b.truth
    h = truth.history
    we = h.we_rb
    # Influx is positive and grows with the pressure drop.
    assert np.all(we > 0) and np.all(np.diff(we) >= -1e-6 * we[-1])
    assert we[-1] > 2.0 * we[we.size // 4] > 0
    # Havlena-Odeh (domain reference §2.5): G_p B_g = G (B_g - B_gi) + W_e, with the water
    # that stayed in the tank as W_e; G from it at every month past 10 % of the final Gp.
    bg = _bg_rcf_per_scf(truth, h.p1_psia)
    bgi = _bg_rcf_per_scf(truth, truth.initial_pressure_psia)
    late = h.gp_bscf > 0.1 * h.gp_bscf[-1]
    g = (h.gp_bscf * 1e9 * bg - we * RB_FT3)[late] / (bg - bgi)[late] / 1e9
    assert np.allclose(g, truth.giip_bscf, rtol=1e-3)
    # The straight line through the noise-free surveys over-reads as such an aquifer does.
    gp, p = _tank1_surveys(truth)
    ratio = _line_giip(gp, _pz(truth, p)) / truth.giip_bscf
    assert over_read[0] < ratio < over_read[1]
    # Water: produced = condensed water plus the stated share of each month's influx.
    condensed = inp.production_water_stb - truth.water_share * np.diff(np.concatenate([[0.0], we]))
    assert np.all(condensed > 0) and np.median(condensed / inp.production_gas_mscf * 1e3) < 2.0
    first, last = slice(0, 12), slice(-12, None)
    if name.endswith("water"):  # the water-gas ratio rises (docs/flags.md: twice, and 5 stb/MMscf)
        assert truth.water_share > 0
        assert _wgr(inp, last) >= max(2.0 * _wgr(inp, first), 5.0)
    else:
        assert truth.water_share == 0 and _wgr(inp, last) < 2.0


def test_compartment_truth_conserves_gas_and_the_late_well_reads_near_initial(built):
    truth = built["compartments"].truth
    h = truth.history
    g2 = truth.total_giip_bscf - truth.giip_bscf
    assert 0.5 * truth.giip_bscf <= g2 <= truth.giip_bscf
    # Two volumetric tanks: gas left in each is G_k (p/z)_k / (p_i/z_i); with what was produced
    # it adds up to the total at every month.
    pzi = _pz(truth, truth.initial_pressure_psia)
    left = (truth.giip_bscf * _pz(truth, h.p1_psia) + g2 * _pz(truth, h.p2_psia)) / pzi
    assert np.allclose(left + h.gp_bscf, truth.total_giip_bscf, rtol=1e-3)
    assert np.all(h.p2_psia > h.p1_psia)  # the neighbour lags
    # The late well (tank 2) has seen at most a quarter of the main tank's drop when drilled
    # (docs/flags.md, near_initial_ratio 0.25), and it is surveyed more than once.
    late = truth.survey_tank == 2
    assert late.sum() >= 2
    t_first = truth.survey_t_days[late][0]
    assert truth.survey_t_days[late].min() > 0.5 * truth.survey_t_days.max() - 0.5 * truth.survey_t_days.min()
    grid = truth.survey_t_days[0] + np.concatenate([[0.0], h.t_days])
    pi = truth.initial_pressure_psia
    p1 = np.interp(t_first, grid, np.concatenate([[pi], h.p1_psia]))
    drop2 = pzi - _pz(truth, truth.survey_p_datum_psia[late][0])
    assert drop2 <= 0.25 * (pzi - _pz(truth, p1))
    # The truth is the main tank's volume: the line through its own wells' noise-free surveys,
    # which gas leaking in from the neighbour lifts a little, stays within the 15 % target.
    gp, p = _tank1_surveys(truth)
    assert truth.giip_bscf < _line_giip(gp, _pz(truth, p)) < 1.15 * truth.giip_bscf


def test_gauge_pressures_follow_the_static_gas_column(built):
    b = built["gauges_off_datum"]
    inp, truth = b.inputs, b.truth
    dh = inp.datum_depth_ft - inp.survey_gauge_depth_ft
    assert np.all((dh >= 500.0) & (dh <= 2500.0))
    # dp/dh = rho_g/144 [psi/ft]; one step at the mean pressure of the column (the simulator
    # integrates in 100 steps), rho_g = p M/(z R T).
    dp = truth.survey_p_datum_psia - truth.survey_p_gauge_psia
    p_mid = truth.survey_p_datum_psia - dp / 2
    z = z_factor(p_mid, truth.temperature_degF, truth.reservoir_fluid)
    rho = gas_density_lb_per_ft3(p_mid, truth.temperature_degF, z, truth.reservoir_fluid.gas_gravity)
    assert np.allclose(dp, rho * dh / 144.0, rtol=5e-3)
    # The offsets matter: gauge pressures taken as datum pressures would misplace p/z by more
    # than the survey noise.
    off = _pz(truth, truth.survey_p_datum_psia) - _pz(truth, truth.survey_p_gauge_psia)
    assert off.mean() > 3 * NOISE_PSI
