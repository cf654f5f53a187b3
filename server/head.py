"""HEAD answered like GET without the body (RFC 9110, section 9.3.2), on every page and API route.

FastAPI routes answer only the methods they name; link checkers, monitors and some proxies ask
HEAD first.
"""
from starlette.types import ASGIApp, Message, Receive, Scope, Send


class HeadAsGet:
    def __init__(self, app: ASGIApp):
        self.app = app

    async def __call__(self, scope: Scope, receive: Receive, send: Send) -> None:
        if scope["type"] != "http" or scope["method"] != "HEAD":
            await self.app(scope, receive, send)
            return

        async def without_body(message: Message) -> None:
            if message["type"] == "http.response.body":
                if message.get("more_body", False):
                    return
                message = {"type": "http.response.body", "body": b"", "more_body": False}
            await send(message)

        await self.app({**scope, "method": "GET"}, receive, without_body)
