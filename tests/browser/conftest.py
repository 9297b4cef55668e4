"""A live Tankbook (uvicorn in a thread, demo portfolio in a fresh SQLite file) and
Debian's Chromium driven by Playwright. Never downloads a browser.

``page`` is logged in as an engineer through the real login page; ``anon_page`` is not logged in.
``BROWSER_USERS`` holds one account per role (password ``TEST_PASSWORD``)."""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest

from server.db.base import utcnow
from server.db.migrate import upgrade
from server.db.session import Database
from server.services.access import accounts
from server.services.audit import Actor
from server.services.demo import load_demo
from server.services.jobs import runner
from tests.factories import add_volumetric_history, make_field
from tests.web.conftest import TEST_PASSWORD
from tests.web.live import serving

BROWSER_USERS = {role: f"browser-{role}" for role in ("viewer", "engineer", "approver", "admin")}

CHROMIUM = shutil.which("chromium") or shutil.which("chromium-browser")
SCREENSHOTS = Path(__file__).resolve().parents[2] / "var" / "screenshots"


def pytest_collection_modifyitems(items):
    for item in items:
        if "tests/browser" in str(item.fspath):
            item.add_marker(pytest.mark.browser)


@pytest.fixture(scope="session")
def browser():
    if CHROMIUM is None:
        pytest.skip("Debian's chromium is not installed (apt-get install chromium)")
    from playwright.sync_api import sync_playwright

    with sync_playwright() as pw:
        b = pw.chromium.launch(
            executable_path=CHROMIUM,
            headless=True,
            args=[
                "--no-sandbox",
                "--disable-gpu",
                "--disable-dev-shm-usage",
                "--disable-background-networking",
                "--disable-component-update",
                "--disable-sync",
                "--no-first-run",
            ],
        )
        yield b
        b.close()


@pytest.fixture
def anon_page(browser):
    context = browser.new_context(viewport={"width": 1280, "height": 900})
    p = context.new_page()
    p.set_default_timeout(15000)
    yield p
    context.close()


def log_in(page, base_url: str, username: str, password: str = TEST_PASSWORD) -> None:
    """Log in through the login page, as a person would."""
    page.goto(base_url + "/login")
    page.get_by_label("User name").fill(username)
    page.get_by_label("Password").fill(password)
    with page.expect_navigation():  # the form posts, then the server redirects
        page.get_by_role("button", name="Log in").click()


@pytest.fixture
def page(anon_page, live_server):
    """A browser logged in as an engineer through the login page."""
    log_in(anon_page, live_server, BROWSER_USERS["engineer"])
    if anon_page.locator("#account-link").count() != 1:
        pytest.fail(f"login through the page failed at {anon_page.url}: {anon_page.content()[-1500:]}")
    return anon_page


@pytest.fixture(scope="session")
def live_server(tmp_path_factory):
    url = f"sqlite:///{tmp_path_factory.mktemp('live') / 'live.sqlite3'}"
    upgrade(url)
    db = Database(url)
    with db.session() as s:
        load_demo(s)
    runner.drain(db)
    with db.session() as s:
        for role, username in BROWSER_USERS.items():
            accounts.create_user(
                s, Actor(None, "test"), username=username, role=role, password=TEST_PASSWORD, now=utcnow()
            )
    db.dispose()
    with serving(url, "b") as base_url:
        yield base_url


@pytest.fixture
def console_errors(anon_page):
    """Console errors of the test's browser page (``page`` is ``anon_page`` after logging in)."""
    page = anon_page
    errors: list[str] = []
    page.on("console", lambda m: errors.append(m.text) if m.type == "error" else None)
    page.on("pageerror", lambda e: errors.append(str(e)))
    return errors


@pytest.fixture(scope="session")
def screenshot_dir():
    SCREENSHOTS.mkdir(parents=True, exist_ok=True)
    return SCREENSHOTS


@pytest.fixture
def server_without_worker(tmp_path):
    """A live app whose jobs are run by nobody but the test (job_runner=external)."""
    url = f"sqlite:///{tmp_path / 'nobody.sqlite3'}"
    upgrade(url)
    db = Database(url)
    with db.session() as s:
        for name in ("Alpha", "Bravo", "Charlie"):
            add_volumetric_history(s, make_field(s, name=name))
        accounts.create_user(
            s, Actor(None, "test"), username="runner", role="engineer", password=TEST_PASSWORD, now=utcnow()
        )
    with serving(url, "c", job_runner="external") as base_url:
        yield base_url, db
    db.dispose()
