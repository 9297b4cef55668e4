"""The ``tankbook`` command: serve, migrate, demo, recompute, worker, analyse, and accounts."""

from __future__ import annotations

import argparse
import sys

# Every command imports what it needs inside its own function: `tankbook analyse` reads
# files with no database, and importing SQLAlchemy and the models would cost it about half
# a second of its start-up (issue 17).


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
    _pin(settings)
    print("database schema is up to date")
    return 0


def _pin(settings, db=None) -> None:
    """Pin the storage basis of gas volumes (services/team_settings.py) before any is stored."""
    from .db.session import Database
    from .services.team_settings import pin_storage_basis

    own = db is None
    db = db or Database(settings.database_url)
    pin_storage_basis(db, settings)
    if own:
        db.dispose()


def cmd_demo(args) -> int:
    from .db.session import Database
    from .services.demo import demo_is_loaded, load_demo
    from .services.jobs import runner
    from .services.reserves.demo_reviews import load_demo_reviews
    from .services.reserves.rules import ReservesError

    settings = _settings()
    db = Database(settings.database_url)
    _pin(settings, db)
    with db.session() as session:
        loaded = demo_is_loaded(session)
        if not loaded:
            ids = load_demo(session)
    if loaded:
        db.dispose()
        if not args.if_empty:
            print("the database already holds fields; refusing to add the demo portfolio", file=sys.stderr)
            return 1
        print("the database already holds fields; demo portfolio not loaded")
        return 0
    ran = runner.drain(db)
    try:
        with db.session(write=True) as session:
            reviews = load_demo_reviews(session)
    except ReservesError as e:  # e.g. a field's estimate failed: the portfolio stays, without reviews
        print(f"the demo's reserves reviews were not added: {e}", file=sys.stderr)
        reviews = None
    print(f"loaded the demo portfolio: {len(ids)} fields, {ran} estimates computed")
    if reviews:
        print("with two reserves reviews: last year's approved, this year's in draft")
    db.dispose()
    return 0


def _first_admin(database_url: str) -> str | None:
    """On a database without users, make ``admin`` with a one-time password and return it."""
    from .db.base import utcnow
    from .db.session import Database
    from .services.access.accounts import ensure_first_admin

    db = Database(database_url)
    try:
        with db.session() as session:
            return ensure_first_admin(session, now=utcnow())
    finally:
        db.dispose()


def first_admin_banner(url: str, password: str) -> str:
    """The one-time administrator password, framed, with how to replace it if it is lost."""
    from .services.access.accounts import FIRST_ADMIN

    lines = [
        f"Tankbook is ready at {url}",
        "",
        f"Log in as {FIRST_ADMIN!r} with this one-time password:",
        "",
        f"    {password}",
        "",
        "You choose your own password when you first log in;",
        "this one is shown only now.",
        "Lost it? Stop the server and set a new one with",
        f"    .venv/bin/tankbook set-password {FIRST_ADMIN}",
    ]
    width = max(len(line) for line in lines)
    rule = "+" + "-" * (width + 4) + "+"
    return "\n".join([rule, *(f"|  {line:<{width}}  |" for line in lines), rule])


def _announce_first_admin(server, settings, url: str) -> None:
    """Once the server listens, make the first administrator (a database without users only)
    and print its password last, after the server's start-up lines."""
    import time

    while not server.started:
        if server.should_exit:
            return
        time.sleep(0.05)
    password = _first_admin(settings.database_url)
    if password:
        print("\n" + first_admin_banner(url, password) + "\n", flush=True)


def _read_password(args, username: str) -> str:
    """The new password from stdin (``--password-stdin``) or typed twice at a prompt; never an argument."""
    import getpass

    if args.password_stdin:
        password = sys.stdin.readline().rstrip("\r\n")
    else:
        password = getpass.getpass(f"New password for {username}: ")
        if getpass.getpass("Again: ") != password:
            raise SystemExit("the two passwords differ; nothing changed")
    return password


def _account_command(args, *, role: str | None) -> int:
    from sqlalchemy import select

    from .db.base import utcnow
    from .db.models import Asset, User
    from .db.session import Database
    from .services.access import accounts
    from .services.access.passwords import PasswordPolicyError
    from .services.audit import Actor

    settings = _settings()
    db = Database(settings.database_url)
    actor = Actor(None, "command line")
    try:
        username = accounts.normalize_username(args.username)
        password = _read_password(args, username)
        with db.session() as session:
            if role is None:  # set-password
                user = session.execute(select(User).where(User.username == username)).scalar_one_or_none()
                if user is None:
                    raise accounts.AccountError(f"no user {username!r}")
                accounts.set_password(
                    session, actor, user, password, now=utcnow(), min_length=settings.password_min_length
                )
                if not user.is_active:
                    print("note: the account is disabled; an administrator can enable it")
                user.failed_logins = 0
                print(f"password of {username} set; their sessions were ended")
                return 0
            names = args.asset or []
            asset_ids = list(session.execute(select(Asset.id).where(Asset.name.in_(names))).scalars())
            if len(asset_ids) != len(set(names)):
                raise accounts.AccountError(f"unknown asset among {', '.join(names)}")
            accounts.create_user(
                session,
                actor,
                username=username,
                role=role,
                password=password,
                display_name=args.display_name or "",
                all_assets=not names,
                asset_ids=asset_ids,
                min_length=settings.password_min_length,
                now=utcnow(),
            )
        print(
            f"created {role} {username}" + (f" for assets {', '.join(names)}" if names else " (all assets)")
        )
        return 0
    except (accounts.AccountError, PasswordPolicyError, ValueError) as exc:
        print(f"error: {exc}", file=sys.stderr)
        return 1
    finally:
        db.dispose()


def cmd_create_admin(args) -> int:
    args.asset = None
    return _account_command(args, role="admin")


def cmd_create_user(args) -> int:
    return _account_command(args, role=args.role)


def cmd_set_password(args) -> int:
    return _account_command(args, role=None)


def _compiled_engine() -> bool:
    """Switch on the engine's compiled kernels in a process that recomputes many fields and
    load them now (about 1 s, won back after a few fields; server/engine/accel.py). Anything
    that stops them (numba missing, no place for its cache) leaves the numpy path on, with a
    warning: the results are the same, only slower."""
    import logging

    from .engine import accel
    from .engine.warm import warm

    try:
        if warm():
            return True
    except Exception:  # noqa: BLE001 - any failure to compile falls back to the reference path
        logging.getLogger(__name__).warning("compiled kernels unavailable; using numpy", exc_info=True)
    accel.disable()
    return False


def cmd_recompute(args) -> int:
    from sqlalchemy import select

    from .db.models import Field
    from .db.session import Database
    from .services.jobs import queue as jobs
    from .services.jobs import runner

    db = Database(_settings().database_url)
    with db.session() as session:
        stmt = select(Field.id)
        if args.field:
            stmt = stmt.where(Field.name.in_(args.field))
        ids = list(session.execute(stmt).scalars())
        jobs.enqueue_field_recompute(session, ids, reason="command line")
    if len(ids) > 1:
        _compiled_engine()
    ran = runner.drain(db)
    print(f"recomputed {ran} field(s)")
    db.dispose()
    return 0


def cmd_serve(args) -> int:
    import threading

    import uvicorn

    from .app import create_app
    from .settings import Settings

    overrides = {k: v for k, v in (("host", args.host), ("port", args.port)) if v}
    settings = Settings(**overrides)  # re-validated: a public host needs a real secret key
    host, port = settings.host, settings.port
    url = f"http://{host}:{port}/"
    print(f"Tankbook at {url}", flush=True)
    config = uvicorn.Config(
        create_app(settings),
        host=host,
        port=port,
        log_level="info",
        proxy_headers=True,  # trust X-Forwarded-For/-Proto only from forwarded_allow_ips
        forwarded_allow_ips=settings.forwarded_allow_ips,
    )
    server = uvicorn.Server(config)
    if settings.job_runner == "thread":  # the app's own job thread recomputes fields
        _compiled_engine()
    if args.first_admin:
        threading.Thread(
            target=_announce_first_admin, args=(server, settings, url), name="first-admin", daemon=True
        ).start()
    server.run()
    return 0


def cmd_worker(args) -> int:
    import datetime as dt
    import signal

    from .db.session import Database
    from .services.jobs.worker import Worker

    settings = _settings()
    db = Database(settings.database_url)
    _pin(settings, db)
    _compiled_engine()
    worker = Worker(
        db,
        poll_seconds=settings.job_poll_seconds,
        stale_after=dt.timedelta(seconds=settings.job_stale_seconds),
    )
    if args.once:
        from .services.jobs import runner

        print(f"ran {runner.drain(db, worker.name, stale_after=worker.stale_after)} job(s)")
        db.dispose()
        return 0
    for sig in (signal.SIGTERM, signal.SIGINT):
        signal.signal(sig, lambda *_: worker.stop(timeout=0))
    print(f"worker {worker.name} waiting for jobs (Ctrl-C stops after the current job)")
    worker.run()
    db.dispose()
    return 0


def cmd_analyse(args) -> int:
    import json
    from pathlib import Path

    from .engine.analysis import analyse_field
    from .engine.errors import EngineError
    from .services.forecast import CAUTION as FORECAST_CAUTION
    from .services.forecast import stop_words, stored_forecast
    from .services.ingest.offline import OfflineInputError, load_offline_field
    from .services.ingest.parse import ReadOptions
    from .services.serialize import to_jsonable

    units = {}
    for item in args.unit or []:
        quantity, _, unit = item.partition("=")
        units[quantity.strip()] = unit.strip()
    options = ReadOptions(
        units=units,
        atmosphere_psia=args.atmosphere_psia,
        date_order=args.date_order,
        standard_conditions=args.standard_conditions,
    )
    try:
        choices = json.loads(Path(args.choices).read_text()) if args.choices else {}
        loaded = load_offline_field(
            fields=Path(args.fields),
            fluids=Path(args.fluids),
            surveys=Path(args.surveys),
            production=Path(args.production),
            wells=Path(args.wells) if args.wells else None,
            lab_table=Path(args.lab_table) if args.lab_table else None,
            volumetrics=Path(args.volumetrics) if args.volumetrics else None,
            field_name=args.field,
            options=options,
            choices=choices,
            well_tests=Path(args.well_tests) if args.well_tests else None,
            plan=Path(args.plan) if args.plan else None,
            planned_wells=Path(args.planned_wells) if args.planned_wells else None,
        )
        result = analyse_field(loaded.inputs)
    except OfflineInputError as exc:
        print(json.dumps({"status": "invalid_input", "message": str(exc), "files": exc.reports}, indent=2))
        return 2
    except (OSError, ValueError) as exc:
        print(json.dumps({"status": "invalid_input", "message": str(exc)}, indent=2))
        return 2
    except EngineError as exc:
        print(json.dumps({"status": "error", "message": str(exc)}, indent=2))
        return 1
    out = {
        "field": loaded.name,
        "status": result.status,
        "engine_version": result.engine_version,
        "caution": CAUTION,
        "files": loaded.reports,
        "summary": to_jsonable(
            {
                "method": result.method,
                "message": result.message,
                "giip_low_bscf": result.giip_low_bscf,
                "giip_best_bscf": result.giip_best_bscf,
                "giip_high_bscf": result.giip_high_bscf,
                "eur_bscf": result.eur_bscf,
                "recovery_factor_frac": result.recovery_factor_frac,
                "cumulative_gas_bscf": result.cumulative_gas_bscf,
                "remaining_bscf": result.remaining_bscf,
                "basis": None if result.basis is None else result.basis.title,
                "basis_reason": None if result.basis is None else result.basis.reason,
                "straight_line_giip_bscf": result.line_giip_best_bscf,
                "standard_conditions": loaded.inputs.standard_conditions.label,
            }
        ),
        "analysis": to_jsonable(result),
    }
    forecast, _ = stored_forecast(result.forecast)
    out["analysis"]["forecast"] = forecast
    out["forecast"] = None
    if forecast is not None:  # the summary: per case its end, why, EUR and remaining; and the caution
        out["forecast"] = {
            "basis_model": forecast["basis_model"],
            "deliverability_form": forecast.get("deliverability_form"),
            "water": (forecast.get("water") or {}).get("sentence"),
            "caution": FORECAST_CAUTION,
            "cases": [
                {
                    "case": p["case"],
                    "end_date": p["end_date"],
                    "stop_reason": p["stop_reason"],
                    "stops_because": stop_words(p["stop_reason"]),
                    "eur_bscf": p["eur_bscf"],
                    "remaining_bscf": p["remaining_bscf"],
                    "yearly_gas_bscf": {str(r["year"]): r["gas_bscf"] for r in p["yearly"]},
                    "yearly_water_stb": (
                        {str(r["year"]): r["water_stb"] for r in p["yearly"]}
                        if p.get("water_stb") is not None
                        else None
                    ),
                }
                for p in forecast["profiles"]
            ],
        }
    elif loaded.inputs.plan is None:
        out["forecast_message"] = "no forecast: give the field's plan with --plan"
    print(json.dumps(out, indent=2, allow_nan=False))
    return 0 if result.status == "ok" else 3


CAUTION = (
    "Estimates support, and do not replace, the judgement of qualified reservoir engineers; reserves "
    "must be booked under the rules that apply to your company. Low/best/high (P90/P50/P10) combine data "
    "scatter, model spread and systematic input errors; no model sees a mechanism it does not hold."
)


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(prog="tankbook", description=__doc__)
    sub = parser.add_subparsers(dest="command", required=True)
    s = sub.add_parser("serve", help="run the web application")
    s.add_argument("--host", help="address to listen on (default TANKBOOK_HOST, 127.0.0.1)")
    s.add_argument("--port", type=int, help="port to listen on (default TANKBOOK_PORT, 8000)")
    s.add_argument(
        "--first-admin",
        action="store_true",
        help="on a database without users, create 'admin' with a one-time password and print it "
        "once the server listens",
    )
    s.set_defaults(func=cmd_serve)
    m = sub.add_parser("migrate", help="create or upgrade the database schema")
    m.set_defaults(func=cmd_migrate)
    d = sub.add_parser("demo", help="load the invented demo portfolio")
    d.add_argument("--if-empty", action="store_true", help="do nothing if fields exist")
    d.set_defaults(func=cmd_demo)
    r = sub.add_parser("recompute", help="recompute estimates (all fields, or those named)")
    r.add_argument("--field", action="append", help="field name (repeatable)")
    r.set_defaults(func=cmd_recompute)
    for name, func, text in (
        ("create-admin", cmd_create_admin, "create an administrator (password from a prompt or stdin)"),
        ("create-user", cmd_create_user, "create a user with a role (password from a prompt or stdin)"),
        ("set-password", cmd_set_password, "set a user's password and end their sessions"),
    ):
        a = sub.add_parser(name, help=text)
        a.add_argument("username")
        a.add_argument("--password-stdin", action="store_true", help="read the password from standard input")
        if name != "set-password":
            a.add_argument("--display-name", help="full name shown in the app")
        if name == "create-user":
            a.add_argument("--role", required=True, choices=["viewer", "engineer", "approver", "admin"])
            a.add_argument("--asset", action="append", help="limit to this asset (repeatable); default: all")
        a.set_defaults(func=func)
    w = sub.add_parser("worker", help="run queued recompute jobs (any number may run at once)")
    w.add_argument("--once", action="store_true", help="run what is queued, then stop")
    w.set_defaults(func=cmd_worker)
    a = sub.add_parser(
        "analyse",
        help="analyse one field from upload files, without a database; prints JSON",
        description="Reads the field, fluid, survey and production files (the upload formats in "
        "docs/uploads.md) and prints the full estimate as JSON. Exit status: 0 estimate, 2 invalid "
        "files, 3 the data cannot support an estimate, 1 engine error.",
    )
    a.add_argument("--fields", required=True, help="fields file (one row, or choose with --field)")
    a.add_argument("--fluids", required=True, help="fluid descriptions file")
    a.add_argument("--surveys", required=True, help="pressure surveys file")
    a.add_argument("--production", required=True, help="monthly production file")
    a.add_argument("--wells", help="wells file (compartments, gauge reference depths)")
    a.add_argument("--lab-table", help="fluid lab table file")
    a.add_argument(
        "--volumetrics",
        help="volumetric estimates file: the newest of the field is compared with the dynamic GIIP, "
        "as in the app",
    )
    a.add_argument("--field", help="field name, when the files hold several")
    a.add_argument("--choices", help="JSON file of analysis choices (z_method, weighting, ...)")
    a.add_argument("--well-tests", help="well tests file (multi-rate tests, for deliverability)")
    a.add_argument("--plan", help="field plans file: the field's plan; without it there is no forecast")
    a.add_argument("--planned-wells", help="planned wells file (needs --plan)")
    a.add_argument(
        "--unit",
        action="append",
        metavar="QUANTITY=UNIT",
        help="unit for columns named without one, e.g. pressure=psig (repeatable)",
    )
    a.add_argument("--atmosphere-psia", type=float, default=14.696, help="for gauge pressures")
    a.add_argument("--date-order", choices=("iso", "dmy", "mdy"), default="iso")
    a.add_argument("--standard-conditions", choices=("oilfield", "iso"), default="oilfield")
    a.set_defaults(func=cmd_analyse)
    return parser


def main(argv: list[str] | None = None) -> int:
    args = build_parser().parse_args(argv)
    return args.func(args)


if __name__ == "__main__":
    raise SystemExit(main())
