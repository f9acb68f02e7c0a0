"""Password hashing with argon2id (argon2-cffi); the case register stores only the hash.

The records layer leaves hashing to the web layer (``User.password_hash`` is "made by the web layer").
"""
from __future__ import annotations

import hashlib
import hmac
import secrets

from argon2 import PasswordHasher
from argon2.exceptions import InvalidHashError, VerificationError, VerifyMismatchError
from flask import current_app

from jtcheck.records import passwords as _records_passwords
from jtcheck.records.passwords import MAX_PASSWORD_LENGTH, generate_password

__all__ = ["MAX_PASSWORD_LENGTH", "check_new_password", "generate_password", "hash_password", "needs_rehash",
           "session_fingerprint", "verify_password"]


def hasher() -> PasswordHasher:
    cfg = current_app.config
    return PasswordHasher(time_cost=cfg["PASSWORD_HASH_TIME_COST"], memory_cost=cfg["PASSWORD_HASH_MEMORY_COST"],
                          parallelism=cfg["PASSWORD_HASH_PARALLELISM"])


def check_new_password(password: object, field: str = "new_password") -> str:
    """A password a user chose, checked for length; raise InputError naming ``field``."""
    return _records_passwords.check_password_length(password, current_app.config["PASSWORD_MIN_LENGTH"], field)


def hash_password(password: str) -> str:
    """The argon2id hash of ``password`` (salted; a PHC string), with the configured parameters."""
    return _records_passwords.hash_password(password, hasher())


def verify_password(stored_hash: str | None, password: str) -> bool:
    """True if ``password`` matches ``stored_hash``.

    With no usable hash (unknown user, or the demo owner's ``"!"``), a dummy hash is still verified so that
    the answer takes as long as for a real account.
    """
    ph = hasher()
    if not stored_hash or not stored_hash.startswith("$argon2"):
        try:
            ph.verify(_dummy_hash(), password[:MAX_PASSWORD_LENGTH])
        except VerificationError:
            pass
        return False
    try:
        return ph.verify(stored_hash, password[:MAX_PASSWORD_LENGTH])
    except (VerifyMismatchError, VerificationError, InvalidHashError):
        return False


def needs_rehash(stored_hash: str) -> bool:
    """True if the hash was made with weaker parameters than the ones configured now."""
    try:
        return hasher().check_needs_rehash(stored_hash)
    except InvalidHashError:
        return True


def _dummy_hash() -> str:
    ext = current_app.extensions
    if "jtcheck_dummy_hash" not in ext:
        ext["jtcheck_dummy_hash"] = hasher().hash(secrets.token_urlsafe(16))
    return ext["jtcheck_dummy_hash"]


def session_fingerprint(stored_hash: str) -> str:
    """A short keyed digest of the password hash, kept in the session cookie.

    When the password changes, every session signed in with the old one stops being valid.
    """
    key = str(current_app.config["SECRET_KEY"]).encode()
    return hmac.new(key, stored_hash.encode(), hashlib.sha256).hexdigest()[:32]
