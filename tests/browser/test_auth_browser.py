"""In Chromium: logging in through the form, what each role's menu shows, logging out, and a
cross-site form post refused."""

from tests.browser.conftest import BROWSER_USERS, log_in


def test_login_returns_to_the_page_asked_for_and_logout_ends_it(anon_page, live_server, console_errors):
    page = anon_page
    page.goto(live_server + "/upload")
    assert page.url.startswith(live_server + "/login?next=")
    log_in(page, live_server, BROWSER_USERS["engineer"], "wrong-password-entirely")
    assert "Wrong user name or password." in page.locator("#login-error").inner_text()
    page.goto(live_server + "/upload")
    page.get_by_label("User name").fill(BROWSER_USERS["engineer"])
    page.get_by_label("Password").fill("quartz-lantern-harbour-57")
    page.get_by_role("button", name="Log in").click()
    page.wait_for_url(live_server + "/upload")
    assert page.locator("h1").inner_text() == "Upload data"
    page.get_by_role("button", name="Log out").click()
    page.wait_for_url(live_server + "/login")
    page.goto(live_server + "/")
    assert page.url.startswith(live_server + "/login")
    # the failed login answers 401, which Chromium logs; nothing else may appear
    assert [e for e in console_errors if "status of 401" not in e] == []


def test_each_role_sees_its_own_menu(anon_page, live_server, screenshot_dir):
    log_in(anon_page, live_server, BROWSER_USERS["viewer"])
    nav = anon_page.locator("nav[aria-label=Main]").inner_text()
    assert "Portfolio" in nav and "Upload data" not in nav and "Users" not in nav
    anon_page.goto(live_server + "/upload")
    assert anon_page.locator("h1").inner_text() == "Not allowed"
    anon_page.context.clear_cookies()
    log_in(anon_page, live_server, BROWSER_USERS["admin"])
    anon_page.goto(live_server + "/admin/users")
    assert anon_page.locator("#user-table tbody tr").count() == len(BROWSER_USERS)
    anon_page.screenshot(path=str(screenshot_dir / "admin-users.png"), full_page=True)


def test_a_cross_site_form_post_is_refused(page, live_server):
    """Another site's page submits a form to Tankbook while the user is logged in."""
    evil = f"""<!doctype html><form id=f method=post action="{live_server}/account/tokens">
      <input name=name value=stolen><input name=scopes value=upload></form>
      <script>document.getElementById('f').submit()</script>"""
    page.route("http://evil.test/**", lambda r: r.fulfill(status=200, content_type="text/html", body=evil))
    page.goto("http://evil.test/")
    page.wait_for_url(live_server + "/account/tokens")
    assert "cross-site request refused" in page.content()
    page.goto(live_server + "/account")
    assert "stolen" not in page.locator("main").inner_text()
