"""The application factory. Nothing connects to a database at import time."""

from __future__ import annotations

import datetime as dt
import logging
from contextlib import asynccontextmanager
from pathlib import Path

import anyio.to_thread
import plotly
from fastapi import Depends, FastAPI, HTTPException, Request
from fastapi.responses import FileResponse
from fastapi.staticfiles import StaticFiles

from .db.base import utcnow
from .db.session import Database
from .engine import ENGINE_VERSION
from .services.ingest.staging import purge_staging
from .services.jobs.worker import Worker
from .services.team_settings import pin_storage_basis
from .settings import PROJECT_ROOT, Settings
from .web.api import accounts as api_accounts
from .web.api import core as api
from .web.api import field_data as api_data
from .web.api import fields as api_fields
from .web.api import reserves as api_reserves
from .web.api import reserves_movements as api_reserves_movements
from .web.api import reserves_settings as api_reserves_settings
from .web.api import settings as api_settings
from .web.api import uploads as api_uploads
from .web.assets import AssetStore, asset_response
from .web.auth import Public, Reader, document_auth_errors
from .web.display import units_for_request
from .web.errors import install_error_handlers
from .web.limits import UploadLimitMiddleware
from .web.pages import account as account_pages
from .web.pages import admin as admin_pages
from .web.pages import admin_settings as admin_settings_pages
from .web.pages import field as pages
from .web.pages import field_data as data_pages
from .web.pages import field_work as field_pages
from .web.pages import reserves as reserves_pages
from .web.pages import reserves_field as reserves_field_pages
from .web.pages import reserves_movements as reserves_movements_pages
from .web.pages import uploads
from .web.pages.portfolio import router as portfolio_router
from .web.security import CrossSiteGuardMiddleware, SecurityHeadersMiddleware
from .web.templating import make_templates
from .web.text_input import refuse_control_characters

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
            app.state.db = Database(
                settings.database_url,
                pool_size=settings.pool_size,
                max_overflow=0,
                pool_timeout_seconds=settings.db_pool_timeout_seconds,
            )
        # Requests served at once = route threads; each holds at most one connection, and the
        # pool has one for each thread and for the background work (docs/deployment.md).
        anyio.to_thread.current_default_thread_limiter().total_tokens = settings.threads
        pin_storage_basis(app.state.db, settings)
        purge_staging(app.state.db)
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
        dependencies=[Depends(refuse_control_characters)],
        telemetry={"tracing": False, "metrics": False, "logs": False, "operation_spans": False},
        # The schema is served below behind a login; the interactive docs load scripts from a CDN.
        openapi_url=None,
        docs_url=None,
        redoc_url=None,
    )
    app.state.settings = settings
    app.state.db = database
    # A request holds a database session only with a ticket (web/deps.py get_session): at
    # most one connection per ticket, tickets = route threads < pooled connections.
    app.state.admission = anyio.Semaphore(settings.request_tickets)
    app.state.clock = utcnow
    app.state.assets = AssetStore.from_directory(
        PROJECT_ROOT / "static",
        extra={"vendor/plotly.min.js": PLOTLY_JS},
        follow_edits=settings.environment == "local",
    )
    app.state.templates = make_templates()
    app.state.templates.env.globals["asset"] = app.state.assets.url
    app.state.templates.context_processors.append(_auth_context)
    install_error_handlers(app)
    app.add_middleware(UploadLimitMiddleware, max_bytes=settings.max_upload_bytes)
    app.add_middleware(CrossSiteGuardMiddleware)
    app.add_middleware(SecurityHeadersMiddleware, hsts=settings.behind_tls)

    @app.get("/assets/{digest}/{name:path}", include_in_schema=False, dependencies=[Public])
    def static_asset(request: Request, digest: str, name: str):
        """A static file at its content-hashed URL (web/assets.py): gzipped, cached a year."""
        asset = app.state.assets.get(name, digest)
        if asset is None:
            raise HTTPException(status_code=404, detail="no such file (a page from an older release?)")
        return asset_response(request, asset)

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
    app.include_router(admin_settings_pages.router)
    app.include_router(pages.router)
    app.include_router(portfolio_router)
    app.include_router(uploads.router)
    app.include_router(data_pages.router)
    app.include_router(api_data.router)
    app.include_router(field_pages.router)
    app.include_router(api_fields.router)
    app.include_router(api_reserves.router)
    app.include_router(reserves_pages.router)
    app.include_router(reserves_field_pages.router)
    app.include_router(api_reserves_movements.router)
    app.include_router(api_reserves_settings.router)
    app.include_router(reserves_movements_pages.router)
    document_auth_errors(app)
    return app
