"""An app wired to the test database (rolled back per test) and a client for it."""

import pytest
from fastapi.testclient import TestClient

from server.app import create_app
from server.settings import Settings


@pytest.fixture
def settings():
    return Settings(environment="test", secret_key="t" * 40, database_url="sqlite://")


@pytest.fixture
def app(db, settings):
    return create_app(settings, database=db)


@pytest.fixture
def client(app):
    with TestClient(app, base_url="http://127.0.0.1:8000") as c:
        yield c
