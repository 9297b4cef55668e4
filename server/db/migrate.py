"""Run Alembic programmatically (CLI, app start-up and tests)."""

from __future__ import annotations

from alembic import command
from alembic.config import Config

from ..settings import PROJECT_ROOT


def alembic_config(database_url: str) -> Config:
    """An Alembic config for the project's migrations against ``database_url``."""
    cfg = Config(str(PROJECT_ROOT / "alembic.ini"))
    cfg.set_main_option("script_location", str(PROJECT_ROOT / "migrations"))
    cfg.attributes["database_url"] = database_url
    return cfg


def upgrade(database_url: str, revision: str = "head") -> None:
    """Bring the schema to ``revision``."""
    command.upgrade(alembic_config(database_url), revision)


def downgrade(database_url: str, revision: str = "base") -> None:
    """Take the schema back to ``revision``."""
    command.downgrade(alembic_config(database_url), revision)
