"""The account commands: create-admin, create-user and set-password read passwords from a
prompt or stdin (never an argument), and the first run prints a one-time password once."""

from __future__ import annotations

import io
import sys

import pytest
from sqlalchemy import select

from server import cli
from server.db.migrate import upgrade
from server.db.models import Asset, AuditEvent, User
from server.db.session import Database
from server.services.access.passwords import verify_password

GOOD = "cobalt-orchard-lantern-62"


@pytest.fixture
def cli_db(tmp_path, monkeypatch):
    url = f"sqlite:///{tmp_path / 'cli.sqlite3'}"
    upgrade(url)
    monkeypatch.setenv("TANKBOOK_DATABASE_URL", url)
    db = Database(url)
    yield db
    db.dispose()


def _stdin(monkeypatch, text: str) -> None:
    monkeypatch.setattr(sys, "stdin", io.StringIO(text))


def _user(db, name):
    with db.session() as s:
        return s.execute(select(User).where(User.username == name)).scalar_one_or_none()


def test_create_admin_from_stdin(cli_db, monkeypatch, capsys):
    _stdin(monkeypatch, GOOD + "\n")
    assert cli.main(["create-admin", "Alice", "--password-stdin", "--display-name", "Alice E."]) == 0
    alice = _user(cli_db, "alice")
    assert alice.role == "admin" and alice.all_assets and not alice.must_change_password
    assert verify_password(alice.password_hash, GOOD)
    assert "created admin alice" in capsys.readouterr().out
    with cli_db.session() as s:
        event = s.execute(select(AuditEvent).where(AuditEvent.entity_type == "user")).scalars().first()
        assert event.actor == "command line" and event.action == "create"


def test_weak_password_and_taken_name_are_refused(cli_db, monkeypatch, capsys):
    _stdin(monkeypatch, "password1234\n")
    assert cli.main(["create-admin", "alice", "--password-stdin"]) == 1
    assert "commonly used" in capsys.readouterr().err and _user(cli_db, "alice") is None
    _stdin(monkeypatch, GOOD + "\n")
    cli.main(["create-admin", "alice", "--password-stdin"])
    _stdin(monkeypatch, GOOD + "\n")
    assert cli.main(["create-user", "alice", "--role", "viewer", "--password-stdin"]) == 1
    assert "taken" in capsys.readouterr().err


def test_no_password_argument_exists():
    with pytest.raises(SystemExit):
        cli.build_parser().parse_args(["create-admin", "alice", "--password", GOOD])


def test_prompted_password_must_be_typed_twice(cli_db, monkeypatch):
    answers = iter([GOOD, GOOD + "x"])
    monkeypatch.setattr("getpass.getpass", lambda prompt="": next(answers))
    with pytest.raises(SystemExit, match="differ"):
        cli.main(["create-user", "bob", "--role", "engineer"])
    answers = iter([GOOD, GOOD])
    assert cli.main(["create-user", "bob", "--role", "engineer"]) == 0
    assert _user(cli_db, "bob").role == "engineer"


def test_create_user_limited_to_an_asset_and_set_password(cli_db, monkeypatch):
    with cli_db.session() as s:
        s.add(Asset(name="North", basin="B"))
    _stdin(monkeypatch, GOOD + "\n")
    assert cli.main(["create-user", "carol", "--role", "viewer", "--asset", "North", "--password-stdin"]) == 0
    assert not _user(cli_db, "carol").all_assets
    _stdin(monkeypatch, GOOD + "\n")
    assert cli.main(["create-user", "dan", "--role", "viewer", "--asset", "Nowhere", "--password-stdin"]) == 1
    _stdin(monkeypatch, "another-cobalt-river-71\n")
    assert cli.main(["set-password", "carol", "--password-stdin"]) == 0
    assert verify_password(_user(cli_db, "carol").password_hash, "another-cobalt-river-71")


def test_first_admin_is_made_once(cli_db):
    password = cli._first_admin(str(cli_db.engine.url))
    admin = _user(cli_db, "admin")
    assert admin.must_change_password and verify_password(admin.password_hash, password)
    assert cli._first_admin(str(cli_db.engine.url)) is None  # not again: no password is kept in clear


def test_the_banner_is_a_frame_that_says_how_to_replace_a_lost_password():
    lines = cli.first_admin_banner("http://127.0.0.1:8001/", "abcde-fghij").splitlines()
    assert lines[0] == lines[-1] and set(lines[0]) == {"+", "-"}
    assert {len(line) for line in lines} == {len(lines[0])}  # every line as wide as the frame
    assert all(line.startswith("|") and line.endswith("|") for line in lines[1:-1])
    text = "\n".join(lines)
    assert "abcde-fghij" in text and "http://127.0.0.1:8001/" in text
    assert "tankbook set-password admin" in text


def test_demo_no_longer_prints_a_password_in_its_output(cli_db, capsys):
    assert cli.main(["demo", "--if-empty"]) == 0
    assert "password" not in capsys.readouterr().out
    assert _user(cli_db, "admin") is None  # `serve --first-admin` makes it, after the server starts
    # the demo's reserves reviews were prepared and approved by two accounts without a password
    engineer, approver = _user(cli_db, "demo.engineer"), _user(cli_db, "demo.approver")
    assert engineer.password_hash is None and approver.password_hash is None
    assert (engineer.role, approver.role) == ("engineer", "approver")
    assert cli._first_admin(str(cli_db.engine.url))  # nobody can log in yet: the admin is made
    assert cli._first_admin(str(cli_db.engine.url)) is None
