"""A young field through the real path (rows -> recompute -> stored estimate -> reserves review):
its p/z has fallen too little for material balance, so the stored headline is its volumetric
estimate, and the annual review books that basis (not "none"). The numbers themselves are
checked in tests/engine/headline/test_volumetric_basis.py; here the wiring, on both databases."""

import datetime as dt

import pytest

from server.db.models import User
from server.services.audit import Actor
from server.services.jobs import queue as jobs
from server.services.jobs import runner
from server.services.portfolio.rows import latest_estimates
from server.services.reserves import views, workflow
from tests.factories import add_volumetric_history, make_field


def test_a_young_field_stores_and_books_its_volumetric_estimate(db):
    with db.session() as s:
        f = make_field(s, name="Tenterfold")  # mapped 80 / 100 / 125 Bscf
        add_volumetric_history(s, f, end=dt.date(2012, 12, 1), rate_mscf_d=5000.0)  # p/z down ~5 %
        jobs.enqueue_field_recompute(s, [f.id], reason="test")
        fid = f.id
    runner.drain(db)
    with db.session() as s:
        est = latest_estimates(s, [fid])[fid]
        assert (est.status, est.basis_model, est.basis_source) == ("ok", "volumetric", "automatic")
        basis = est.detail["basis"]
        assert (basis["giip_low_bscf"], basis["giip_bscf"], basis["giip_high_bscf"]) == (80.0, 100.0, 125.0)
        u = User(
            username="eng-y",
            display_name="eng-y",
            role="engineer",
            is_active=True,
            failed_logins=0,
            password_hash="x",
            all_assets=True,
        )
        s.add(u)
        s.flush()
        review = workflow.create_review(s, Actor(u.id, "eng-y"), "Year-end 2013", dt.date(2013, 12, 31))
        row = next(r for r in views.field_bookings(s, review) if r.field_name == "Tenterfold")
        assert row.volume_source == "basis" and row.basis_model == "volumetric"
        produced = row.produced_gas_bscf
        assert produced == pytest.approx(est.cumulative_gas_bscf, rel=1e-6)
        assert (row.booked_low_bscf, row.booked_best_bscf, row.booked_high_bscf) == pytest.approx(
            (
                basis["eur_low_bscf"] - produced,
                basis["eur_bscf"] - produced,
                basis["eur_high_bscf"] - produced,
            )
        )
