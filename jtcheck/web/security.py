"""Who is asking, and may they: session sign-in for pages, bearer tokens for the API, security headers.

Every endpoint needs a signed-in user except the few in :data:`PUBLIC_ENDPOINTS` (deny by default);
each view then checks the role for what it does (:func:`require`), and the records service checks it
again.
"""
from __future__ import annotations

from collections.abc import Callable
from urllib.parse import urlsplit

from flask import Flask, Response, g, redirect, request, session, url_for

from jtcheck.records import service
from jtcheck.records.errors import PermissionDenied
from jtcheck.records.models import Role, User
from jtcheck.records.tokens import user_for_token
from jtcheck.web.accounts.passwords import session_fingerprint
from jtcheck.web.database import db_session
from jtcheck.web.errors import json_error

#: Endpoints anyone may reach: the sign-in page, the health check and the style sheet.
PUBLIC_ENDPOINTS = frozenset({"auth.login", "health.healthz", "static"})
#: API endpoints that also accept a signed-in browser session (read-only documents).
API_SESSION_ENDPOINTS = frozenset({"api.openapi"})

CSP = ("default-src 'self'; img-src 'self' data:; style-src 'self'; script-src 'self'; object-src 'none'; "
       "base-uri 'self'; form-action 'self'; frame-ancestors 'none'")


def current_user() -> User | None:
    return g.get("user")


def sign_in(user: User) -> None:
    """Start a new session for ``user`` (a fresh session: nothing from before survives)."""
    session.clear()
    session["uid"] = user.id
    session["pw"] = session_fingerprint(user.password_hash)
    session["gen"] = int(user.session_generation or 0)
    session.permanent = True


def sign_out() -> None:
    """End the signed-in user's sessions, this one and every other (the user's session generation moves on)."""
    user = current_user()
    if user is not None:
        service.end_sessions(db_session(), user, user.id)
    session.clear()


def _session_user() -> User | None:
    uid = session.get("uid")
    if not isinstance(uid, int) or isinstance(uid, bool):
        return None
    user = db_session().get(User, uid)
    if (user is None or not user.active or session.get("pw") != session_fingerprint(user.password_hash)
            or session.get("gen") != int(user.session_generation or 0)):
        session.clear()
        return None
    return user


def _bearer_user() -> tuple[User | None, bool]:
    """(user, whether an Authorization header was given)."""
    header = request.headers.get("Authorization", "")
    if not header:
        return None, False
    scheme, _, token = header.partition(" ")
    if scheme.lower() != "bearer" or not token.strip():
        return None, True
    return user_for_token(db_session(), token.strip()), True


def _load_user() -> Response | None:
    g.user = None
    g.auth = None
    endpoint = request.endpoint
    if endpoint == "static":
        return None
    if request.blueprint == "api":
        user, given = _bearer_user()
        if user is not None:
            g.user, g.auth = user, "token"
        elif given:
            return json_error(401, "the API token is not valid (or its account is deactivated); make a new one "
                                   "on your account page", "Authorization")
        elif endpoint in API_SESSION_ENDPOINTS:
            g.user = _session_user()
            g.auth = "session" if g.user is not None else None
    else:
        g.user = _session_user()
        g.auth = "session" if g.user is not None else None
    if g.user is None and endpoint is not None and endpoint not in PUBLIC_ENDPOINTS:
        if request.blueprint == "api":
            return json_error(401, "sign-in needed: send 'Authorization: Bearer <token>' (make a token on your "
                                   "account page)", "Authorization")
        if request.method == "GET":
            return redirect(url_for("auth.login", next=request.full_path.rstrip("?")))
        return redirect(url_for("auth.login"))
    return None


def safe_next(target: str | None) -> str | None:
    """``target`` if it is a path on this site (never another host), else None."""
    if not target:
        return None
    parts = urlsplit(target)
    if parts.scheme or parts.netloc or not target.startswith("/") or target.startswith("//") or "\\" in target:
        return None
    return target


def require(check: Callable[[User | None], bool], action: str, roles: str) -> User:
    """The current user, if ``check`` allows them ``action``; else raise PermissionDenied (403)."""
    user = current_user()
    if not check(user):
        role = Role(user.role).value if user is not None else "anonymous"
        raise PermissionDenied(action, f"the role {role!r} may not; allowed roles: {roles}")
    assert user is not None
    return user


def require_editor(action: str) -> User:
    return require(service.can_edit_cases, action, "engineer, admin")


def require_admin(action: str) -> User:
    return require(service.can_administer, action, "admin")


def require_viewer(action: str) -> User:
    return require(service.can_compute, action, "engineer, checker, approver, admin")


def _headers(resp: Response) -> Response:
    h = resp.headers
    h.setdefault("Content-Security-Policy", CSP)
    h.setdefault("X-Content-Type-Options", "nosniff")
    h.setdefault("X-Frame-Options", "DENY")
    h.setdefault("Referrer-Policy", "same-origin")
    h.setdefault("Cross-Origin-Opener-Policy", "same-origin")
    if request.endpoint != "static":
        h.setdefault("Cache-Control", "no-store")
    if request.is_secure:
        h.setdefault("Strict-Transport-Security", "max-age=31536000")
    return resp


def init_app(app: Flask) -> None:
    app.before_request(_load_user)
    app.after_request(_headers)
