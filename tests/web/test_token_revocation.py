"""API tokens end with the password they were made under (issue 18, point 17): a password
change (by its owner, or a reset by an administrator) revokes the user's tokens, as it ends
their sessions. Before, tokens kept working. Runs on both databases."""

from server.db.models import ApiToken, User
from server.services.access import credentials
from tests.web.conftest import TEST_PASSWORD, session_client


def test_changing_ones_password_revokes_ones_tokens(db, app, login_as, token_client):
    script = token_client(["read"])
    assert script.get("/api/portfolio").status_code == 200
    owner = session_client(app, db, script_user_id(db, script))
    with owner:
        r = owner.post(
            "/account/password",
            data={
                "current_password": TEST_PASSWORD,
                "new_password": "a fresh passphrase 7285",
                "repeat_password": "a fresh passphrase 7285",
            },
            follow_redirects=False,
        )
        assert r.status_code in (200, 303), r.text[-300:]
    assert script.get("/api/portfolio").status_code == 401
    with db.session() as s:
        assert all(t.revoked_at is not None for t in s.query(ApiToken).filter_by(user_id=owner.user_id))


def test_an_administrators_reset_revokes_the_users_tokens(db, admin_client, token_client):
    script = token_client(["read"])
    uid = script_user_id(db, script)
    assert script.get("/api/portfolio").status_code == 200
    assert admin_client.post(f"/admin/users/{uid}/reset-password").status_code == 200
    assert script.get("/api/portfolio").status_code == 401
    events = admin_client.get("/api/audit?entity_type=user").json()
    assert any("1 API token(s) revoked" in e["summary"] for e in events)


def script_user_id(db, client) -> int:
    with db.session() as s:
        found = credentials.live_api_token(s, client.token, now=client.app.state.clock())
        assert found is not None
        token, user = found
        assert isinstance(user, User)
        return user.id
