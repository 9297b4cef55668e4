"""JSON columns are written with orjson (server/db/session.py, issue 17); the standard library's
json is the reference for what a value must read back as."""

import json
import math

import numpy as np
import sqlalchemy as sa

from server.db.session import json_dumps, json_loads, make_engine


def test_json_text_reads_back_as_the_standard_library_reads_its_own():
    value = {
        "giip_bscf": 123.456789012345,
        "tiny": 1e-300,
        "big": 1.7976931348623157e308,
        "ints": [0, -1, 2**62],
        "nested": {"a": [1.5, None, True, "p/z ≥ 1,000 psia"]},
        3: "a key that is not a string",
    }
    assert json_loads(json_dumps(value)) == json.loads(json.dumps(value))


def test_values_the_fast_path_cannot_write_fall_back_to_the_standard_library():
    huge = 2**100 + 1  # beyond 64 bits: orjson refuses it, json writes it
    assert json_loads(json_dumps({"n": huge})) == {"n": huge}
    assert json_loads(json_dumps({"x": np.float64(2.5), "k": np.int64(7)})) == {"x": 2.5, "k": 7}


def test_non_finite_numbers_are_written_as_null():
    # PostgreSQL's json type refuses NaN and Infinity; the engine's serializer already maps them
    # to None (services/serialize.py), and the column does the same for anything else.
    assert json_loads(json_dumps([math.nan, math.inf])) == [None, None]


def test_a_json_column_round_trips_through_the_database(fresh_database_url):
    engine = make_engine(fresh_database_url)
    table = sa.Table(
        "t_json", sa.MetaData(), sa.Column("id", sa.Integer, primary_key=True), sa.Column("v", sa.JSON)
    )
    try:
        table.create(engine)
        value = {"profile": [1.0, 2.5, None], "note": "Bscf", "n": 2**100 + 1}
        with engine.begin() as c:
            c.execute(table.insert().values(id=1, v=value))
            c.execute(table.insert().values(id=2, v=0.9))  # a bare number (SQLite hands it back as one)
        with engine.connect() as c:
            rows = dict(c.execute(sa.select(table.c.id, table.c.v)).all())
        assert rows == {1: value, 2: 0.9}
    finally:
        table.drop(engine, checkfirst=True)
        engine.dispose()
