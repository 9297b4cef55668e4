"""Shared by the field page's tests: a field with a scattered history and its estimate, and
helpers that read the page."""

import html
import json
import re

import pytest
from sqlalchemy import select

from server.db.models import Estimate, PressureSurvey
from server.services.jobs import queue as jobs
from server.services.jobs import runner
from tests.factories import add_volumetric_history, make_field

# A fixed scatter (psi) on the noise-free surveys, so that every survey moves the fit a little
# and none is an outlier (the largest is under 2 standard deviations of the set).
SCATTER_PSI = (14.0, -11.0, 6.0, -17.0, 9.0, 3.0, -8.0, 12.0, -5.0, -13.0, 16.0, -2.0, 7.0, 22.0)


@pytest.fixture
def fid(db):
    with db.session() as s:
        f = make_field(s, name="Harrow Reach")
        add_volumetric_history(s, f)
        surveys = s.execute(select(PressureSurvey).order_by(PressureSurvey.survey_date)).scalars().all()
        for sv, dp in zip(surveys, SCATTER_PSI, strict=False):
            sv.pressure_psia += dp
        jobs.enqueue_field_recompute(s, [f.id], reason="test setup")
        field_id = f.id
    runner.drain(db)
    return field_id


def text_of(page: str) -> str:
    page = re.sub(r'<script type="application/json".*?</script>', "", page, flags=re.S)
    return html.unescape(re.sub(r"\s+", " ", re.sub(r"<[^>]+>", " ", page)))


def latest(db, fid) -> Estimate:
    with db.session() as s:
        est = s.execute(
            select(Estimate).where(Estimate.field_id == fid).order_by(Estimate.id.desc())
        ).scalar()
        s.expunge(est)
        return est


def surveys_of(db, fid) -> list[PressureSurvey]:
    with db.session() as s:
        rows = s.execute(select(PressureSurvey).order_by(PressureSurvey.survey_date)).scalars().all()
        for r in rows:
            s.expunge(r)
        return rows


def figure(page: str, name: str) -> dict:
    m = re.search(rf'<script type="application/json" id="{name}">(.*?)</script>', page, re.S)
    return json.loads(m.group(1))


def giip_card(page: str) -> str:
    return re.search(r'id="giip-best">([^<]+)<', page).group(1)
