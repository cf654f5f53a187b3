"""Security headers on every answer: a nonce-based content security policy and friends.

A pure ASGI middleware, so it sees every response (pages, fragments, API, errors) without buffering,
except FastAPI's own API documentation pages, whose inline script is allowed by its hash.
"""
import base64
import hashlib
import re
import secrets

from starlette.datastructures import MutableHeaders
from starlette.types import ASGIApp, Message, Receive, Scope, Send

# FastAPI's documentation pages load Swagger UI / ReDoc from a CDN and start it with an inline script.
DOCS_PATHS = frozenset({"/docs", "/docs/oauth2-redirect", "/redoc"})
DOCS_CDN = "https://cdn.jsdelivr.net"
_INLINE_SCRIPT = re.compile(rb"<script>(.*?)</script>", re.DOTALL)

STATIC_PREFIX = "/static/"
HSTS = "max-age=31536000"

COMMON_HEADERS = {
    "X-Content-Type-Options": "nosniff",
    # No URL leaves the app in a Referer header: calendar feeds carry their secret in the link.
    "Referrer-Policy": "no-referrer",
    "X-Frame-Options": "DENY",
    "Cross-Origin-Opener-Policy": "same-origin",
    "Cross-Origin-Resource-Policy": "same-origin",
    "Permissions-Policy": "camera=(), microphone=(), geolocation=(), payment=(), usb=()",
}


def new_nonce() -> str:
    """128 random bits, base64 as the CSP grammar expects."""
    return base64.b64encode(secrets.token_bytes(16)).decode()


def page_policy(nonce: str) -> str:
    """The app's own policy: scripts and styles from /static only, plus scripts carrying the nonce."""
    return "; ".join((
        "default-src 'self'",
        f"script-src 'self' 'nonce-{nonce}'",
        "style-src 'self'",
        "img-src 'self'",
        "font-src 'self'",
        "connect-src 'self'",
        "form-action 'self'",
        "object-src 'none'",
        "base-uri 'none'",
        "frame-ancestors 'none'",
    ))


def docs_policy(body: bytes) -> str:
    """The API documentation page: its CDN, and its inline start-up script by SHA-256 only."""
    hashes = " ".join(
        "'sha256-" + base64.b64encode(hashlib.sha256(script).digest()).decode() + "'"
        for script in _INLINE_SCRIPT.findall(body)
    )
    return "; ".join((
        "default-src 'none'",
        f"script-src {DOCS_CDN} {hashes}".strip(),
        f"style-src {DOCS_CDN} 'unsafe-inline'",
        f"img-src 'self' data: {DOCS_CDN} https://fastapi.tiangolo.com",
        "worker-src 'self' blob:",
        "connect-src 'self'",
        "object-src 'none'",
        "base-uri 'none'",
        "frame-ancestors 'none'",
    ))


def is_https(scope: Scope) -> bool:
    # uvicorn rewrites the scheme from X-Forwarded-Proto only for proxies it trusts
    # (FORWARDED_ALLOW_IPS, 127.0.0.1 by default), so a client cannot claim HTTPS by itself.
    return scope.get("scheme") == "https"


class SecurityHeaders:
    """Adds the security headers, and a fresh CSP nonce in request.state.csp_nonce for the templates."""

    def __init__(self, app: ASGIApp) -> None:
        self.app = app

    async def __call__(self, scope: Scope, receive: Receive, send: Send) -> None:
        if scope["type"] != "http":
            await self.app(scope, receive, send)
            return
        nonce = new_nonce()
        scope.setdefault("state", {})["csp_nonce"] = nonce
        path: str = scope["path"]
        https = is_https(scope)

        def decorate(message: Message, policy: str) -> None:
            headers = MutableHeaders(scope=message)
            for name, value in COMMON_HEADERS.items():
                headers[name] = value
            headers["Content-Security-Policy"] = policy
            if https:
                headers["Strict-Transport-Security"] = HSTS
            # Records and API answers must not linger in shared or browser caches.
            if not path.startswith(STATIC_PREFIX) and "cache-control" not in headers:
                headers["Cache-Control"] = "no-store"

        if path in DOCS_PATHS:
            await self._docs(scope, receive, send, decorate)
            return

        async def send_with_headers(message: Message) -> None:
            if message["type"] == "http.response.start":
                decorate(message, page_policy(nonce))
            await send(message)

        await self.app(scope, receive, send_with_headers)

    async def _docs(self, scope: Scope, receive: Receive, send: Send, decorate) -> None:
        """Hold the (small, static) documentation page until its scripts can be hashed."""
        start: Message | None = None
        chunks: list[bytes] = []

        async def hold(message: Message) -> None:
            nonlocal start
            if message["type"] == "http.response.start":
                start = message
                return
            if message["type"] == "http.response.body":
                chunks.append(message.get("body", b""))
                if message.get("more_body", False):
                    return
                body = b"".join(chunks)
                if start is None:  # a body before its start: not valid ASGI, pass it on untouched
                    await send(message)
                    return
                decorate(start, docs_policy(body))
                await send(start)
                await send({"type": "http.response.body", "body": body})
                return
            await send(message)

        await self.app(scope, receive, hold)
