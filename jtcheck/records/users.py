"""Users of the case register: accounts, roles, password and API token hashes (made by the web layer)."""
from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from sqlalchemy import func, select
from sqlalchemy.orm import Session
from sqlalchemy.orm.exc import StaleDataError

from jtcheck.errors import InputError
from jtcheck.records import audit
from jtcheck.records.errors import ConcurrentEditError, NotFound, PermissionDenied
from jtcheck.records.fields import MAX_NAME, parse_text, refuse_unknown_keys
from jtcheck.records.guard import ADMIN_ROLES, ALL_ROLES, require
from jtcheck.records.models import Role, User
from jtcheck.records.transactions import transaction
from jtcheck.records.versions import check_version


def _email(value: Any) -> str:
    email = parse_text("email", value, "e-mail address", 254, required=True, single_line=True).lower()
    local, _, domain = email.partition("@")
    if not local or "." not in domain or " " in email:
        raise InputError("email", f"{value!r} is not an e-mail address (name@example.org)")
    return email


def _role(value: Any) -> Role:
    try:
        return Role(value)
    except ValueError:
        raise InputError("role", f"unknown role {value!r}; allowed: {', '.join(r.value for r in Role)}") from None


def create_user(session: Session, actor: User | None, *, email: str, name: str, role: Role | str,
                password_hash: str, active: bool = True) -> User:
    """Add a user (admins only).  ``password_hash`` is made by the web layer; it is never checked here.

    With ``actor=None`` only the very first user may be created, and it must be an admin (bootstrap).
    """
    with transaction(session):
        if actor is None:
            if session.scalar(select(func.count()).select_from(User)):
                raise PermissionDenied("create users", "no user is signed in")
            if _role(role) is not Role.ADMIN:
                raise InputError("role", "the first user must be an admin")
        else:
            require(actor, ADMIN_ROLES, "create users")
        email_n = _email(email)
        if session.scalar(select(User.id).where(User.email == email_n)) is not None:
            raise InputError("email", f"a user with e-mail {email_n!r} already exists")
        if not isinstance(password_hash, str) or not password_hash:
            raise InputError("password_hash", "a password hash is required")
        user = User(email=email_n, name=parse_text("name", name, "name", MAX_NAME, required=True, single_line=True),
                    role=_role(role), password_hash=password_hash, active=bool(active))
        session.add(user)
        session.flush()
        audit.add_entry(session, actor, "user", user.id, "create", new=f"{user.email} ({user.role.value})")
    return user


_USER_FIELDS = ("email", "name", "role", "active", "password_hash", "api_token_hash")
_SECRET_FIELDS = frozenset({"password_hash", "api_token_hash"})


def update_user(session: Session, actor: User, user_id: int, changes: Mapping[str, Any],
                expected_version: int | None = None) -> User:
    """Change a user (admins; a user may change their own ``password_hash`` and ``api_token_hash``).

    Hashes are audited as "(changed)", never with their value.  The last active admin cannot be
    demoted or deactivated.  A new password ends every session of the user and revokes their API token;
    so does deactivating the account.  With ``expected_version`` a user saved by someone else meanwhile is
    not overwritten (:class:`~jtcheck.records.errors.ConcurrentEditError`).
    """
    try:
        return _update_user(session, actor, user_id, changes, expected_version)
    except StaleDataError:
        raise ConcurrentEditError("user", user_id, expected_version) from None


def _update_user(session: Session, actor: User, user_id: int, changes: Mapping[str, Any],
                 expected_version: int | None) -> User:
    with transaction(session):
        refuse_unknown_keys(changes, _USER_FIELDS, "user")
        own_secrets = isinstance(actor, User) and actor.id == user_id and set(changes) <= _SECRET_FIELDS
        require(actor, ALL_ROLES if own_secrets else ADMIN_ROLES, "edit users")
        user = session.get(User, user_id, populate_existing=True)
        if user is None:
            raise NotFound("user", user_id)
        check_version(session, "user", user, expected_version)
        new: dict[str, Any] = {}
        for key, value in changes.items():
            if key == "email":
                new[key] = _email(value)
                other = session.scalar(select(User.id).where(User.email == new[key], User.id != user.id))
                if other is not None:
                    raise InputError("email", f"a user with e-mail {new[key]!r} already exists")
            elif key == "name":
                new[key] = parse_text("name", value, "name", MAX_NAME, required=True, single_line=True)
            elif key == "role":
                new[key] = _role(value)
            elif key == "active":
                if not isinstance(value, bool):
                    raise InputError("active", "must be true or false")
                new[key] = value
            elif key == "password_hash":
                if not isinstance(value, str) or not value:
                    raise InputError("password_hash", "a password hash is required")
                new[key] = value
            else:
                if value is not None and (not isinstance(value, str) or not value):
                    raise InputError("api_token_hash", "must be a hash text or None")
                new[key] = value
        demoted = new.get("role", user.role) is not Role.ADMIN or not new.get("active", user.active)
        if Role(user.role) is Role.ADMIN and user.active and demoted:
            admins = session.scalar(select(func.count()).select_from(User).where(
                User.role == Role.ADMIN, User.active.is_(True), User.id != user.id))
            if not admins:
                raise InputError("role" if "role" in new else "active", "at least one active admin must remain")
        if ("password_hash" in new and new["password_hash"] != user.password_hash) or new.get("active") is False:
            new.setdefault("api_token_hash", None)     # a new password (or a deactivation) ends the API token too
        for key, value in new.items():
            old = getattr(user, key)
            if old != value:
                setattr(user, key, value)
                if key in _SECRET_FIELDS:
                    audit.add_entry(session, actor, "user", user.id, "update", key, "(hidden)",
                                    "(changed)" if value is not None else "(revoked)")
                else:
                    audit.add_entry(session, actor, "user", user.id, "update", key, old, value)
                if key == "password_hash" or (key == "active" and not value):
                    _next_generation(session, actor, user, "password changed" if key == "password_hash"
                                     else "account deactivated")
    return user


def _next_generation(session: Session, actor: User | None, user: User, why: str) -> None:
    user.session_generation = int(user.session_generation or 0) + 1
    audit.add_entry(session, actor, "user", user.id, "end_sessions", "session_generation", None, why)


def end_sessions(session: Session, actor: User, user_id: int) -> User:
    """End every signed-in session of a user (sign-out ends them all; the user themself or an admin)."""
    try:
        with transaction(session):
            require(actor, ALL_ROLES if isinstance(actor, User) and actor.id == user_id else ADMIN_ROLES,
                    "end sessions")
            user = session.get(User, user_id, populate_existing=True)
            if user is None:
                raise NotFound("user", user_id)
            _next_generation(session, actor, user, "signed out")
    except StaleDataError:      # saved meanwhile (another sign-out): that one ended the sessions too
        session.rollback()
        user = session.get(User, user_id, populate_existing=True)
        assert user is not None
    return user


def get_user_by_email(session: Session, email: str) -> User | None:
    """The user with this e-mail address (case-insensitive), for signing in; None if there is none."""
    return session.scalar(select(User).where(User.email == str(email).strip().lower()))


def list_users(session: Session, actor: User) -> list[User]:
    """Every user, by name (admins only)."""
    require(actor, ADMIN_ROLES, "list users")
    return list(session.scalars(select(User).order_by(User.name, User.id)))
