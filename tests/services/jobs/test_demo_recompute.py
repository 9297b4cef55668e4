"""The demo portfolio through the real path (rows -> recompute job -> stored estimate):
each field's stored flags are the ones its story calls for, and the clean fields carry
none (engine-level details are in tests/engine/diagnosis/test_demo_fields.py)."""

from sqlalchemy import select

from server.db.models import Field
from server.services.demo import load_demo
from server.services.jobs import runner
from server.services.portfolio.rows import latest_estimates

EXPECTED = {
    "Amberlode": set(),
    "Brackenhold": set(),
    "Cindervale": {"data_outliers"},
    "Dunmarrow": {"too_little_depletion"},
    "Emberline": {"overpressure_signature"},
    "Fallowmere": {"aquifer_signature"},
    # the connected volume (the basis) lies far below the mapped one: flagged (issue 12)
    "Gorsewick": {"compartment_signature", "dynamic_below_volumetric"},
    "Hollinsway": set(),
    "Ivorcombe": set(),
    "Juniper Knoll": set(),
    "Lowmarsh Deep": set(),
}


def test_demo_fields_are_flagged_for_their_stories(db):
    with db.session() as s:
        load_demo(s)
    runner.drain(db)
    with db.session() as s:
        fields = {f.name: f.id for f in s.execute(select(Field)).scalars()}
        est = latest_estimates(s, fields.values())
        stored = {name: est[fid] for name, fid in fields.items()}
    flags = {name: {f["code"] for f in e.flags} for name, e in stored.items()}
    for name, codes in EXPECTED.items():
        assert flags[name] == codes, (name, [f["reason"] for f in stored[name].flags])
    gorse = {f["code"]: f for f in stored["Gorsewick"].flags}["compartment_signature"]
    assert (
        gorse["severity"] == "alert" and "GRW-3" in gorse["reason"] and "near the initial" in gorse["reason"]
    )
    ember = {f["code"]: f for f in stored["Emberline"].flags}["overpressure_signature"]
    assert "0.66 psi/ft" in ember["reason"] and "correction is applied" in ember["reason"]
    assert "buildup" in stored["Cindervale"].flags[0]["reason"]
    # the headline's basis follows each story (issue 12, "Done when"), stored as plain columns
    basis = {name: (e.basis_model, e.basis_source) for name, e in stored.items()}
    assert basis["Gorsewick"] == ("connected_tank", "automatic")  # not the line through both groups
    assert basis["Fallowmere"][0].startswith("aquifer_") and basis["Fallowmere"][1] == "automatic"
    assert basis["Lowmarsh Deep"] == ("single_tank", "automatic")
    assert basis["Emberline"] == ("tank_ce", "engineer")  # the demo's own choice: ce fitted
    # too little depletion for material balance: the young field books its volumetric estimate
    assert basis["Dunmarrow"] == ("volumetric", "automatic") and stored["Dunmarrow"].status == "ok"
    assert stored["Dunmarrow"].line_giip_best_bscf is None  # no p/z line is shown as a value
    g = stored["Gorsewick"]
    assert g.giip_best_bscf < 0.75 * g.line_giip_best_bscf  # the connected volume, well below the line
    # the diagnosis is stored with the estimate: every model on the same surveys, ranked
    dg = stored["Gorsewick"].detail["diagnosis"]
    assert dg["comparison"]["preferred"] == "two_tank"
    assert {m["name"] for m in dg["models"]} >= {"single_tank", "tank_ce", "two_tank"}
