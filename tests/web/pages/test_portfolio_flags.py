"""The portfolio page shows each field's stored flags and where its dynamic estimate lies
against the volumetric range (wiring: the flags' numbers are tested in tests/engine)."""

import re

from server.db.models import Estimate
from tests.factories import make_field


def _estimate(field_id, giip, flags):
    return Estimate(
        field_id=field_id,
        method="pz-wls",
        status="ok",
        message="test",
        giip_best_bscf=giip,
        cumulative_gas_bscf=10.0,
        flags=flags,
        detail={},
        inputs_fingerprint="x" * 64,
        engine_version="test",
    )


def test_flags_and_volumetric_position_are_shown(db, client):
    flag = {
        "code": "dynamic_below_volumetric",
        "severity": "alert",
        "title": "Dynamic GIIP below the volumetric low case",
        "reason": "dynamic GIIP 62 Bscf (55-70) is below the volumetric low case 80 Bscf: <check>",
        "numbers": {},
    }
    with db.session() as s:
        low = make_field(s, name="Lowfield")
        ok = make_field(s, name="Okfield")
        s.add_all([_estimate(low.id, 62.0, [flag]), _estimate(ok.id, 101.0, [])])
        ids = low.id, ok.id
    html = client.get("/").text
    row = re.search(rf'<tr data-field-id="{ids[0]}"[^>]*>(.*?)</tr>', html, re.S).group(1)
    assert 'data-code="dynamic_below_volumetric"' in row
    assert "Dynamic GIIP below the volumetric low case" in row
    assert "&lt;check&gt;" in row and "<check>" not in row  # the reason is escaped
    assert "0.62 × best, below the low case" in row
    vol = [re.search(rf'data-col="volumetric_{c}">([^<]*)<', row).group(1) for c in ("low", "best", "high")]
    assert vol == ["80.0", "100.0", "125.0"]
    row = re.search(rf'<tr data-field-id="{ids[1]}"[^>]*>(.*?)</tr>', html, re.S).group(1)
    assert "1.01 × best, within the range" in row and "flag-list" not in row
