"""Refused accesses (403 and 404 from the services) go into the audit chain.

A refusal of a signed-in person is one entry each, naming them. Refusals of people nobody knows
(no session, no token: a guessed calendar link, a script probing URLs) are counted in memory and
written as one entry per period ("N refusals of strangers"), so strangers cannot make the chain grow
one row per request. Paths are recorded as the route's template (`/calendar/{secret}.ics`), never
as sent: a path can carry a secret, and the audit chain is exported.
"""
import threading
import time
from collections import Counter

from fastapi import Request
from starlette.concurrency import run_in_threadpool

from server.db import transaction
from server.errors import FlarebookError
from server.records import audit
from server.types import utcnow

RECORDED_STATUSES = (403, 404)


def route_template(request: Request) -> str:
    """The path asked for with each path parameter's value put back as its name: /calendar/{secret}.ics."""
    segments = request.url.path[:200].split("/")
    for name, value in request.path_params.items():
        value = str(value)
        segments = ["{" + name + "}" + segment[len(value):] if value and (segment == value or segment.startswith(
            value + ".")) else segment for segment in segments]
    return "/".join(segments)


def _entity(request: Request) -> tuple[str, str | None]:
    """The record asked for, from the route's first `<name>_id` path parameter, else the path."""
    for name, value in request.path_params.items():
        if name.endswith("_id"):
            return name.removesuffix("_id")[:40], str(value)[:40]
    return "path", None


class StrangerTally:
    """Refusals of unidentified requests, counted per route and status until the next write."""

    def __init__(self, period_seconds: int):
        self.period = period_seconds
        self.lock = threading.Lock()
        self.counts: Counter[str] = Counter()
        self.since = None
        self.started = 0.0

    def count(self, key: str) -> bool:
        """Count one; True when the period is over and the tally should be written."""
        with self.lock:
            if not self.counts:
                self.since, self.started = utcnow(), time.monotonic()
            self.counts[key] += 1
            return time.monotonic() - self.started >= self.period

    def take(self) -> tuple[dict, object] | None:
        with self.lock:
            if not self.counts:
                return None
            counts, since = dict(self.counts), self.since
            self.counts.clear()
            return counts, since

    def write(self, sessions) -> None:
        """One audit entry for everything counted since the last one."""
        taken = self.take()
        if taken is None:
            return
        counts, since = taken
        with transaction(sessions) as session:
            audit.append(session, actor_id=None, action="access_refused_strangers", entity="path", entity_id=None,
                         reason=f"{sum(counts.values())} requests without a sign-in refused",
                         after={"since": since, "until": utcnow(), "count": sum(counts.values()),
                                "by_route": counts})


def _write(request: Request, exc: FlarebookError) -> None:
    entity, entity_id = _entity(request)
    with transaction(request.app.state.sessions) as session:
        audit.append(session, actor_id=getattr(request.state, "person_id", None), action="access_refused",
                     entity=entity, entity_id=entity_id, reason=exc.message,
                     after={"method": request.method, "path": route_template(request), "status": exc.status_code})


async def record_refusal(request: Request, exc: FlarebookError) -> None:
    """Write the refusal in a short transaction of its own: the request's own one was rolled back."""
    if exc.status_code not in RECORDED_STATUSES:
        return
    if getattr(request.state, "person_id", None) is None:
        tally: StrangerTally = request.app.state.stranger_tally
        if tally.count(f"{request.method} {route_template(request)} {exc.status_code}"):
            await run_in_threadpool(tally.write, request.app.state.sessions)
        return
    await run_in_threadpool(_write, request, exc)
