"""Password hashing with argon2id (argon2-cffi, RFC 9106); the case register stores only the hash.

The web layer passes a hasher built from its configuration; command-line set-up (``jtcheck user add``)
uses argon2-cffi's defaults, which are the same parameters unless the site configured others.
"""
from __future__ import annotations

import secrets

from argon2 import PasswordHasher

from jtcheck.errors import InputError

#: Longest password accepted [characters] (argon2 has no limit; this bounds the work per request).
MAX_PASSWORD_LENGTH = 256
#: Shortest password accepted from the command line [characters].
MIN_PASSWORD_LENGTH = 10


def hash_password(password: str, hasher: PasswordHasher | None = None) -> str:
    """The argon2id hash of ``password`` (salted; a PHC string)."""
    return (hasher or PasswordHasher()).hash(password)


def check_password_length(password: object, minimum: int = MIN_PASSWORD_LENGTH, field: str = "password") -> str:
    """A password a user chose, checked for length; raise InputError naming ``field``."""
    if not isinstance(password, str) or len(password) < minimum:
        raise InputError(field, f"the password must have at least {minimum} characters")
    if len(password) > MAX_PASSWORD_LENGTH:
        raise InputError(field, f"the password must have at most {MAX_PASSWORD_LENGTH} characters")
    return password


def generate_password() -> str:
    """A random one-time password (about 120 bits), for new accounts and resets."""
    return secrets.token_urlsafe(15)
