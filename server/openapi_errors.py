"""The OpenAPI document describes the error body the app really sends.

FastAPI documents its default 422 body (a list of validation details); Flarebook's error handlers
answer every refusal with a sentence in `detail` and, for invalid input, the failing fields in
`errors`. Clients and schemathesis read the description, so it must match.
"""
from fastapi import FastAPI

ERROR_BODY = {
    "title": "Error",
    "type": "object",
    "required": ["detail"],
    "properties": {
        "detail": {"type": "string", "description": "What went wrong, in words a person understands."},
        "errors": {
            "type": "array",
            "description": "For invalid input: each field that was refused, and why.",
            "items": {
                "type": "object",
                "required": ["field", "message"],
                "properties": {
                    "field": {"anyOf": [{"type": "string"}, {"type": "null"}]},
                    "message": {"type": "string"},
                },
            },
        },
    },
}


def describe_errors(app: FastAPI) -> None:
    """Replace FastAPI's default validation-error schema with Flarebook's error body."""
    generate = app.openapi

    def openapi() -> dict:
        if app.openapi_schema:
            return app.openapi_schema
        document = generate()
        schemas = document.get("components", {}).get("schemas", {})
        if "HTTPValidationError" in schemas:
            schemas["HTTPValidationError"] = ERROR_BODY
        app.openapi_schema = document
        return document

    app.openapi = openapi
