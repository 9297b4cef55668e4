"""A live Tankbook (uvicorn in a thread, demo portfolio in a fresh SQLite file) and
Debian's Chromium driven by Playwright. Never downloads a browser.

``page`` is logged in as an engineer through the real login page; ``anon_page`` is not logged in.
``BROWSER_USERS`` holds one account per role (password ``TEST_PASSWORD``)."""

from __future__ import annotations

import shutil
import socket
import threading
import time
from pathlib import Path

import pytest
import uvicorn

from server.app import create_app
from server.db.base import utcnow
from server.db.migrate import upgrade
from server.db.session import Database
from server.services import accounts, jobs
from server.services.audit import Actor
from server.services.demo import load_demo
from server.settings import Settings
from tests.web.conftest import TEST_PASSWORD

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


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


@pytest.fixture(scope="session")
def live_server(tmp_path_factory):
    url = f"sqlite:///{tmp_path_factory.mktemp('live') / 'live.sqlite3'}"
    upgrade(url)
    db = Database(url)
    with db.session() as s:
        load_demo(s)
    jobs.drain(db)
    with db.session() as s:
        for role, username in BROWSER_USERS.items():
            accounts.create_user(
                s, Actor(None, "test"), username=username, role=role, password=TEST_PASSWORD, now=utcnow()
            )
    db.dispose()
    port = _free_port()
    settings = Settings(environment="test", secret_key="b" * 40, database_url=url, port=port)
    server = uvicorn.Server(
        uvicorn.Config(create_app(settings), host="127.0.0.1", port=port, log_level="warning")
    )
    thread = threading.Thread(target=server.run, daemon=True)
    thread.start()
    deadline = time.time() + 20
    while not server.started:
        if time.time() > deadline:
            raise RuntimeError("live server did not start")
        time.sleep(0.05)
    yield f"http://127.0.0.1:{port}"
    server.should_exit = True
    thread.join(timeout=10)


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
