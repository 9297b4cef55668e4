"""The ``tankbook`` command: serve, migrate, demo, recompute."""

from __future__ import annotations

import argparse
import sys

from sqlalchemy import select


def _settings():
    from .settings import Settings

    return Settings()


def cmd_migrate(args) -> int:
    from .db.migrate import upgrade

    settings = _settings()
    if settings.is_sqlite:
        from pathlib import Path

        Path(settings.database_url.removeprefix("sqlite:///")).parent.mkdir(parents=True, exist_ok=True)
    upgrade(settings.database_url)
    print("database schema is up to date")
    return 0


def cmd_demo(args) -> int:
    from .db.session import Database
    from .services import jobs
    from .services.demo import demo_is_loaded, load_demo

    db = Database(_settings().database_url)
    with db.session() as session:
        if demo_is_loaded(session):
            if args.if_empty:
                print("the database already holds fields; demo portfolio not loaded")
                return 0
            print("the database already holds fields; refusing to add the demo portfolio", file=sys.stderr)
            return 1
        ids = load_demo(session)
    ran = jobs.drain(db)
    print(f"loaded the demo portfolio: {len(ids)} fields, {ran} estimates computed")
    db.dispose()
    return 0


def cmd_recompute(args) -> int:
    from .db.models import Field
    from .db.session import Database
    from .services import jobs

    db = Database(_settings().database_url)
    with db.session() as session:
        stmt = select(Field.id)
        if args.field:
            stmt = stmt.where(Field.name.in_(args.field))
        ids = list(session.execute(stmt).scalars())
        jobs.enqueue_field_recompute(session, ids, reason="command line")
    ran = jobs.drain(db)
    print(f"recomputed {ran} field(s)")
    db.dispose()
    return 0


def cmd_serve(args) -> int:
    import uvicorn

    from .app import create_app
    from .settings import Settings

    overrides = {k: v for k, v in (("host", args.host), ("port", args.port)) if v}
    settings = Settings(**overrides)  # re-validated: a public host needs a real secret key
    host, port = settings.host, settings.port
    print(f"Tankbook at http://{host}:{port}/")
    uvicorn.run(create_app(settings), host=host, port=port, log_level="info")
    return 0


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(prog="tankbook", description=__doc__)
    sub = parser.add_subparsers(dest="command", required=True)
    s = sub.add_parser("serve", help="run the web application")
    s.add_argument("--host")
    s.add_argument("--port", type=int)
    s.set_defaults(func=cmd_serve)
    m = sub.add_parser("migrate", help="create or upgrade the database schema")
    m.set_defaults(func=cmd_migrate)
    d = sub.add_parser("demo", help="load the invented demo portfolio")
    d.add_argument("--if-empty", action="store_true", help="do nothing if fields exist")
    d.set_defaults(func=cmd_demo)
    r = sub.add_parser("recompute", help="recompute estimates (all fields, or those named)")
    r.add_argument("--field", action="append", help="field name (repeatable)")
    r.set_defaults(func=cmd_recompute)
    return parser


def main(argv: list[str] | None = None) -> int:
    args = build_parser().parse_args(argv)
    return args.func(args)


if __name__ == "__main__":
    raise SystemExit(main())
