"""Signing in and out, rate limit, CSRF, session cookie, secret key, passwords and API tokens."""
from __future__ import annotations

import stat

import pytest
from sqlalchemy import select
from web_helpers import PASSWORD, app_config, sign_in

from jtcheck.records.models import AuditEntry, Role, User
from jtcheck.web import create_app
from jtcheck.web.config import SECRET_KEY_FILENAME
from jtcheck.web.database import db_session


def test_sign_in_then_pages_then_sign_out(client, world):
    resp = sign_in(client, world.emails[Role.ENGINEER])
    assert resp.status_code == 302 and resp.headers["Location"].endswith("/cases")
    page = client.get("/cases")
    assert page.status_code == 200 and b"Engineer User" in page.data
    out = client.post("/logout")
    assert out.status_code == 302 and "/login" in out.headers["Location"]
    assert client.get("/cases").status_code == 302


def test_sign_in_is_case_insensitive_in_the_email(client, world):
    assert sign_in(client, world.emails[Role.CHECKER].upper()).status_code == 302


@pytest.mark.parametrize("email, password", [("engineer@example.org", "wrong password!"),
                                             ("nobody@example.org", PASSWORD),
                                             ("gone@example.org", PASSWORD),       # deactivated account
                                             ("", "")])
def test_wrong_credentials_are_refused_with_one_message(client, world, email, password):
    resp = sign_in(client, email, password)
    assert resp.status_code == 401
    assert b"e-mail address or password not recognised" in resp.data
    assert client.get("/cases").status_code == 302


def test_sign_in_follows_next_only_within_the_site(client, world):
    resp = client.post("/login", data={"email": world.emails[Role.ENGINEER], "password": PASSWORD,
                                       "next": "/fluids"})
    assert resp.headers["Location"].endswith("/fluids")
    client.post("/logout")
    resp = client.post("/login", data={"email": world.emails[Role.ENGINEER], "password": PASSWORD,
                                       "next": "https://evil.example/steal"})
    assert resp.headers["Location"].endswith("/cases")
    client.post("/logout")
    resp = client.post("/login", data={"email": world.emails[Role.ENGINEER], "password": PASSWORD,
                                       "next": "//evil.example/"})
    assert resp.headers["Location"].endswith("/cases")


def test_anonymous_page_request_is_sent_to_sign_in_with_next(client):
    resp = client.get("/fluids?x=1")
    assert resp.status_code == 302
    assert "/login?next=/fluids?x%3D1" in resp.headers["Location"] or "/login?next=" in resp.headers["Location"]


def test_login_is_rate_limited_per_address(app, world, monkeypatch):
    monkeypatch.setitem(app.config, "LOGIN_RATE_LIMIT", "10 per minute")
    c = app.test_client()
    env = {"REMOTE_ADDR": "192.0.2.77"}
    codes = [c.post("/login", data={"email": "x@example.org", "password": "nope"}, environ_base=env).status_code
             for _ in range(11)]
    assert codes[:10] == [401] * 10
    assert codes[10] == 429
    blocked = c.post("/login", data={"email": world.emails[Role.ENGINEER], "password": PASSWORD}, environ_base=env)
    assert blocked.status_code == 429 and b"too many attempts" in blocked.data
    # another address is not affected, and the sign-in page itself still shows
    other = c.post("/login", data={"email": world.emails[Role.ENGINEER], "password": PASSWORD},
                   environ_base={"REMOTE_ADDR": "192.0.2.78"})
    assert other.status_code == 302
    assert c.get("/login", environ_base=env).status_code in (200, 302)


def test_form_post_without_csrf_token_is_refused(app, engineer, world, monkeypatch):
    monkeypatch.setitem(app.config, "WTF_CSRF_ENABLED", True)
    with app.app_context():
        before = db_session().scalar(select(User.api_token_hash).where(User.email == world.emails[Role.ENGINEER]))
    resp = engineer.post("/account/token")
    assert resp.status_code == 400
    assert b"security token" in resp.data
    resp = engineer.post("/sites/new", data={"name": "CSRF site"})
    assert resp.status_code == 400
    with app.app_context():
        after = db_session().scalar(select(User.api_token_hash).where(User.email == world.emails[Role.ENGINEER]))
    assert after == before
    assert b"CSRF site" not in engineer.get("/sites").data


def test_form_post_with_csrf_token_is_accepted(app, world, monkeypatch):
    monkeypatch.setitem(app.config, "WTF_CSRF_ENABLED", True)
    c = app.test_client()
    page = c.get("/login").data.decode()
    token = page.split('name="csrf_token" value="', 1)[1].split('"', 1)[0]
    resp = c.post("/login", data={"email": world.emails[Role.ENGINEER], "password": PASSWORD, "csrf_token": token})
    assert resp.status_code == 302
    assert c.post("/login", data={"email": world.emails[Role.ENGINEER], "password": PASSWORD}).status_code == 400


def test_session_cookie_is_httponly_lax_and_secure_by_default(db_url, tmp_path, world):
    cfg = app_config(db_url, str(tmp_path))
    del cfg["SESSION_COOKIE_SECURE"]
    secure_app = create_app(cfg)
    try:
        c = secure_app.test_client()
        resp = c.post("/login", data={"email": world.emails[Role.ENGINEER], "password": PASSWORD},
                      base_url="https://localhost")
        cookie = resp.headers["Set-Cookie"]
        assert "HttpOnly" in cookie and "SameSite=Lax" in cookie and "Secure" in cookie
    finally:
        secure_app.extensions["jtcheck_db"].engine.dispose()


def test_session_cookie_secure_can_be_turned_off_by_environment(db_url, tmp_path, monkeypatch):
    monkeypatch.setenv("SESSION_COOKIE_SECURE", "0")
    cfg = app_config(db_url, str(tmp_path))
    del cfg["SESSION_COOKIE_SECURE"]
    local_app = create_app(cfg)
    try:
        assert local_app.config["SESSION_COOKIE_SECURE"] is False
    finally:
        local_app.extensions["jtcheck_db"].engine.dispose()


def test_secret_key_is_made_once_and_kept_private(db_url, tmp_path):
    cfg = app_config(db_url, str(tmp_path))
    del cfg["SECRET_KEY"]
    first = create_app(cfg)
    second = create_app(cfg)
    try:
        path = tmp_path / SECRET_KEY_FILENAME
        assert stat.S_IMODE(path.stat().st_mode) == 0o600
        assert first.config["SECRET_KEY"] == second.config["SECRET_KEY"] == path.read_text().strip()
        assert len(first.config["SECRET_KEY"]) >= 32
    finally:
        for a in (first, second):
            a.extensions["jtcheck_db"].engine.dispose()


def test_passwords_are_stored_as_argon2_hashes(app, world):
    with app.app_context():
        hashes = db_session().scalars(select(User.password_hash)).all()
    assert hashes and all(h.startswith("$argon2id$") for h in hashes)
    assert not any(PASSWORD in h for h in hashes)


def test_password_change_checks_input_and_ends_other_sessions(app, world):
    email = "changer@example.org"
    with app.app_context():
        from jtcheck.records import service
        from jtcheck.web.accounts.passwords import hash_password

        s = db_session()
        admin = service.get_user_by_email(s, world.emails[Role.ADMIN])
        service.create_user(s, admin, email=email, name="Pat Changer", role="engineer",
                            password_hash=hash_password(PASSWORD))
    one, two = app.test_client(), app.test_client()
    sign_in(one, email)
    sign_in(two, email)
    bad = one.post("/account/password", data={"current_password": "wrong", "new_password": "short",
                                              "repeat_password": "other"})
    assert bad.status_code == 422
    html = bad.data.decode()
    for field in ("current_password", "new_password", "repeat_password"):
        assert f'id="err-{field}"' in html
    ok = one.post("/account/password", data={"current_password": PASSWORD, "new_password": "a new long password",
                                             "repeat_password": "a new long password"})
    assert ok.status_code == 302
    assert one.get("/account").status_code == 200          # this session goes on
    assert two.get("/account").status_code == 302          # the other one ends
    assert sign_in(app.test_client(), email).status_code == 401
    assert sign_in(app.test_client(), email, "a new long password").status_code == 302


def _new_account(app, world, email: str) -> None:
    with app.app_context():
        from jtcheck.records import service
        from jtcheck.web.accounts.passwords import hash_password

        s = db_session()
        admin = service.get_user_by_email(s, world.emails[Role.ADMIN])
        service.create_user(s, admin, email=email, name=email.split("@")[0], role="engineer",
                            password_hash=hash_password(PASSWORD))


def test_sign_out_ends_every_session_and_a_replayed_cookie(app, world):
    """A copy of the session cookie taken before signing out no longer works (client-side sessions are ended by
    the user's session generation), and neither does the user's other browser."""
    email = "leaver@example.org"
    _new_account(app, world, email)
    one, two = app.test_client(), app.test_client()
    sign_in(one, email)
    sign_in(two, email)
    stolen = one.get_cookie("jtcheck_session").value
    assert one.get("/account").status_code == 200
    one.post("/logout")
    replay = app.test_client()
    replay.set_cookie("jtcheck_session", stolen)
    assert replay.get("/account").status_code == 302
    assert two.get("/account").status_code == 302
    assert sign_in(one, email).status_code == 302 and one.get("/account").status_code == 200


def test_password_change_revokes_the_api_token(app, world):
    email = "tokenholder@example.org"
    _new_account(app, world, email)
    c = app.test_client()
    sign_in(c, email)
    page = c.post("/account/token").data.decode()
    token = page.split('<p class="secret">', 1)[1].split("</p>", 1)[0].strip()
    assert c.get("/api/v1/cases", headers={"Authorization": f"Bearer {token}"}).status_code == 200
    ok = c.post("/account/password", data={"current_password": PASSWORD, "new_password": "another long password",
                                           "repeat_password": "another long password"})
    assert ok.status_code == 302
    assert c.get("/api/v1/cases", headers={"Authorization": f"Bearer {token}"}).status_code == 401
    with app.app_context():
        entries = db_session().scalars(select(AuditEntry).where(AuditEntry.entity == "user",
                                                                AuditEntry.field == "api_token_hash")).all()
    assert any(e.new_value == "(revoked)" for e in entries)


def test_api_token_is_shown_once_and_stored_as_a_hash(app, world):
    c = app.test_client()
    sign_in(c, world.emails[Role.APPROVER])
    page = c.post("/account/token").data.decode()
    token = page.split('<p class="secret">', 1)[1].split("</p>", 1)[0].strip()
    assert token.startswith("jtc_")
    with app.app_context():
        stored = db_session().scalar(select(User.api_token_hash).where(User.email == world.emails[Role.APPROVER]))
    assert stored and token not in stored
    assert token not in c.get("/account").data.decode()
    assert c.get("/api/v1/cases", headers={"Authorization": f"Bearer {token}"}).status_code == 200
    c.post("/account/token/revoke")
    assert c.get("/api/v1/cases", headers={"Authorization": f"Bearer {token}"}).status_code == 401


def test_login_is_throttled_per_account_from_any_address(app, world, monkeypatch):
    """Failed sign-ins for one account are counted over every address; a success does not count."""
    monkeypatch.setitem(app.config, "LOGIN_ACCOUNT_RATE_LIMIT", "5 per hour")
    c = app.test_client()
    email = world.emails[Role.CHECKER]
    ok = c.post("/login", data={"email": email, "password": PASSWORD}, environ_base={"REMOTE_ADDR": "198.51.100.1"})
    assert ok.status_code == 302
    c.post("/logout")
    codes = [c.post("/login", data={"email": email.upper(), "password": "wrong"},
                    environ_base={"REMOTE_ADDR": f"198.51.100.{10 + k}"}).status_code for k in range(6)]
    assert codes == [401] * 5 + [429]
    blocked = c.post("/login", data={"email": email, "password": PASSWORD}, environ_base={"REMOTE_ADDR": "203.0.113.9"})
    assert blocked.status_code == 429
    # another account from the same addresses is not affected
    other = c.post("/login", data={"email": world.emails[Role.APPROVER], "password": PASSWORD},
                   environ_base={"REMOTE_ADDR": "198.51.100.10"})
    assert other.status_code == 302


def test_a_failed_sign_in_logs_no_submitted_value(app, world, caplog):
    c = app.test_client()
    secret = "my-Secret-Passw0rd-typed-in-the-wrong-field"
    with caplog.at_level("INFO"):
        c.post("/login", data={"email": secret, "password": secret})
        c.post("/login", data={"email": world.emails[Role.ENGINEER], "password": secret})
    text = caplog.text
    assert "failed sign-in" in text
    assert secret not in text and world.emails[Role.ENGINEER] not in text
