"""Refused accesses (403 and 404 from the services) go into the audit chain."""
from fastapi import Request
from starlette.concurrency import run_in_threadpool

from server.db import transaction
from server.errors import FlarebookError
from server.records import audit

RECORDED_STATUSES = (403, 404)


def _entity(request: Request) -> tuple[str, str | None]:
    """The record asked for, from the route's first `<name>_id` path parameter, else the path."""
    for name, value in request.path_params.items():
        if name.endswith("_id"):
            return name.removesuffix("_id")[:40], str(value)[:40]
    return "path", None


def _write(request: Request, exc: FlarebookError) -> None:
    entity, entity_id = _entity(request)
    with transaction(request.app.state.sessions) as session:
        audit.append(session, actor_id=getattr(request.state, "person_id", None), action="access_refused",
                     entity=entity, entity_id=entity_id, reason=exc.message,
                     after={"method": request.method, "path": request.url.path[:200], "status": exc.status_code})


async def record_refusal(request: Request, exc: FlarebookError) -> None:
    """Write the refusal in a short transaction of its own: the request's own one was rolled back."""
    if exc.status_code in RECORDED_STATUSES:
        await run_in_threadpool(_write, request, exc)
