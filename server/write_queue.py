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
"""
import asyncio
import weakref

from starlette.types import ASGIApp, Message, Receive, Scope, Send

WRITING_METHODS = {"POST", "PUT", "PATCH", "DELETE"}


class WriterQueue:
    def __init__(self, app: ASGIApp):
        self.app = app
        # One queue per event loop: a server has one; test clients may each run their own.
        self.turns: weakref.WeakKeyDictionary = weakref.WeakKeyDictionary()

    async def __call__(self, scope: Scope, receive: Receive, send: Send) -> None:
        if scope["type"] != "http" or scope["method"] not in WRITING_METHODS:
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

        loop = asyncio.get_running_loop()
        turn = self.turns.setdefault(loop, asyncio.Lock())
        async with turn:
            await self.app(scope, replay, send)


async def _whole_body(receive: Receive) -> bytes | None:
    chunks = []
    while True:
        message = await receive()
        if message["type"] == "http.disconnect":
            return None
        chunks.append(message.get("body", b""))
        if not message.get("more_body", False):
            return b"".join(chunks)
