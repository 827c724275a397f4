"""A bounded property-based run over every operation of openapi/openapi.yaml (schemathesis).

For each operation, requests are generated from the spec's parameter and body schemas, valid ones
(positive) and deliberately invalid ones (negative), and sent straight into the WSGI app. Every
answer must not be a server error (a 503 counts only if it is the documented solver-budget problem)
and must conform to what the spec documents for its status (content type and body schema).

Bounded so the file runs in seconds on a 2-core machine: few examples per operation, derandomized
(the same requests on every run), no shrinking, no example database. It runs in plain ``pytest``
(CI); ``-m "not slow"`` skips it while iterating.

The loop is driven by hypothesis directly (``operation.as_strategy``) rather than by
``schemathesis.pytest.from_fixture``, whose lazy loader does not work with pytest 9 in
schemathesis 4.32 (it touches ``Function._nodeid``).
"""

from __future__ import annotations

import copy

import pytest
import schemathesis
from hypothesis import HealthCheck, Phase, given, settings
from schemathesis import GenerationMode
from schemathesis.checks import not_a_server_error
from schemathesis.config import SchemathesisConfig
from schemathesis.specs.openapi.checks import response_schema_conformance

from tests.api.test_openapi import SPEC, operations

pytestmark = pytest.mark.slow

# Examples per operation and mode: more for the computing operations, where the bugs would be.
MAX_EXAMPLES = {"/v1/effectiveness": 25, "/v1/effectiveness/batch": 25}
DEFAULT_EXAMPLES = 5
CONFIG = SchemathesisConfig.from_dict(
    {"seed": 20261201, "generation": {"deterministic": True, "no-shrink": True, "database": "none"}}
)
BOUNDED = settings(
    derandomize=True,
    database=None,
    deadline=None,
    phases=[Phase.explicit, Phase.generate],
    suppress_health_check=list(HealthCheck),
)
# Every operation with valid requests; those with inputs also with invalid ones.
RUNS = [
    pytest.param(path, method, mode, id=f"{method.upper()} {path} {mode.value}")
    for path, method, op in operations()
    for mode in (GenerationMode.POSITIVE, GenerationMode.NEGATIVE)
    if mode is GenerationMode.POSITIVE or "requestBody" in op or op.get("parameters")
]


@pytest.mark.parametrize("path, method, mode", RUNS)
def test_generated_requests_get_documented_answers(app, path, method, mode):
    contract = schemathesis.openapi.from_dict(copy.deepcopy(SPEC), config=CONFIG)
    contract.app = app
    operation = contract[path][method]

    @settings(BOUNDED, max_examples=MAX_EXAMPLES.get(path, DEFAULT_EXAMPLES))
    @given(case=operation.as_strategy(generation_mode=mode))
    def run(case):
        response = case.call()
        checks = [response_schema_conformance]
        budget = response.status_code == 503 and b"solver-budget-exceeded" in response.content
        if not budget:
            checks.append(not_a_server_error)
        case.validate_response(response, checks=checks)

    run()
