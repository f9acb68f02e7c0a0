"""API tokens: made here, shown once, stored only as a hash in ``User.api_token_hash``.

Used by the web layer (Bearer authentication) and by ``jtcheck user token``.  A token is 256 random
bits; a plain SHA-256 digest is enough to store it (unlike a password it cannot be guessed from a
word list), and lets the user be found by an indexed lookup of the digest.
"""
from __future__ import annotations

import hashlib
import hmac
import secrets

from sqlalchemy import select
from sqlalchemy.orm import Session

from jtcheck.records.models import User
from jtcheck.records.users import update_user

#: Every token starts with this, so that a leaked one is easy to recognise (and to search for).
TOKEN_PREFIX = "jtc_"
_HASH_PREFIX = "sha256:"


def token_hash(token: str) -> str:
    """The stored form of ``token``."""
    return _HASH_PREFIX + hashlib.sha256(token.encode("utf-8")).hexdigest()


def create_token(session: Session, user: User) -> str:
    """Make a new API token for ``user`` (replacing any earlier one) and return it; only its hash is kept."""
    token = TOKEN_PREFIX + secrets.token_urlsafe(32)
    update_user(session, user, user.id, {"api_token_hash": token_hash(token)})
    return token


def revoke_token(session: Session, user: User) -> None:
    """Remove the user's API token."""
    update_user(session, user, user.id, {"api_token_hash": None})


def user_for_token(session: Session, token: str) -> User | None:
    """The active user whose token this is, or None."""
    if not token.startswith(TOKEN_PREFIX) or len(token) > 200:
        return None
    digest = token_hash(token)
    user = session.scalar(select(User).where(User.api_token_hash == digest))
    if user is None or not user.active or not hmac.compare_digest(user.api_token_hash or "", digest):
        return None
    return user
