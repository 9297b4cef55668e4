"""`tankbook analyse --volumetrics`: the offline estimate raises the same flags as the app
(issue 12, point 8). The same upload files go once through the app (upload, queued recompute,
stored estimate) and once through the offline reader; the flags must be identical."""

import datetime as dt
from pathlib import Path

import pytest
from sqlalchemy import select

from server.db.models import Field
from server.engine.analysis import analyse_field
from server.services.ingest.offline import OfflineInputError, load_offline_field
from server.services.ingest.service import store_upload
from server.services.jobs import runner
from server.services.jobs.recompute import current_estimate
from server.services.serialize import to_jsonable

FIXTURES = Path(__file__).resolve().parents[2] / "fixtures" / "analyse"
TODAY = dt.date(2026, 12, 1)
# Ashcombe is the forward model's 100 Bscf tank (make_fixtures.py). Its older mapping agrees;
# the newest, which the app compares with, puts the whole dynamic range below its low case.
VOLUMETRICS = (
    "field,estimate_date,author,giip_low_bscf,giip_best_bscf,giip_high_bscf\n"
    "Ashcombe,2009-06-30,geo,90,100,115\n"
    "Ashcombe,2015-06-30,geo,130,150,180\n"
    "Brackley,2015-06-30,geo,50,60,70\n"
)
KINDS = ("fields", "wells", "fluids", "surveys", "production")


@pytest.fixture
def volumetrics_file(tmp_path):
    path = tmp_path / "volumetrics.csv"
    path.write_text(VOLUMETRICS)
    return path


def _offline(volumetrics=None, **kw):
    files = {k: FIXTURES / f"{k}.csv" for k in KINDS}
    return load_offline_field(**files, volumetrics=volumetrics, field_name="Ashcombe", today=TODAY, **kw)


def test_offline_flags_are_the_apps_flags(db, session, volumetrics_file):
    for kind in KINDS:
        result = store_upload(
            db, kind=kind, data=(FIXTURES / f"{kind}.csv").read_bytes(), filename=f"{kind}.csv",
            today=TODAY, accept_warnings=True,
        )  # fmt: skip
        assert result.status == "committed", (kind, result.plan.report.as_dict()["problems"])
        if kind == "wells":  # the fixture's wells file lists Ashcombe's only (analyse reads one field)
            extra = b"field,well\nBrackley,B-1\n"
            assert (
                store_upload(db, kind="wells", data=extra, filename="w.csv", today=TODAY).status
                == "committed"
            )
    result = store_upload(db, kind="volumetrics", data=VOLUMETRICS.encode(), filename="v.csv", today=TODAY)
    assert result.status == "committed", result.plan.report.as_dict()
    runner.drain(db)
    field = session.execute(select(Field).where(Field.name == "Ashcombe")).scalar_one()
    stored = current_estimate(session, field.id)
    assert stored.status == "ok"

    offline = _offline(volumetrics_file)
    assert offline.inputs.volumetric.p50_bscf == 150.0  # the newest, as the app chooses
    analysis = analyse_field(offline.inputs)
    assert analysis.giip_best_bscf == pytest.approx(stored.giip_best_bscf, rel=1e-12)
    assert to_jsonable(list(analysis.flags)) == stored.flags
    codes = [f["code"] for f in stored.flags]
    assert "dynamic_below_volumetric" in codes  # the comparison the files alone could not make before
    # Without the volumetrics file the offline command cannot raise it (what issue 12 reported).
    assert "dynamic_below_volumetric" not in {f.code for f in analyse_field(_offline().inputs).flags}


def test_bad_volumetric_rows_are_refused_naming_the_row(tmp_path):
    bad = tmp_path / "v.csv"
    bad.write_text(
        "field,estimate_date,giip_low_bscf,giip_best_bscf,giip_high_bscf\nAshcombe,2015-06-30,150,130,180\n"
    )
    with pytest.raises(OfflineInputError, match=r"GIIP must be ordered low ≤ best ≤ high \(row 2\)"):
        _offline(bad)
    other = tmp_path / "other.csv"
    other.write_text(
        "field,estimate_date,giip_low_bscf,giip_best_bscf,giip_high_bscf\nBrackley,2015-06-30,1,2,3\n"
    )
    loaded = _offline(other)
    assert loaded.inputs.volumetric is None
    assert "no volumetric estimate for field 'Ashcombe'" in loaded.reports[f"{other} (rows)"]["notes"][0]
