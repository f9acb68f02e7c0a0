"""Property-based test of the JSON API over its own OpenAPI document (Schemathesis, on Hypothesis).

For every operation of ``/api/v1/openapi.json``, requests are generated from the document (valid ones, and
invalid ones: wrong types, out-of-range numbers, missing fields) and sent with an admin's token.  The bar:
0 server errors (no 5xx), and 0 schema violations (every status code, content type and JSON body is the one the
document lists).  The number of examples per operation is bounded (``JTCHECK_FUZZ_EXAMPLES``, default 12 per
mode) so that the test takes about a minute; set it higher for a longer hunt.  The database is this module's own.
"""
from __future__ import annotations

import os

import pytest
import schemathesis
from hypothesis import HealthCheck, given, settings
from schemathesis import GenerationMode
from schemathesis.checks import not_a_server_error
from schemathesis.specs.openapi.checks import (
    content_type_conformance,
    response_schema_conformance,
    status_code_conformance,
)

from jtcheck.records.models import Role

EXAMPLES = int(os.environ.get("JTCHECK_FUZZ_EXAMPLES", "12"))
CHECKS = [not_a_server_error, status_code_conformance, content_type_conformance, response_schema_conformance]


@schemathesis.serializer("application/pdf")
def _pdf_bytes(ctx, value):
    """A record PDF to verify is sent as it is (the generated value is bytes or text)."""
    return value if isinstance(value, bytes) else str(value).encode("utf-8", "surrogatepass")


@pytest.fixture(scope="module")
def schema(app, world, tokens):
    auth = {"Authorization": f"Bearer {tokens[Role.ADMIN]}"}
    loaded = schemathesis.openapi.from_wsgi("/api/v1/openapi.json", app, headers=auth)
    return loaded, auth


def _operations(loaded):
    return [result.ok() for result in loaded.get_all_operations()]


@pytest.mark.slow
def test_no_input_gives_a_server_error_or_breaks_the_document(schema):
    loaded, auth = schema
    failures: list[str] = []
    operations = _operations(loaded)
    assert len(operations) >= 25          # every route is in the document
    for op in operations:
        for mode in (GenerationMode.POSITIVE, GenerationMode.NEGATIVE):

            @settings(max_examples=EXAMPLES, deadline=None, database=None, derandomize=True,
                      suppress_health_check=list(HealthCheck))
            @given(case=op.as_strategy(generation_mode=mode))
            def run(case):
                case.call_and_validate(headers=auth, checks=CHECKS)

            try:
                run()
            except (Exception, BaseExceptionGroup) as exc:   # collect every operation's failure, report them all
                failures.append(f"{op.method.upper()} {op.path} ({mode.value}): {str(exc)[:1500]}")
    assert not failures, f"{len(failures)} failing operation(s):\n\n" + "\n\n".join(failures)
