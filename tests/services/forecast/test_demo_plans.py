"""The demo portfolio's plans: every field has one the form's checks accept, two fields add
compression, one field has a planned well, one field (Lowmarsh Deep) has a licence end. Which
way each forecast then stops is the engine's result, checked in test_demo_forecasts.py."""

from sqlalchemy import select

from server.db.models import Field, FieldPlan, PlannedWell
from server.services.demo import PORTFOLIO, load_demo
from server.services.fieldwork.plan import PLAN_KEYS, plan_problems


def test_every_demo_field_has_an_acceptable_plan(session):
    load_demo(session)
    fields = {f.id: f for f in session.execute(select(Field)).scalars()}
    plans = {fields[p.field_id].name: p for p in session.execute(select(FieldPlan)).scalars()}
    assert set(plans) == {s.name for s in PORTFOLIO}
    for name, p in plans.items():
        f = next(f for f in fields.values() if f.name == name)
        assert plan_problems(f, {k: getattr(p, k) for k in PLAN_KEYS}) == {}, name
        assert 0 < p.economic_limit_mscf_per_day < p.plateau_rate_mscf_per_day or name == "Cindervale"
    assert sorted(n for n, p in plans.items() if p.compression_start_date) == ["Brackenhold", "Hollinsway"]
    wells = session.execute(select(PlannedWell)).scalars().all()
    assert [(fields[w.field_id].name, w.name, w.compartment) for w in wells] == [
        ("Gorsewick", "GRW-4", "East")
    ]
    assert [n for n, p in plans.items() if p.licence_end_date] == ["Lowmarsh Deep"]
