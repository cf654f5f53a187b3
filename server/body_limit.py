"""Request bodies have a size limit, enforced before they are read into memory.

A declared Content-Length over the limit is refused at once, without reading a byte; a body sent
in chunks (or with a Content-Length that lies) is counted as it arrives and refused as soon as it
passes the limit. Routes that take a flight track have a larger limit of their own, set by path
pattern ("{name}" matches one path segment). The answer is 413 Content Too Large (RFC 9110 15.5.14).
"""
import json
import re
from collections.abc import Iterable

from starlette.types import ASGIApp, Message, Receive, Scope, Send


class BodyTooLarge(Exception):
    pass


def _pattern(path: str) -> re.Pattern:
    return re.compile("^" + re.sub(r"\\\{[^/]*?\\\}", "[^/]+", re.escape(path)) + "/?$")


class BodyLimit:
    def __init__(self, app: ASGIApp, *, default_bytes: int, larger: Iterable[tuple[str, int]] = ()):
        self.app = app
        self.default_bytes = default_bytes
        self.larger = [(_pattern(path), size) for path, size in larger]

    def limit_for(self, path: str) -> int:
        return next((size for pattern, size in self.larger if pattern.match(path)), self.default_bytes)

    async def __call__(self, scope: Scope, receive: Receive, send: Send) -> None:
        if scope["type"] != "http":
            await self.app(scope, receive, send)
            return
        limit = self.limit_for(scope["path"])
        declared = dict(scope.get("headers") or []).get(b"content-length")
        if declared is not None and (not declared.isdigit() or int(declared) > limit):
            await _refuse(scope, send, limit)
            return
        received = 0
        started = False

        async def counted() -> Message:
            nonlocal received
            message = await receive()
            if message["type"] == "http.request":
                received += len(message.get("body", b""))
                if received > limit:
                    raise BodyTooLarge()
            return message

        async def watch(message: Message) -> None:
            nonlocal started
            started = started or message["type"] == "http.response.start"
            await send(message)

        try:
            await self.app(scope, counted, watch)
        except BodyTooLarge:
            if not started:
                await _refuse(scope, send, limit)


async def _refuse(scope: Scope, send: Send, limit: int) -> None:
    text = f"The request is larger than Flarebook accepts here ({limit:,} bytes)."
    if scope["path"].startswith("/api/"):
        body, kind = json.dumps({"detail": text}).encode(), b"application/json"
    else:
        body, kind = text.encode(), b"text/plain; charset=utf-8"
    await send({"type": "http.response.start", "status": 413, "headers": [
        (b"content-type", kind), (b"content-length", str(len(body)).encode()), (b"connection", b"close")]})
    await send({"type": "http.response.body", "body": body})
