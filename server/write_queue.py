"""Requests that write take turns, in arrival order, before they reach a worker thread.

Every writing request appends to the audit chain, and appends are serial by design (SQLite has one
writer; on PostgreSQL an advisory lock queues them), so letting many writing requests into the
thread pool at once gains nothing and costs a lot: on SQLite each waiter polls the file lock with
growing sleeps, so the lock sits idle between writers and the slowest wait for seconds; on PostgreSQL
waiters for the lock, or for a pooled connection, can hold every worker thread while the lock holder
waits for one to commit, until the pool times out. Queued here (asyncio.Lock wakes waiters first
come, first served), a writing request starts once the one before it has answered, and reads carry
on beside them. The body is read before queueing, so a slow upload does not hold up the rest.
Correctness does not rest on this queue (writers still begin with BEGIN IMMEDIATE on SQLite and take
the advisory lock on PostgreSQL, and several app servers each have their own queue); it keeps them
from waiting in threads.

Some routes take the writer's turn late (`late_turn`, logging an attempt): their service reads,
checks and scores outside the turn and takes it only for the insert, the audit entry and the commit
(`server.db.take_writers_turn`), re-checking under it what the turn protects. A few of them at a
time (LATE_AT_ONCE) go on to the thread pool, marked with `request.state.late_writer_turn` so that
`get_db` does not begin them as writers; a few, so that threads waiting for the turn can never hold
every worker thread while the holder waits for one to commit.

Late and queued writers never run at the same time in one process: a queued writer may do its
database work on the event loop (an `async def` route), and if it waited there for SQLite's lock
while a late writer held it, the late writer's commit (run from the event loop when its route returns)
could never come, and both would wait out the busy timeout. So a queued writer starts once no late
writer is in flight, and late writers hold back while a queued one waits or runs.
"""
import asyncio
import contextlib
import re
import weakref

from starlette.types import ASGIApp, Message, Receive, Scope, Send

WRITING_METHODS = {"POST", "PUT", "PATCH", "DELETE"}
# Late-turn requests let into the thread pool at once: enough to overlap one's commit with the next
# ones' reading and scoring, far fewer than the pool's 40 threads.
LATE_AT_ONCE = 4
LATE_TURN_STATE = "late_writer_turn"


class WriterQueue:
    def __init__(self, app: ASGIApp, skip_paths: frozenset[str] = frozenset(),
                 late_turn: tuple[str, ...] = ()):
        self.app = app
        # (method path) patterns of sync routes whose service takes the writer's turn itself, late.
        self.late_turn = [re.compile(pattern) for pattern in late_turn]
        # Routes that check a password first (Argon2 takes a while on purpose) and write little: queued,
        # every guess would hold up everyone's saves; their short write still takes the database's turn.
        self.skip_paths = skip_paths
        # One queue per event loop: a server has one; test clients may each run their own.
        self.turns: weakref.WeakKeyDictionary = weakref.WeakKeyDictionary()

    async def __call__(self, scope: Scope, receive: Receive, send: Send) -> None:
        if scope["type"] != "http" or scope["method"] not in WRITING_METHODS or scope["path"] in self.skip_paths:
            await self.app(scope, receive, send)
            return
        body = await _whole_body(receive)
        if body is None:  # the client went away while sending
            return
        replayed = False

        async def replay() -> Message:
            nonlocal replayed
            if not replayed:
                replayed = True
                return {"type": "http.request", "body": body, "more_body": False}
            return await receive()  # after the body: only a disconnect can come

        turns = self.turns.setdefault(asyncio.get_running_loop(), _Turns())
        if self._takes_turn_late(scope):
            scope.setdefault("state", {})[LATE_TURN_STATE] = True
            async with turns.late():
                await self.app(scope, replay, send)
        else:
            async with turns.queued():
                await self.app(scope, replay, send)

    def _takes_turn_late(self, scope: Scope) -> bool:
        request_line = f"{scope['method']} {scope['path']}"
        return any(pattern.fullmatch(request_line) for pattern in self.late_turn)


class _Turns:
    """One event loop's writers: queued ones one at a time, first come first served, each alone;
    late ones up to LATE_AT_ONCE together, while no queued writer waits or runs."""

    def __init__(self):
        self.queue = asyncio.Lock()  # asyncio.Lock wakes its waiters in arrival order
        self.changed = asyncio.Condition()
        self.late_gate = asyncio.Semaphore(LATE_AT_ONCE)
        self.late_running = 0

    @contextlib.asynccontextmanager
    async def queued(self):
        try:
            async with self.queue:
                async with self.changed:
                    await self.changed.wait_for(lambda: self.late_running == 0)
                yield
        finally:
            async with self.changed:  # the queue is free again: late writers may go on
                self.changed.notify_all()

    @contextlib.asynccontextmanager
    async def late(self):
        async with self.late_gate:
            async with self.changed:
                await self.changed.wait_for(lambda: not self.queue.locked())
                self.late_running += 1
            try:
                yield
            finally:
                async with self.changed:
                    self.late_running -= 1
                    self.changed.notify_all()


async def _whole_body(receive: Receive) -> bytes | None:
    chunks = []
    while True:
        message = await receive()
        if message["type"] == "http.disconnect":
            return None
        chunks.append(message.get("body", b""))
        if not message.get("more_body", False):
            return b"".join(chunks)
