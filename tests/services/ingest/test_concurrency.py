"""Ten uploads at once lose nothing and duplicate nothing; a killed import leaves nothing.

These tests use their own migrated database (real connections from several threads or a
separate process), not the rolled-back test transaction.
"""

import datetime as dt
import textwrap
import threading

from sqlalchemy import func, select

from server.db.models import Estimate, Job, ProductionMonth, Upload
from server.services.ingest import service
from server.services.ingest.service import store_upload
from server.services.jobs import queue as jobs
from server.services.jobs import runner
from tests.services.conftest import N, kill_when

TODAY = dt.date(2026, 12, 1)
MONTHS = [dt.date(2014 + k // 12, k % 12 + 1, 1) for k in range(36)]


def _production_file(i: int) -> bytes:
    """Well W-i's own months plus the same shared rows (well W-10) in every file."""
    lines = ["field,well,month,gas_mscf"]
    lines += [f"Upland,W-{i},{m.isoformat()[:7]},{1000 + i}" for m in MONTHS]
    lines += [f"Upland,W-{N},{m.isoformat()[:7]},500" for m in MONTHS]
    return ("\n".join(lines) + "\n").encode()


def test_ten_concurrent_uploads_lose_nothing_and_duplicate_nothing(real_db):
    db, _ = real_db
    barrier = threading.Barrier(N)
    results, errors = {}, []

    def upload(i):
        try:
            barrier.wait(timeout=30)
            results[i] = store_upload(
                db, kind="production", data=_production_file(i), filename=f"{i}.csv", today=TODAY
            )
        except Exception as exc:  # reported below with the thread's number
            errors.append((i, repr(exc)))

    threads = [threading.Thread(target=upload, args=(i,)) for i in range(N)]
    for t in threads:
        t.start()
    for t in threads:
        t.join(timeout=120)
    assert not errors
    assert sorted(r.status for r in results.values()) == ["committed"] * N
    assert sum(len(r.plan.inserts) for r in results.values()) == N * len(MONTHS) + len(MONTHS)
    assert sorted(r.plan.unchanged for r in results.values()) == [0] + [len(MONTHS)] * (N - 1)
    with db.session() as s:
        total = s.execute(select(func.count()).select_from(ProductionMonth)).scalar_one()
        per_key = (
            s.execute(
                select(func.count())
                .select_from(ProductionMonth)
                .group_by(ProductionMonth.well_id, ProductionMonth.month)
            )
            .scalars()
            .all()
        )
        assert total == (N + 1) * len(MONTHS) and set(per_key) == {1}
        assert s.execute(select(func.count()).select_from(Upload)).scalar_one() == N
        # every upload planned its rows inside the lock, so one recompute job waits for the field
        assert (
            s.execute(select(func.count()).select_from(Job).where(Job.status == "queued")).scalar_one() == 1
        )
        fid = s.execute(select(Job.field_id)).scalars().first()
        jobs.enqueue_field_recompute(s, [fid], reason="again")
    # two workers at once: the job table hands each job to one of them; one estimate results
    ran = []
    workers = [threading.Thread(target=lambda: ran.append(runner.drain(db, f"w{k}"))) for k in range(2)]
    for w in workers:
        w.start()
    for w in workers:
        w.join(timeout=120)
    assert sum(ran) == 1
    with db.session() as s:
        assert s.execute(select(func.count()).select_from(Estimate)).scalar_one() == 1


CHILD = textwrap.dedent(
    """
    import datetime as dt, sys, time
    from server.db.session import Database
    from server.services.ingest import service
    from server.services.ingest.service import store_upload

    plan_fn, write_fn = service.PLANNERS["production"]

    def write_then_stop(session, plan, upload_id, actor):
        write_fn(session, plan, upload_id, actor)
        session.flush()
        print("ROWS WRITTEN", len(plan.inserts), flush=True)  # the controlled point: before COMMIT
        time.sleep(120)

    service.PLANNERS["production"] = (plan_fn, write_then_stop)
    data = open(sys.argv[2], "rb").read()
    store_upload(Database(sys.argv[1]), kind="production", data=data, filename="big.csv",
                 today=dt.date(2026, 12, 1))
    """
)


def test_a_process_killed_during_an_import_leaves_the_database_as_it_was(real_db, tmp_path):
    db, url = real_db
    path = tmp_path / "big.csv"
    lines = ["field,well,month,gas_mscf"]
    lines += [f"Upland,W-{i},{m.isoformat()[:7]},{100 + i}" for i in range(N) for m in MONTHS]
    path.write_text("\n".join(lines) + "\n")
    with db.session() as s:
        before = s.execute(select(func.count()).select_from(ProductionMonth)).scalar_one()
    kill_when(CHILD, [url, str(path)], "ROWS WRITTEN 360")
    db.dispose()  # fresh connections, as a restarted app would have
    with db.session() as s:
        assert s.execute(select(func.count()).select_from(ProductionMonth)).scalar_one() == before
        assert s.execute(select(func.count()).select_from(Upload)).scalar_one() == 0
    # the lock died with the process: the same file now goes in whole
    result = store_upload(db, kind="production", data=path.read_bytes(), filename="big.csv", today=TODAY)
    assert result.status == "committed" and len(result.plan.inserts) == N * len(MONTHS)


def test_a_small_upload_does_not_wait_behind_a_slow_files_parsing(real_db, monkeypatch):
    """Issue 18, point 7: the file is read and checked before the ingest lock is taken, so a
    two-row upload commits while another upload is still parsing. The slow parse is made
    deterministic (it waits for an event around the real reader), so nothing here measures time:
    a join timeout only keeps a regression from hanging the run."""
    db, _ = real_db
    real_read_table = service.read_table
    parsing, release = threading.Event(), threading.Event()

    def slow_read_table(data, **kw):
        if kw.get("filename") == "slow.csv":
            parsing.set()
            release.wait(timeout=120)
        return real_read_table(data, **kw)

    monkeypatch.setattr(service, "read_table", slow_read_table)
    results = {}

    def upload(name, data):
        results[name] = store_upload(db, kind="production", data=data, filename=name, today=TODAY)

    slow = threading.Thread(target=upload, args=("slow.csv", _production_file(1)))
    slow.start()
    try:
        assert parsing.wait(timeout=60)
        small = threading.Thread(
            target=upload,
            args=("small.csv", b"field,well,month,gas_mscf\nUpland,W-2,2014-01,7\nUpland,W-2,2014-02,7\n"),
        )
        small.start()
        small.join(timeout=60)
        assert not small.is_alive() and slow.is_alive()  # the small one finished during the slow parse
        assert results["small.csv"].status == "committed"
    finally:
        release.set()
        slow.join(timeout=120)
    assert results["slow.csv"].status == "committed"
    with db.session() as s:
        assert s.execute(select(func.count()).select_from(Upload)).scalar_one() == 2
