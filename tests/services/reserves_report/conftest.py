from tests.services.reserves.conftest import people, portfolio  # noqa: F401 - the reserves fixtures
