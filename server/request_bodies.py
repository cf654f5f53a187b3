"""What a request body may be: of a limited size, checked before it is read; files only where uploaded.

Size: a request body has a limit, enforced before it is read into memory.

A declared Content-Length over the limit is refused at once, without reading a byte; a body sent
in chunks (or with a Content-Length that lies) is counted as it arrives and refused as soon as it
passes the limit. Routes that take a flight track have a larger limit of their own, set by path
pattern ("{name}" matches one path segment). The answer is 413 Content Too Large (RFC 9110 15.5.14).

Files: the app's forms send text. A multipart body that carries a file part (a Content-Disposition
with a filename, RFC 7578 section 4.2) is refused with 422 except on the upload routes, so a file
can never be stored as if it were a text field.
"""
import json
import re
from collections.abc import Iterable

from starlette.types import ASGIApp, Message, Receive, Scope, Send


class BodyTooLarge(Exception):
    pass


def path_pattern(path: str) -> re.Pattern:
    """A route-like path ("/sorties/{id}/tracks") as a pattern; each "{name}" matches one segment."""
    return re.compile("^" + re.sub(r"\\\{[^/]*?\\\}", "[^/]+", re.escape(path)) + "/?$")


class BodyLimit:
    def __init__(self, app: ASGIApp, *, default_bytes: int, larger: Iterable[tuple[str, int]] = ()):
        self.app = app
        self.default_bytes = default_bytes
        self.larger = [(path_pattern(path), size) for path, size in larger]

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


FILE_PART = re.compile(rb"(?im)^content-disposition:[^\r\n]*;\s*filename\*?=")


class TextFieldsOnly:
    """Refuse multipart bodies with a file part, except on the routes that take uploads."""

    def __init__(self, app: ASGIApp, *, upload_paths: Iterable[str] = ()):
        self.app = app
        self.uploads = [path_pattern(path) for path in upload_paths]

    async def __call__(self, scope: Scope, receive: Receive, send: Send) -> None:
        content_type = dict(scope.get("headers") or []).get(b"content-type", b"") if scope["type"] == "http" else b""
        if not content_type.lower().startswith(b"multipart/") or any(p.match(scope["path"]) for p in self.uploads):
            await self.app(scope, receive, send)
            return
        messages, chunks = [], []
        while True:  # bounded: BodyLimit, outside, counts these bytes
            message = await receive()
            messages.append(message)
            if message["type"] != "http.request":
                break
            chunks.append(message.get("body", b""))
            if not message.get("more_body", False):
                break
        if FILE_PART.search(b"".join(chunks)):
            text = "This form takes text fields only; a file cannot be sent here."
            body = json.dumps({"detail": text}).encode() if scope["path"].startswith("/api/") else text.encode()
            kind = b"application/json" if scope["path"].startswith("/api/") else b"text/plain; charset=utf-8"
            await send({"type": "http.response.start", "status": 422,
                        "headers": [(b"content-type", kind), (b"content-length", str(len(body)).encode())]})
            await send({"type": "http.response.body", "body": body})
            return

        async def replay() -> Message:
            return messages.pop(0) if messages else await receive()

        await self.app(scope, replay, send)
