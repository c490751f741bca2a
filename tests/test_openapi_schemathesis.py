"""Schemathesis (from PyPI) drives the app's own OpenAPI schema: no 5xx, no answer outside the schema."""

import os

import pytest
import schemathesis
from hypothesis import HealthCheck, given, settings

from app.settings import Settings
from app.web import create_app


@pytest.fixture(scope="module")
def api(tmp_path_factory):
    # The in-process ASGI client calls itself "testserver"; allow that name here only.
    app = create_app(
        Settings(data_dir=tmp_path_factory.mktemp("schemathesis"), extra_allowed_hosts=frozenset({"testserver"}))
    )
    return schemathesis.openapi.from_asgi("/openapi.json", app)


def test_no_server_errors_and_responses_match_schema(api):
    from schemathesis.checks import not_a_server_error
    from schemathesis.specs.openapi.checks import response_schema_conformance, status_code_conformance

    failures, calls = [], []
    for op in api.get_all_operations():
        operation = op.ok()

        @settings(
            max_examples=int(os.environ.get("LEAFCAST_SCHEMATHESIS_EXAMPLES", "40")),
            deadline=None,
            suppress_health_check=list(HealthCheck),
            database=None,
        )
        @given(case=operation.as_strategy())
        def run(case):
            response = case.call(headers={"Host": "127.0.0.1"})
            calls.append(response.status_code)
            case.validate_response(
                response, checks=[not_a_server_error, response_schema_conformance, status_code_conformance]
            )

        try:
            run()
        except Exception as exc:  # collect every operation's failure before reporting
            failures.append(f"{operation.method.upper()} {operation.path}: {exc}")
    assert not failures, "\n\n".join(failures)
    assert len(calls) > 100 and all(c < 500 for c in calls)
