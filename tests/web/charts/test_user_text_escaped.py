"""Every figure builder escapes user text (issue 18, point 16): plotly.js reads a few HTML tags
in labels, legends and hover text (an <a href> becomes a clickable link), so field, well and
compartment names and reasons must reach it escaped. Before the fix the portfolio chart put
field names into its hover template as they were.

The pages are rendered with a field whose names are markup; every public builder of
server/web/charts (found by name, so a new one is covered) is wrapped where the pages call it,
and each figure it returned is searched for markup that came from the user."""

import datetime as dt
import importlib
import inspect
import pkgutil
from urllib.parse import quote

import pytest
from sqlalchemy import select, update

from server.db.models import Asset, Field, FieldPlan, PressureSurvey, ReservesReview, Well
from server.services.audit import Actor
from server.services.fieldwork.planrules import DEFAULT_PLAN
from server.services.jobs import queue as jobs
from server.services.jobs import runner
from server.services.reserves import workflow
from server.web import charts as charts_pkg
from server.web import pages as pages_pkg
from tests.factories import add_volumetric_history, add_well_test, make_field

FIELD = '<a href="https://attacker.example/">Field</a>'
WELL = "<img src=x onerror=alert(1)>W1"
COMPARTMENT = "<b>north</b>"
REASON = '<a href="https://attacker.example/r">gauge</a>'
ASSET = "<b>north</b> asset"
REVIEW = "<img src=x onerror=alert(1)>YE"
RAW = ("<a ", "<img", "</a>", "<b>north", 'attacker.example/">')  # the asset and review names too


def _builders() -> dict[str, object]:
    out = {}
    for mod in pkgutil.iter_modules(charts_pkg.__path__):
        module = importlib.import_module(f"{charts_pkg.__name__}.{mod.name}")
        for name, fn in inspect.getmembers(module, inspect.isfunction):
            if (
                fn.__module__ == module.__name__
                and not name.startswith("_")
                and name.endswith(("figure", "figures"))
            ):
                out[name] = fn
    return out


def _strings(value):
    if isinstance(value, str):
        yield value
    elif isinstance(value, dict):
        for k, v in value.items():
            yield from _strings(k)
            yield from _strings(v)
    elif isinstance(value, list | tuple):
        for v in value:
            yield from _strings(v)


@pytest.fixture
def hostile_field(db):
    with db.session() as s:
        f = make_field(s, name=FIELD, wells=(WELL, "W-2"))
        add_volumetric_history(s, f)
        s.execute(update(Well).where(Well.name == WELL).values(compartment=COMPARTMENT))
        s.execute(update(Well).where(Well.name == "W-2").values(compartment="south"))
        first = s.execute(select(PressureSurvey.id).order_by(PressureSurvey.id).limit(1)).scalar_one()
        s.execute(
            update(PressureSurvey)
            .where(PressureSurvey.id == first)
            .values(excluded=True, exclusion_reason=REASON)
        )
        # a plan and a well test, so the forecast and deliverability charts are drawn too
        s.add(FieldPlan(field_id=f.id, **DEFAULT_PLAN))
        hostile = s.execute(select(Well).where(Well.name == WELL)).scalar_one()
        add_well_test(
            s,
            hostile.id,
            test_date=dt.date(2016, 6, 1),
            static_pressure_psia=3000.0,
            points=((5000.0, 2600.0), (9000.0, 2000.0)),
        )
        jobs.enqueue_field_recompute(s, [f.id], reason=REASON)
        fid = f.id
    runner.drain(db)
    with db.session() as s:
        assert s.get(Field, fid).name == FIELD
    return fid


def _hostile_reviews(db, fid) -> str:
    """An approved review and a later draft of the hostile field, its asset and the reviews named
    in markup: the reserves movements page (waterfall, 2P history)."""
    with db.session() as s:
        s.execute(update(Asset).where(Asset.id == s.get(Field, fid).asset_id).values(name=ASSET))
        first = workflow.create_review(s, Actor(None, "t"), REVIEW + "1", dt.date(2016, 6, 30))
        # approved directly: the workflow's rules are not what this test is about
        s.execute(update(ReservesReview).where(ReservesReview.id == first.id).values(status="approved"))
        second = workflow.create_review(s, Actor(None, "t"), REVIEW + "2", dt.date(2016, 12, 31))
        return f"/reserves/{second.id}/movements?field={fid}&asset=" + quote(ASSET)


def test_every_figure_builder_escapes_user_text(db, client, hostile_field, monkeypatch):
    builders = _builders()
    assert {"portfolio_figure", "pz_figure", "cole_figure", "model_fits_figure"} <= set(builders)
    made: dict[str, list] = {name: [] for name in builders}

    def recording(name, fn):
        def wrapped(*args, **kwargs):
            out = fn(*args, **kwargs)
            made[name].append(out)
            return out

        return wrapped

    for mod in pkgutil.walk_packages(pages_pkg.__path__, f"{pages_pkg.__name__}."):
        module = importlib.import_module(mod.name)
        for name, fn in builders.items():
            if getattr(module, name, None) is fn:
                monkeypatch.setattr(module, name, recording(name, fn))
    fid = hostile_field
    with db.session() as s:  # a reserves review, so the booking chart of its field page is drawn
        rid = workflow.create_review(s, Actor(None, "test"), "hostile", dt.date(2030, 12, 31)).id
    paths = ("/", f"/fields/{fid}", f"/fields/{fid}/fluid", f"/reserves/{rid}/fields/{fid}")
    for path in (*paths, _hostile_reviews(db, fid)):
        r = client.get(path)
        assert r.status_code == 200, (path, r.status_code)
    assert all(made.values()), {n: len(v) for n, v in made.items()}
    escaped_seen = False
    for name, figures in made.items():
        for fig in figures:
            for text in _strings(fig):
                assert not any(raw in text for raw in RAW), (name, text)
                escaped_seen |= "&lt;a href" in text or "&lt;img" in text
    assert escaped_seen  # the names did reach the charts, escaped
