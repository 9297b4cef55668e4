"""schemathesis against the OpenAPI schema, authenticated with an API token: no server errors,
responses that match their schemas, only documented status codes, and every protected operation
refusing a request without credentials.

Positive cases (data valid for the schema) and negative ones (invalid data, which must be a
documented 4xx, never a 500) are generated per operation; the example counts are small so the
test stays within CI's time, and the Hypothesis database is off so runs are repeatable.
"""

from __future__ import annotations

import pytest
import schemathesis
from hypothesis import HealthCheck, given, settings
from hypothesis.errors import Unsatisfiable
from schemathesis import checks
from schemathesis.generation import GenerationMode

from tests.factories import field_with_estimate

EXAMPLES = {GenerationMode.POSITIVE: 25, GenerationMode.NEGATIVE: 15}
CHECKS = [
    checks.not_a_server_error,
    checks.status_code_conformance,
    checks.content_type_conformance,
    checks.response_headers_conformance,
    checks.response_schema_conformance,
    checks.ignored_auth,
]


@pytest.fixture
def api_schema(db, app, token_client):
    field_with_estimate(db)
    script = token_client(["read", "upload", "analyse"], role="admin")
    auth = {"Authorization": f"Bearer {script.token}"}
    return schemathesis.openapi.from_asgi("/openapi.json", app, headers=dict(auth)), auth


def test_api_conforms_to_its_schema(api_schema):
    schema, auth = api_schema
    operations = [result.ok() for result in schema.get_all_operations()]
    assert len(operations) >= 12
    for operation in operations:
        for mode, n in EXAMPLES.items():

            @given(case=operation.as_strategy(generation_mode=mode))
            @settings(
                max_examples=n,
                deadline=None,
                database=None,
                derandomize=True,
                suppress_health_check=list(HealthCheck),
            )
            def check(case):
                case.call_and_validate(headers=auth, checks=CHECKS)

            try:
                check()
            except Unsatisfiable:
                assert mode is GenerationMode.NEGATIVE  # nothing to make invalid (no parameters)
            except Exception as exc:
                raise AssertionError(f"{operation.label} ({mode.value}): {exc}") from exc
