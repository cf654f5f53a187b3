"""Input the database cannot hold is refused as invalid input, never answered with a server error.

A path id or number past the database's integer range reaches the driver before any service check:
SQLite's driver raises OverflowError, PostgreSQL a DataError ("integer out of range", or text too
long for its column). Both mean the request was bad, so they get the app's usual 422.
"""
from fastapi import FastAPI, Request
from sqlalchemy.exc import DataError

from server.errors import FlarebookError, Invalid

MESSAGE = "A number or text in the request is too large for Flarebook to store or look up."


def refuse_out_of_range(app: FastAPI) -> None:
    """Answer driver range errors through the app's own error handler, as a 422."""

    async def out_of_range(request: Request, exc: Exception):
        handler = request.app.exception_handlers[FlarebookError]
        return await handler(request, Invalid(MESSAGE))

    app.add_exception_handler(OverflowError, out_of_range)
    app.add_exception_handler(DataError, out_of_range)
