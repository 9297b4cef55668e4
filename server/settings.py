"""Typed settings, read from the environment (prefix ``TANKBOOK_``) or a ``.env`` file."""

from __future__ import annotations

import secrets
from pathlib import Path
from typing import Literal

from pydantic import Field, model_validator
from pydantic_settings import BaseSettings, SettingsConfigDict

PROJECT_ROOT = Path(__file__).resolve().parent.parent
_LOCAL_HOSTS = {"127.0.0.1", "localhost", "::1"}


class Settings(BaseSettings):
    """Application settings. Build with ``Settings()``; nothing is read at import time."""

    model_config = SettingsConfigDict(env_prefix="TANKBOOK_", env_file=".env", extra="ignore")

    database_url: str = Field(
        default=f"sqlite:///{PROJECT_ROOT / 'var' / 'tankbook.sqlite3'}",
        description="SQLAlchemy URL; SQLite file by default, PostgreSQL for a team.",
    )
    secret_key: str | None = Field(
        default=None,
        description="Secret for signing tokens. Required outside local use; generated per run locally.",
    )
    environment: Literal["local", "production", "test"] = "local"
    host: str = "127.0.0.1"
    port: int = 8000
    standard_conditions: Literal["oilfield", "iso"] = "oilfield"
    display_units: Literal["oilfield", "si"] = "oilfield"
    atmosphere_psia: float = Field(default=14.696, gt=10, lt=16)
    max_upload_bytes: int = Field(default=20 * 1024 * 1024, gt=0)
    job_runner: Literal["thread", "inline", "external"] = Field(
        default="thread",
        description="thread: the app runs queued jobs in a background thread; inline: a request that "
        "queues jobs runs them before it answers (tests, scripts); external: `tankbook worker` processes.",
    )
    behind_tls: bool = Field(
        default=False,
        description="Served over HTTPS by a reverse proxy: Secure cookies and HSTS.",
    )
    forwarded_allow_ips: str = Field(
        default="127.0.0.1",
        description="Proxies trusted to set X-Forwarded-For/-Proto (comma-separated, or '*').",
    )
    session_idle_minutes: int = Field(default=120, gt=0, le=7 * 24 * 60)
    session_absolute_hours: int = Field(default=12, gt=0, le=30 * 24)
    password_min_length: int = Field(default=12, ge=8, le=128)
    login_free_failures_per_account: int = Field(default=5, ge=1)
    login_free_failures_per_address: int = Field(default=20, ge=1)
    login_throttle_window_minutes: int = Field(default=15, gt=0)
    login_max_delay_seconds: int = Field(default=900, gt=0)
    threads: int = Field(
        default=20,
        gt=0,
        le=500,
        description="Requests served at once per process (the thread pool of routes); each holds at "
        "most one database connection.",
    )
    db_pool_size: int | None = Field(
        default=None,
        gt=0,
        description="Database connections per process; by default threads + 4 (the job worker, its "
        "heartbeat, a page's own recompute), so no request waits for a connection.",
    )
    db_pool_timeout_seconds: float = Field(
        default=30.0,
        gt=0,
        description="How long a request waits for a pooled connection before it fails (with the "
        "admission tickets no request should ever wait).",
    )
    job_poll_seconds: float = Field(default=2.0, gt=0, description="How often an idle worker looks for jobs.")
    job_stale_seconds: int = Field(
        default=15,
        gt=0,
        description="A running job without a heartbeat for this long is taken over (its worker beats "
        "every fifth of it, so only a worker that is gone falls silent).",
    )
    xlsx_max_uncompressed_bytes: int = Field(
        default=100 * 1024 * 1024,
        gt=0,
        description="XLSX uploads that expand beyond this are refused unopened.",
    )
    xlsx_max_members: int = Field(default=500, gt=0, description="XLSX uploads with more parts are refused.")
    staging_max_bytes_per_user: int = Field(
        default=64 * 1024 * 1024,
        gt=0,
        description="Checked files one user may keep waiting for confirmation (the oldest make room).",
    )
    staging_max_bytes_total: int = Field(
        default=1024 * 1024 * 1024,
        gt=0,
        description="Checked files all users together may keep waiting for confirmation (then refused).",
    )
    upload_max_rows: int = Field(
        default=1_000_000, gt=0, description="Uploads with more data rows are refused (the upload budget)."
    )
    upload_max_cells: int = Field(
        default=3_000_000,
        gt=0,
        description="Uploads with more cells are refused as soon as the count passes it (the upload budget).",
    )

    @model_validator(mode="after")
    def _refuse_insecure(self) -> Settings:
        if self.secret_key is None:
            if self.environment == "production" or self.host not in _LOCAL_HOSTS:
                raise ValueError(
                    "TANKBOOK_SECRET_KEY must be set (at least 32 characters) when Tankbook is "
                    "not running locally"
                )
            self.secret_key = secrets.token_urlsafe(32)
        elif len(self.secret_key) < 32:
            raise ValueError("TANKBOOK_SECRET_KEY must be at least 32 characters")
        return self

    @property
    def pool_size(self) -> int:
        """Connections per process: ``db_pool_size``, or the thread count plus background work."""
        return self.db_pool_size if self.db_pool_size is not None else self.threads + 4

    @property
    def request_tickets(self) -> int:
        """Requests that may hold a database session at once: the route threads, but always
        at least one connection fewer than the pool (web/deps.py get_session)."""
        return max(1, min(self.threads, self.pool_size - 1))

    @property
    def is_sqlite(self) -> bool:
        return self.database_url.startswith("sqlite")
