"""schemathesis against the app's own OpenAPI description: generated requests, valid and not, as a
chief pilot with a bearer token; no answer may be a server error or stray from the documented schema.

Anchor: schemathesis (property-based API testing from an OpenAPI document), checks
`not_a_server_error` and `response_schema_conformance`; issue 6 ("no 5xx, no schema violations").
Examples are bounded per operation so the run stays short.
"""
from copy import deepcopy

import pytest
import schemathesis
from hypothesis import HealthCheck, settings
from schemathesis.checks import not_a_server_error
from schemathesis.specs.openapi.checks import response_schema_conformance

from server.app import create_app
from server.config import Settings
from server.people import service as people
from server.people.models import Person
from tests.support import make_sortie

MAX_EXAMPLES = 25


@pytest.fixture
def chief_token(db, world) -> str:
    """A chief pilot's token, and a signed and a draft sortie so that ids in the school exist."""
    make_sortie(db, world, attempts=2, sign=True)
    make_sortie(db, world, attempts=1)
    token = people.issue_token(db, person=db.get(Person, world.chief.id), label="schemathesis")
    db.commit()
    return token




def tuples_as_arrays(node):
    """Spell a same-typed tuple (`prefixItems`) as an array of fixed length, which means the same.

    schemathesis 4.32.5 rewrites OpenAPI 3.1 `prefixItems` into a Draft 4 `items` list and then
    rejects its own rewrite as an invalid response schema; the fixed-length array avoids that.
    """
    if isinstance(node, dict):
        prefix = node.get("prefixItems")
        if prefix and all(item == prefix[0] for item in prefix):
            del node["prefixItems"]
            node.update(items=prefix[0], minItems=len(prefix), maxItems=len(prefix))
        for value in node.values():
            tuples_as_arrays(value)
    elif isinstance(node, list):
        for value in node:
            tuples_as_arrays(value)
    return node


# The description comes from an app on an unused in-memory database at collection time; the
# requests go to the test session's app (`app=`), whose database the fixtures fill.
_document = deepcopy(create_app(Settings(database_url="sqlite://")).openapi())
schema = schemathesis.openapi.from_dict(tuples_as_arrays(_document))


@schema.parametrize()
@settings(max_examples=MAX_EXAMPLES, deadline=None, database=None, derandomize=True,
          suppress_health_check=list(HealthCheck))
def test_the_api_keeps_to_its_schema_and_never_fails(case, app, chief_token):
    case.call_and_validate(app=app, headers={"Authorization": f"Bearer {chief_token}"},
                           checks=[not_a_server_error, response_schema_conformance])
