"""The application factory."""
from contextlib import asynccontextmanager

from fastapi import FastAPI, Request
from fastapi.exceptions import RequestValidationError
from fastapi.responses import FileResponse, JSONResponse, RedirectResponse
from fastapi.staticfiles import StaticFiles
from starlette.exceptions import HTTPException as StarletteHTTPException
from starlette.middleware.gzip import GZipMiddleware

from server.bad_input import refuse_out_of_range
from server.config import PROJECT_ROOT, Settings, get_settings
from server.currency import api as currency_api
from server.currency import routes as currency_routes
from server.db import make_engine, make_session_factory
from server.errors import FlarebookError
from server.fleet import api as fleet_api
from server.fleet import routes as fleet_routes
from server.imports import api as imports_api
from server.imports import routes as imports_routes
from server.fleet import setup_routes as fleet_setup_routes
from server.head import HeadAsGet
from server.logbook import api as logbook_api
from server.logbook import history_routes, people_api as visible_people_api, type_page_routes
from server.logbook import routes as logbook_routes
from server.logbook import track_api, track_routes
from server.openapi_errors import describe_errors
from server import account as people_account
from server.people import api as people_api
from server.people import routes as people_routes
from server.people.deps import OwnPasswordRequired, SignInRequired
from server.progress import api as progress_api
from server.progress import program_api, program_routes
from server.progress import routes as progress_routes
from server.records.refusals import StrangerTally, record_refusal
from server.request_bodies import BodyLimit, TextFieldsOnly
from server.safety import api as safety_api
from server.safety import routes as safety_routes
from server.security import SecurityHeaders
from server.standardisation import api as standardisation_api
from server.standardisation import routes as standardisation_routes
from server.training import api as training_api
from server.training import people_routes as people_setup_routes
from server.training import standards_api, standards_routes
from server.web import is_htmx, render
from server.write_queue import WriterQueue


def create_app(settings: Settings | None = None) -> FastAPI:
    settings = settings or get_settings()

    @asynccontextmanager
    async def lifespan(app: FastAPI):
        yield
        app.state.stranger_tally.write(app.state.sessions)  # what was counted since the last entry

    app = FastAPI(
        lifespan=lifespan,
        title="Flarebook",
        version="0.1.0",
        summary="Practice-autorotation training records for helicopter schools.",
        description=(
            "Records and training aids only: the aircraft flight manual, approved procedures, local "
            "rules and licensed instructors come first."
        ),
    )
    app.state.settings = settings
    app.state.engine = make_engine(settings.database_url)
    app.state.sessions = make_session_factory(app.state.engine)
    app.state.sessions.configure(info={"settings": settings})  # services read them with settings_of
    app.state.stranger_tally = StrangerTally(settings.stranger_audit_seconds)

    # Writing requests take turns (server/write_queue.py); sign-in checks its password outside; logging
    # an attempt through the API takes the writer's turn only for its insert, audit entry and commit.
    app.add_middleware(WriterQueue, skip_paths=frozenset({"/signin"}), late_turn=logbook_api.LATE_TURN_ROUTES)
    app.add_middleware(TextFieldsOnly, upload_paths=settings.track_upload_paths + settings.import_upload_paths)
    # Around the writer queue, which reads whole bodies: one over the limit is refused before it is read.
    app.add_middleware(BodyLimit, default_bytes=settings.max_body_bytes,
                       larger=[(path, settings.track_upload_max_bytes) for path in settings.track_upload_paths]
                       + [(path, settings.import_upload_max_bytes) for path in settings.import_upload_paths])
    app.add_middleware(SecurityHeaders)  # inside GZip, so it sees bodies uncompressed
    app.add_middleware(GZipMiddleware, minimum_size=500)
    app.add_middleware(HeadAsGet)  # outermost: the GET's headers, Content-Length included, without the body
    app.add_api_route("/favicon.ico", _favicon, include_in_schema=False)
    app.mount("/static", StaticFiles(directory=str(PROJECT_ROOT / "static")), name="static")
    for module in (people_api, visible_people_api, fleet_api, logbook_api):
        app.include_router(module.router, prefix="/api/v1")
    for module in (people_routes, people_account, logbook_routes):
        app.include_router(module.router)
    app.include_router(progress_api.router, prefix="/api/v1")
    app.include_router(training_api.router, prefix="/api/v1")
    app.include_router(program_api.router, prefix="/api/v1")
    app.include_router(progress_routes.router)
    app.include_router(program_routes.router)
    app.include_router(safety_api.router, prefix="/api/v1")
    app.include_router(safety_routes.router)
    app.include_router(standards_api.router, prefix="/api/v1")
    for module in (fleet_routes, fleet_setup_routes, type_page_routes, people_setup_routes, standards_routes):
        app.include_router(module.router)
    app.include_router(history_routes.router)
    app.include_router(track_api.router, prefix="/api/v1")
    app.include_router(track_routes.router)
    app.include_router(currency_api.router, prefix="/api/v1")
    app.include_router(currency_api.feed_router)
    app.include_router(currency_routes.router)
    app.include_router(standardisation_api.router, prefix="/api/v1")
    app.include_router(standardisation_routes.router)
    app.include_router(imports_api.router, prefix="/api/v1")
    app.include_router(imports_routes.router)
    _add_error_handlers(app)
    describe_errors(app)
    refuse_out_of_range(app)
    return app


def _favicon():
    """Browsers and tools ask for /favicon.ico; the icon itself is the SVG in static/."""
    return FileResponse(PROJECT_ROOT / "static" / "favicon.svg", media_type="image/svg+xml",
                        headers={"Cache-Control": "public, max-age=86400"})


HTTP_ERROR_WORDS = {
    404: "There is no page at this address. It may have been mistyped, or the record was discarded.",
    405: "This address cannot be used that way. Go back and use the page's own buttons.",
}


def readable_errors(exc: RequestValidationError) -> list[dict]:
    """Validation errors as field and sentence, without echoing the input back."""
    out = []
    for error in exc.errors():
        location = [str(part) for part in error.get("loc", ()) if part not in ("body", "query", "path")]
        message = str(error.get("msg", "is not valid")).removeprefix("Value error, ")
        out.append({"field": ".".join(location) or None, "message": message})
    return out


def _add_error_handlers(app: FastAPI) -> None:
    @app.exception_handler(FlarebookError)
    async def _service_error(request: Request, exc: FlarebookError):
        await record_refusal(request, exc)  # 403 and 404 go into the audit chain
        if request.url.path.startswith("/api/"):
            return JSONResponse({"detail": exc.message}, status_code=exc.status_code)
        return render(request, "error.html", {"message": exc.message, "status": exc.status_code},
                      status_code=exc.status_code, fragment="_error.html")

    @app.exception_handler(RequestValidationError)
    async def _validation_error(request: Request, exc: RequestValidationError):
        errors = readable_errors(exc)
        summary = "; ".join(f"{e['field']}: {e['message']}" if e["field"] else e["message"] for e in errors)
        if request.url.path.startswith("/api/"):
            return JSONResponse({"detail": summary, "errors": errors}, status_code=422)
        return render(request, "error.html", {"message": summary, "status": 422}, status_code=422,
                      fragment="_error.html")

    @app.exception_handler(StarletteHTTPException)
    async def _http_error(request: Request, exc: StarletteHTTPException):
        """Unknown addresses and wrong methods: JSON for the API and scripts, a page for a browser."""
        if request.url.path.startswith("/api/") or "text/html" not in request.headers.get("accept", ""):
            return JSONResponse({"detail": exc.detail}, status_code=exc.status_code, headers=exc.headers)
        message = HTTP_ERROR_WORDS.get(exc.status_code, "That could not be done.")
        return render(request, "error.html", {"message": message, "status": exc.status_code},
                      status_code=exc.status_code, fragment="_error.html")

    @app.exception_handler(OwnPasswordRequired)
    async def _own_password(request: Request, exc: OwnPasswordRequired):
        if is_htmx(request):
            return JSONResponse({"detail": "Choose your own password first."}, status_code=403,
                                headers={"HX-Redirect": "/account"})
        return RedirectResponse("/account", status_code=303)

    @app.exception_handler(SignInRequired)
    async def _sign_in(request: Request, exc: SignInRequired):
        if is_htmx(request):
            return JSONResponse({"detail": "Sign in again."}, status_code=401, headers={"HX-Redirect": "/signin"})
        return RedirectResponse("/signin", status_code=303)
