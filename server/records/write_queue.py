"""On SQLite, requests that write take turns in arrival order before they touch the database.

SQLite has one writer at a time. Left to the file lock, writing requests each hold a worker thread
and poll on busy_timeout with growing sleeps, so under load the lock sits idle between writers and
the slowest requests wait for seconds. Queued here (asyncio.Lock wakes waiters first come, first
served), a writing request starts only when the one before it has committed, and reads carry on
beside them. The request body is read before queueing, so a slow upload does not hold up the rest.
Correctness does not rest on this queue (writers still begin with BEGIN IMMEDIATE); it only
keeps them from polling. Not used on PostgreSQL, where writers run side by side.
"""
import asyncio
import weakref

from starlette.types import ASGIApp, Message, Receive, Scope, Send

WRITING_METHODS = {"POST", "PUT", "PATCH", "DELETE"}


class SQLiteWriterQueue:
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
