"""Migration 0009s (issue 17): on SQLite the estimate table is rebuilt with ``detail`` last,
keeping every row, its id and the notes that point at it; downgrade puts it back. The
oracle is the rows as written before it (0009h), read back by plain SQL."""

import sqlalchemy as sa

from server.db.migrate import downgrade, upgrade
from server.db.session import make_engine

ROWS = {
    "asset": {"id": 1, "name": "North", "basin": "B"},
    "field": {
        "id": 1,
        "asset_id": 1,
        "name": "F",
        "datum_depth_ft": 1.0,
        "reservoir_temperature_degF": 200.0,
        "initial_pressure_psia": 5000.0,
        "abandonment_pressure_psia": 500.0,
        "description": "",
        "created_at": "2026-01-01 00:00:00",
        "updated_at": "2026-01-01 00:00:00",
    },
}


def _columns(eng):
    return [c["name"] for c in sa.inspect(eng).get_columns("estimate")]


def test_detail_moves_last_and_back_with_rows_and_note_links(tmp_path):
    url = f"sqlite:///{tmp_path / 'm.sqlite3'}"
    upgrade(url, "0009h")
    eng = make_engine(url)  # foreign keys on, as the app's connections
    with eng.begin() as c:
        for table, row in ROWS.items():
            c.execute(
                sa.text(f"INSERT INTO {table} ({', '.join(row)}) VALUES ({', '.join(':' + k for k in row)})"),
                row,
            )
        for i in (1, 2):
            c.execute(
                sa.text(
                    "INSERT INTO estimate (id, field_id, method, status, message, cumulative_gas_bscf, flags,"
                    " detail, inputs_fingerprint, engine_version, computed_at) VALUES (:i, 1, 'm', 'ok', '',"
                    " 1.5, '[]', :d, :fp, 'v', '2026-01-02 00:00:00')"
                ),
                {"i": i, "d": '{"big": "' + "x" * 50_000 + '"}', "fp": f"{i}" * 64},
            )
        c.execute(
            sa.text(
                "INSERT INTO field_note (id, field_id, author_username, body, estimate_id, created_at)"
                " VALUES (1, 1, 'a', 'about estimate 2', 2, '2026-01-03 00:00:00')"
            )
        )
    before = _columns(eng)
    assert before.index("detail") < before.index("computed_at")
    with eng.connect() as c:
        rows = c.execute(sa.text("SELECT * FROM estimate ORDER BY id")).mappings().all()
    eng.dispose()
    upgrade(url, "0009s")
    eng = make_engine(url)
    assert _columns(eng) == [n for n in before if n != "detail"] + ["detail"]
    with eng.connect() as c:
        assert c.execute(sa.text("SELECT * FROM estimate ORDER BY id")).mappings().all() == rows
        assert c.execute(sa.text("SELECT estimate_id FROM field_note")).scalar_one() == 2
    eng.dispose()
    downgrade(url, "0009h")
    eng = make_engine(url)
    assert _columns(eng) == before
    with eng.connect() as c:
        assert c.execute(sa.text("SELECT estimate_id FROM field_note")).scalar_one() == 2
        assert len(c.execute(sa.text("SELECT id FROM estimate")).all()) == 2
    eng.dispose()
