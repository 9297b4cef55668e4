"""Chart builders of the data pages (web/charts/fluid.py), tested by their trace data in both unit systems."""

from __future__ import annotations

import pytest

from server.engine.units import OILFIELD_60F
from server.services.portfolio.fluid_data import FluidCurve, FluidView, LabPointRow, pressure_grid_psia
from server.web.charts.fluid import fluid_figures
from server.web.display import DisplayUnits

KPA_PER_PSI = 6.894757293168361  # NIST SP 811
# Check values 1 and 3 (docs/domain-reference.md §8): Bg coefficients at 60 °F/14.696 psia
# (ft³/scf per z T[°R]/p[psia]) and at 15 °C/101.325 kPa (rm³/sm³ per z T[K]/p[kPa]).
BG_OILFIELD, BG_ISO = 0.0282795, 0.351640
T_DEGF = 200.0


def _view(lab: bool) -> FluidView:
    p = (14.69595, 2000.0, 5000.0)
    z = (0.998, 0.89735, 1.00642)  # 2000 and 5000 psia: the check values of §1 (γ 0.65, 200 °F)
    bg = tuple(BG_OILFIELD * zz * (T_DEGF + 459.67) / pp for pp, zz in zip(p, z, strict=True))
    used = (0.999, 0.9, 1.01) if lab else None
    curve = FluidCurve(
        p,
        z,
        bg,
        used,
        tuple(BG_OILFIELD * zz * (T_DEGF + 459.67) / pp for pp, zz in zip(p, used, strict=True))
        if lab
        else None,
        "Dranchuk-Abou-Kassem z",
    )
    points = [LabPointRow(3000.0, 0.9, None, 0.9, 0.00563, 0.888)] if lab else []
    return FluidView(
        0.65, 0, 0, 0, None, 0.65, "dak", "Dranchuk-Abou-Kassem", "sutton", "DAK", lab,
        T_DEGF, 5000.0, 1000.0, OILFIELD_60F.label, points, curve, [], [],
    )  # fmt: skip


def test_oilfield_traces_are_the_stored_curve():
    z_fig, bg_fig = fluid_figures(_view(lab=False), DisplayUnits("oilfield", OILFIELD_60F))
    (zt,) = z_fig["data"]
    assert zt["x"] == [14.69595, 2000.0, 5000.0] and zt["y"] == [0.998, 0.89735, 1.00642]
    (bt,) = bg_fig["data"]
    # Bg at 2000 psia = 1.49078 rb/Mscf (check value 13) = 0.0083701 rcf/scf
    assert bt["y"][1] == pytest.approx(1.49078 * 5.614583 / 1000, rel=1e-4)
    assert "rcf/scf (60 °F, 14.696 psia)" in bg_fig["layout"]["yaxis"]["title"]["text"]
    assert z_fig["layout"]["xaxis"]["title"]["text"] == "pressure, psia"
    assert z_fig["layout"]["title"]["text"] == "z-factor at 200 °F"


def test_si_traces_in_kpa_and_reservoir_m3_per_iso_m3():
    z_fig, bg_fig = fluid_figures(_view(lab=True), DisplayUnits("si", OILFIELD_60F))
    names = [t["name"] for t in z_fig["data"]]
    assert names == ["z: Dranchuk-Abou-Kassem z", "z used by the estimate (lab table)", "laboratory"]
    assert z_fig["data"][0]["x"][2] == pytest.approx(5000 * KPA_PER_PSI)
    assert z_fig["data"][0]["y"] == [0.998, 0.89735, 1.00642]  # z has no unit
    assert z_fig["data"][2]["x"] == [pytest.approx(3000 * KPA_PER_PSI)] and z_fig["data"][2]["y"] == [0.9]
    bg = bg_fig["data"][0]["y"][1]
    assert bg == pytest.approx(BG_ISO * 0.89735 * (T_DEGF + 459.67) / 1.8 / (2000 * KPA_PER_PSI), rel=2e-6)
    assert bg_fig["data"][1]["line"]["dash"] == "dash" and bg_fig["data"][2]["mode"] == "markers"
    assert "rm³/m³ (15 °C, 101.325 kPa)" in bg_fig["layout"]["yaxis"]["title"]["text"]
    assert z_fig["layout"]["xaxis"]["title"]["text"] == "pressure, kPa"


def test_no_curve_no_figures():
    v = _view(lab=False)
    assert fluid_figures(FluidView(**{**v.__dict__, "curve": None}), DisplayUnits()) is None


def test_pressure_grid_runs_from_one_atmosphere_to_the_initial_pressure_through_round_values():
    g = pressure_grid_psia(5000.0)
    assert g[0] == pytest.approx(14.69595) and g[-1] == 5000.0 and 2000.0 in g
    assert (g[1:] > g[:-1]).all() and 95 <= g.size <= 105
    odd = pressure_grid_psia(3333.0)
    assert odd[-1] == 3333.0 and set(odd[1:-1] % 50) == {0.0}  # a step of 50 psi: about 67 points
