"""The API against its own description (``GET /api/v1/openapi.json``), explored by Schemathesis.

A live waitress server (``inkfilm serve --no-https``, no passcodes set, a
temporary data folder) answers generated requests for every operation the
description lists, valid and invalid ones alike; each answer must be no 5xx,
and its status, content type, headers and body must be ones the description
documents. Bounded and repeatable: ``EXAMPLES`` per operation, derandomised.
"""

from __future__ import annotations

from collections import Counter, defaultdict

import pytest
import schemathesis
from hypothesis import HealthCheck, settings
from schemathesis import checks

from tests.conftest import drain, start_server
from webapp.common.openapi import description

EXAMPLES = 30
CHECKS = [
    checks.not_a_server_error,
    checks.status_code_conformance,
    checks.content_type_conformance,
    checks.response_headers_conformance,
    checks.response_schema_conformance,
]


@pytest.fixture(scope="module")
def server(tmp_path_factory):
    process, base = start_server(tmp_path_factory.mktemp("schemathesis-data"))
    reader = drain(process)
    yield base
    process.terminate()
    process.wait(timeout=10)
    reader.join(timeout=5)
    process.stdout.close()


# The document the server serves (tests/web/test_openapi.py checks that it is this one). Loaded
# here rather than from the live server: Schemathesis's fixture loader reads a pytest internal
# that pytest 9.2 no longer has.
schema = schemathesis.openapi.from_dict(description())

# Statuses seen, per operation (printed at the end of the module with ``-s``).
SEEN: dict[str, Counter] = defaultdict(Counter)


@pytest.fixture(scope="module", autouse=True)
def report_statuses():
    yield
    for operation, statuses in sorted(SEEN.items()):
        print(f"{operation}: {sum(statuses.values())} requests, statuses {dict(sorted(statuses.items()))}")


@schema.parametrize()
@settings(
    max_examples=EXAMPLES,
    derandomize=True,
    deadline=None,
    suppress_health_check=list(HealthCheck),
)
def test_the_api_keeps_to_its_description(case, server):
    response = case.call_and_validate(base_url=server + "/api/v1", checks=CHECKS, timeout=10)
    SEEN[case.operation.label][response.status_code] += 1
