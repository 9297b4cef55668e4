"""The application factory. Nothing connects to a database at import time."""

from __future__ import annotations

import datetime as dt
import logging
from contextlib import asynccontextmanager
from pathlib import Path

import plotly
from fastapi import FastAPI, Request
from fastapi.responses import FileResponse
from fastapi.staticfiles import StaticFiles

from .db.base import utcnow
from .db.session import Database
from .engine import ENGINE_VERSION
from .services.team_settings import pin_storage_basis
from .services.worker import Worker
from .settings import PROJECT_ROOT, Settings
from .web import (
    account_pages,
    admin_pages,
    api,
    api_accounts,
    api_data,
    api_fields,
    api_settings,
    api_uploads,
    data_pages,
    field_pages,
    pages,
    uploads,
)
from .web.auth import Public, Reader, document_auth_errors
from .web.display import units_for_request
from .web.errors import install_error_handlers
from .web.limits import UploadLimitMiddleware
from .web.portfolio_pages import router as portfolio_router
from .web.security import CrossSiteGuardMiddleware, SecurityHeadersMiddleware
from .web.templating import make_templates

log = logging.getLogger(__name__)
PLOTLY_JS = Path(plotly.__file__).parent / "package_data" / "plotly.min.js"


def _auth_context(request: Request) -> dict:
    """Every template knows who is logged in, their session's form token and their display units."""
    principal = getattr(request.state, "principal", None)
    return {
        "current_user": principal,
        "csrf_token": principal.csrf_token if principal else "",
        "du": units_for_request(request),
    }


def create_app(settings: Settings | None = None, database: Database | None = None) -> FastAPI:
    """Build the app. ``database`` lets tests share a connection; by default one is made
    from ``settings.database_url`` when the app starts."""
    settings = settings or Settings()
    if settings.environment == "production" and not settings.behind_tls:
        log.warning(
            "production without TANKBOOK_BEHIND_TLS: cookies are not marked Secure (docs/deployment.md)"
        )

    @asynccontextmanager
    async def lifespan(app: FastAPI):
        owned = app.state.db is None
        if owned:
            app.state.db = Database(settings.database_url)
        pin_storage_basis(app.state.db, settings)
        app.state.worker = None
        if settings.job_runner == "thread":
            app.state.worker = Worker(
                app.state.db,
                poll_seconds=settings.job_poll_seconds,
                stale_after=dt.timedelta(seconds=settings.job_stale_seconds),
            )
            app.state.worker.start()
        try:
            yield
        finally:
            if app.state.worker is not None:
                app.state.worker.stop()
            if owned:
                app.state.db.dispose()
                app.state.db = None

    app = FastAPI(
        title="Tankbook",
        version=ENGINE_VERSION,
        description=(
            "Gas material balance and reserves for a portfolio of gas fields. "
            "Authenticate with `Authorization: Bearer <token>` (tokens are made on the account page)."
        ),
        lifespan=lifespan,
        telemetry={"tracing": False, "metrics": False, "logs": False, "operation_spans": False},
        # The schema is served below behind a login; the interactive docs load scripts from a CDN.
        openapi_url=None,
        docs_url=None,
        redoc_url=None,
    )
    app.state.settings = settings
    app.state.db = database
    app.state.clock = utcnow
    app.state.templates = make_templates()
    app.state.templates.context_processors.append(_auth_context)
    install_error_handlers(app)
    app.add_middleware(UploadLimitMiddleware, max_bytes=settings.max_upload_bytes)
    app.add_middleware(CrossSiteGuardMiddleware)
    app.add_middleware(SecurityHeadersMiddleware, hsts=settings.behind_tls)

    @app.get("/vendor/plotly.min.js", include_in_schema=False, dependencies=[Public])
    def plotly_js():
        return FileResponse(
            PLOTLY_JS,
            media_type="text/javascript",
            headers={"Cache-Control": "public, max-age=31536000, immutable"},
        )

    @app.get("/favicon.ico", include_in_schema=False, dependencies=[Public])
    def favicon():
        return FileResponse(PROJECT_ROOT / "static" / "favicon.svg", media_type="image/svg+xml")

    @app.get("/openapi.json", include_in_schema=False)
    def openapi_schema(_: Reader):
        return app.openapi()

    app.mount("/static", StaticFiles(directory=PROJECT_ROOT / "static"), name="static")
    app.include_router(api.router)
    app.include_router(api_uploads.router)
    app.include_router(api_accounts.router)
    app.include_router(api_settings.router)
    app.include_router(account_pages.router)
    app.include_router(admin_pages.router)
    app.include_router(pages.router)
    app.include_router(portfolio_router)
    app.include_router(uploads.router)
    app.include_router(data_pages.router)
    app.include_router(api_data.router)
    app.include_router(field_pages.router)
    app.include_router(api_fields.router)
    document_auth_errors(app)
    return app
