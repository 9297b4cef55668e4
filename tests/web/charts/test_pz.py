"""The p/z chart builder is a pure function of the stored result: check its trace data."""

import pytest

from server.engine.analysis import analyse_field
from server.services.serialize import to_jsonable
from server.web.charts.pz import pz_figure
from server.web.display import DisplayUnits
from tests.engine.forward_histories import history_inputs, with_choices

VOL = {"low_bscf": 80.0, "best_bscf": 100.0, "high_bscf": 125.0}


def _detail(**kw):
    inputs, _ = history_inputs(**kw)
    return to_jsonable(analyse_field(inputs))


def _by_name(fig):
    return {t["name"]: t for t in fig["data"]}


def test_points_by_well_set_aside_points_with_reasons_line_band_and_abandonment():
    d = _detail(seed=21, noise_psi=12.0, offsets_psi={4: -280.0}, excluded={9: "tool failure"})
    fig = pz_figure(d, VOL)
    t = _by_name(fig)
    pz = d["pz"]
    assert len(t["W-1"]["x"]) + len(t["W-2"]["x"]) == pz["n_used"]
    excl = t["set aside by the engineer"]
    assert len(excl["x"]) == 1 and "tool failure" in excl["text"][0]
    out = t["outlier (rule)"]
    assert len(out["x"]) == 1 and "below the line through the used points" in out["text"][0]
    assert out["y"][0] == d["prepared"]["points"][4]["pz_psia"]
    line = next(v for k, v in t.items() if k.startswith("fitted line"))
    assert line["x"] == [0.0, pz["giip_bscf"]] and line["y"] == [pz["intercept_psia"], 0.0]
    band = t["95 % confidence band of the line"]
    assert band["fill"] == "tonexty" and band["x"] == pz["band"]["gp_bscf"]
    assert band["y"] == [max(v, 0.0) for v in pz["band"]["high_psia"]]  # p/z >= 0 on the chart
    lower = fig["data"][fig["data"].index(band) - 1]
    assert lower["y"] == [max(v, 0.0) for v in pz["band"]["low_psia"]] and lower["showlegend"] is False
    assert min(pz["band"]["low_psia"]) < 0.0 and min(lower["y"]) == 0.0
    star = next(v for k, v in t.items() if k.startswith("abandonment, EUR"))
    assert star["x"] == [pz["eur_bscf"]] and star["y"] == [pz["abandonment_pz_psia"]]
    level = next(v for k, v in t.items() if k.startswith("abandonment p/z"))  # the line meets it at EUR
    assert level["x"] == [0.0, pz["eur_bscf"]] and level["y"] == [pz["abandonment_pz_psia"]] * 2
    rng = next(v for k, v in t.items() if k.startswith("GIIP P90-P10"))
    boot = pz["giip_range_bscf"]["bootstrap"]
    assert rng["error_x"]["array"] == [pytest.approx(boot["p10"] - pz["giip_bscf"])]
    assert rng["error_x"]["arrayminus"] == [pytest.approx(pz["giip_bscf"] - boot["p90"])]
    assert fig["layout"]["shapes"][0]["x0"] == 80.0 and any(k.startswith("volumetric") for k in t)
    assert "measured p/z (uncorrected)" not in t and fig["layout"]["yaxis"]["title"]["text"] == "p/z (psia)"
    x_title = fig["layout"]["xaxis"]["title"]["text"]
    assert x_title == "Cumulative gas produced, Gp, separator gas (Bscf (60 °F, 14.696 psia))"


def test_corrected_points_and_the_uncorrected_line_when_ce_applies():
    inputs, _ = history_inputs(seed=1, pi_psia=9000.0, ce_per_psi=14.333e-6)
    d = to_jsonable(analyse_field(with_choices(inputs, overpressure_mode="fitted")))
    t = _by_name(pz_figure(d))
    status = {s["index"]: s for s in d["pz"]["points"]}
    w1 = [p for p in d["prepared"]["points"] if p["well"] == "W-1"]
    assert t["W-1"]["y"] == [status[p["index"]]["corrected_pz_psia"] for p in w1]
    raw = t["measured p/z (uncorrected)"]
    assert sorted(raw["y"]) == sorted(p["pz_psia"] for p in d["prepared"]["points"])
    unc = next(v for k, v in t.items() if k.startswith("uncorrected line"))
    assert unc["x"] == [0.0, d["pz_uncorrected"]["giip_bscf"]] and unc["line"]["dash"] == "dash"
    assert any(k.endswith("(corrected)") for k in t)
    # the abandonment level is the corrected p/z there, and the line meets it at EUR
    level = next(v for k, v in t.items() if k.startswith("abandonment p/z (corrected)"))
    assert level["y"] == [d["pz"]["abandonment_pz_psia"]] * 2 and level["x"][1] == d["pz"]["eur_bscf"]
    fitted = next(v for k, v in t.items() if k.startswith("fitted line"))
    (g, a) = (fitted["x"][1], fitted["y"][0])
    assert a * (1 - d["pz"]["eur_bscf"] / g) == pytest.approx(d["pz"]["abandonment_pz_psia"], rel=1e-9)


def test_refused_result_draws_the_points_only():
    d = _detail(months=24, survey_every_months=4, rate_mscf_d=8000.0)
    assert d["status"] == "refused"
    t = _by_name(pz_figure(d, VOL))
    assert set(t) == {"W-1", "W-2", "volumetric 80-125 Bscf"}
    assert "included" not in t["W-1"]["text"][0]
    assert pz_figure({})["data"] == []


# 1 psi = 6.894757 kPa (NIST SP 811, B.8); 1 ft = 0.3048 m exactly. A standard cubic foot at
# 60 °F / 14.696 psia holds fewer moles than at 15 °C / 101.325 kPa by the ideal-gas ratio.
KPA_PER_PSI = 6.894757
T60F_K = (60.0 - 32.0) / 1.8 + 273.15
M3_ISO_PER_SCF = 0.3048**3 * (288.15 / T60F_K) * (14.696 * KPA_PER_PSI / 101.325)


def test_si_display_converts_every_coordinate_and_names_the_units():
    d = _detail(seed=21, noise_psi=12.0, offsets_psi={4: -280.0}, excluded={9: "tool failure"})
    oil = _by_name(pz_figure(d, VOL))
    fig = pz_figure(d, VOL, DisplayUnits("si"))
    si = _by_name(fig)
    assert fig["layout"]["yaxis"]["title"]["text"] == "p/z (kPa)"
    assert "10⁶ m³ (15 °C, 101.325 kPa)" in fig["layout"]["xaxis"]["title"]["text"]
    gas = M3_ISO_PER_SCF * 1e9 / 1e6  # 10^6 m3 per Bscf
    for name in ("W-1", "set aside by the engineer"):
        assert si[name]["x"] == pytest.approx([x * gas for x in oil[name]["x"]], rel=1e-5)
        assert si[name]["y"] == pytest.approx([y * KPA_PER_PSI for y in oil[name]["y"]], rel=1e-6)
    assert "tool failure" in si["set aside by the engineer"]["text"][0] and "kPa" in si["W-1"]["text"][0]
    line = next(v for k, v in si.items() if k.startswith("fitted line"))
    assert line["x"][1] == pytest.approx(d["pz"]["giip_bscf"] * gas, rel=1e-5) and "10⁶ m³" in line["name"]
    assert fig["layout"]["shapes"][0]["x0"] == pytest.approx(80.0 * gas, rel=1e-5)
    assert f"volumetric {80 * gas:.0f}-{125 * gas:.0f} 10⁶ m³" in si  # 2261-3533
