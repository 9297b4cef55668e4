"""The upload preview shows stored values in the reader's display units (the file's own units
are reported apart, as the file has them)."""

from __future__ import annotations

import re

from server.engine.units import OILFIELD_60F
from server.web.display import DisplayUnits
from server.web.pages.upload_display import display_preview, shown_value
from tests.factories import field_with_estimate

KPA_PER_PSI = 6.894757293168361  # NIST SP 811
SURVEY = b"field,well,survey_date,pressure_psig,gauge_depth_ft\nUpland,W-2,2017-01-15,1485.304,9800\n"


def _check(client, data):
    token = re.search(r'name="csrf_token" value="([^"]+)"', client.get("/upload").text).group(1)
    return client.post(
        "/upload", data={"kind": "surveys", "csrf_token": token}, files={"file": ("s.csv", data, "text/csv")}
    )


def _changes(html: str) -> str:
    return re.search(r'<table class="grid" id="changes">.*?</table>', html, re.S).group(0)


def test_shown_value_by_stored_name():
    si = DisplayUnits("si", OILFIELD_60F)
    assert shown_value(si, "pressure_psia", 1500.0) == ("pressure", f"{1500 * KPA_PER_PSI:,.0f} kPa")
    assert shown_value(si, "gauge_depth_ft", 10000.0) == ("gauge_depth", "3,048.0 m")
    assert shown_value(si, "rock_volume_ft3", 43560.0e6)[1] == "1,233.482 10⁶ m³"
    assert shown_value(si, "quality", "good") == ("quality", "good")
    assert shown_value(si, "excluded", False) == ("excluded", "False")
    assert shown_value(DisplayUnits(), "gas_mscf", 12345.0) == ("gas", "12,345 Mscf (60 °F, 14.696 psia)")
    preview = {"changes": [{"action": "add", "before": None, "after": {"pressure_psia": 100.0, "well": "W"}}]}
    assert display_preview(preview, si)["changes"][0]["after"] == {"pressure": "689 kPa", "well": "W"}


def test_upload_preview_in_oilfield_and_si(db, client, admin_client):
    field_with_estimate(db)
    page = _check(client, SURVEY)
    assert page.status_code == 200, page.text[-800:]
    assert "pressure=1,500.0 psia" in _changes(page.text) and "gauge_depth=9,800 ft" in _changes(page.text)
    assert "psig" in page.text  # the file's own unit, as the file has it
    assert admin_client.put("/api/settings", json={"display_units": "si"}).status_code == 200
    changes = _changes(_check(client, SURVEY).text)
    assert f"pressure={1500 * KPA_PER_PSI:,.0f} kPa" in changes and "gauge_depth=2,987.0 m" in changes
    assert "psia" not in changes


def test_the_atmosphere_input_names_its_value_in_si_too(client, admin_client):
    assert 'id="atmosphere-display"' not in client.get("/upload").text
    admin_client.put("/api/settings", json={"display_units": "si"})
    assert "14.696 psia = 101.325 kPa" in client.get("/upload").text
