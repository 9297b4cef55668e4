"""A real migrated database per test (for tests that need several connections or processes)."""

import pytest

from server.db.migrate import upgrade
from server.db.session import Database
from tests.conftest import create_pg_database, drop_pg_database, require_postgres
from tests.factories import make_field

N = 10


@pytest.fixture(params=["sqlite", pytest.param("postgresql", marks=pytest.mark.postgres)])
def real_db(request, tmp_path):
    """A migrated database of the given backend with field Upland and wells W-0..W-10."""
    if request.param == "sqlite":
        url = f"sqlite:///{tmp_path / 'concurrent.sqlite3'}"
    else:
        require_postgres()
        url = create_pg_database()
    upgrade(url)
    db = Database(url)
    with db.session() as s:
        make_field(s, name="Upland", wells=[f"W-{i}" for i in range(N + 1)])
    try:
        yield db, url
    finally:
        db.dispose()
        if request.param == "postgresql":
            drop_pg_database(url)
