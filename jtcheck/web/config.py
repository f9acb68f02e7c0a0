"""Configuration of the web service: defaults, environment variables, the instance folder and its secret key.

Environment variables
---------------------
DATABASE_URL
    Database (PostgreSQL in production); default a SQLite file in the instance folder.
SECRET_KEY
    Key that signs the session cookie and CSRF tokens.  When unset, one is generated on the first start
    and kept in ``<instance>/secret_key`` (file mode 0600); it is never part of the repository.
JTCHECK_INSTANCE
    The instance folder (database, secret key); default ``./instance``.
REDIS_URL
    Storage of the rate limiter (e.g. ``redis://localhost:6379/0``); default in-process memory.
SESSION_COOKIE_SECURE
    ``0`` to send the session cookie over plain HTTP (only for a local run on 127.0.0.1); default ``1``.
JTCHECK_MIGRATE_ON_START
    ``0`` to leave the database schema alone at start (someone migrates it once, e.g. the gunicorn master or
    an operator); default ``1``: bring it to the newest migration.
JTCHECK_PROXY_COUNT
    Number of reverse proxies in front of the service whose ``X-Forwarded-*`` headers are trusted
    (default 0: none).
"""
from __future__ import annotations

import os
import secrets
import tempfile
from datetime import timedelta
from pathlib import Path
from typing import Any

#: Name of the file in the instance folder that keeps a generated secret key.
SECRET_KEY_FILENAME = "secret_key"

DEFAULTS: dict[str, Any] = {
    "TESTING": False,
    "SESSION_COOKIE_HTTPONLY": True,
    "SESSION_COOKIE_SAMESITE": "Lax",
    "SESSION_COOKIE_SECURE": True,
    "SESSION_COOKIE_NAME": "jtcheck_session",
    "PERMANENT_SESSION_LIFETIME": timedelta(hours=10),
    "WTF_CSRF_ENABLED": True,
    "WTF_CSRF_TIME_LIMIT": None,          # the token lives as long as the signed-in session
    "MAX_CONTENT_LENGTH": 1024 * 1024,    # 1 MiB is plenty for a case or a fluid
    # rate limits (Flask-Limiter notation)
    "RATELIMIT_ENABLED": True,
    "RATELIMIT_STORAGE_URI": "memory://",
    "LOGIN_RATE_LIMIT": "10 per minute",            # per client address
    "LOGIN_ACCOUNT_RATE_LIMIT": "20 per hour",      # failed sign-ins per account (e-mail typed), from any address
    # argon2id parameters (argon2-cffi defaults, RFC 9106 second recommendation)
    "PASSWORD_HASH_TIME_COST": 3,
    "PASSWORD_HASH_MEMORY_COST": 65536,   # [KiB]
    "PASSWORD_HASH_PARALLELISM": 4,
    "PASSWORD_MIN_LENGTH": 12,
    # database
    "DATABASE_URL": None,
    "DB_UPGRADE_ON_START": True,
    # diagrams kept in memory (number of SVG documents)
    "DIAGRAM_CACHE_SIZE": 64,
    "PROXY_COUNT": 0,
}

_TRUE = {"1", "true", "yes", "on"}
_FALSE = {"0", "false", "no", "off"}


def _env_bool(name: str) -> bool | None:
    raw = os.environ.get(name)
    if raw is None or not raw.strip():
        return None
    value = raw.strip().lower()
    if value in _TRUE:
        return True
    if value in _FALSE:
        return False
    raise ValueError(f"environment variable {name}={raw!r}: use 1 or 0")


def from_environment() -> dict[str, Any]:
    """The settings given by environment variables (only those that are set)."""
    out: dict[str, Any] = {}
    for name in ("DATABASE_URL", "SECRET_KEY"):
        value = os.environ.get(name, "").strip()
        if value:
            out[name] = value
    redis_url = os.environ.get("REDIS_URL", "").strip()
    if redis_url:
        out["RATELIMIT_STORAGE_URI"] = redis_url
    secure = _env_bool("SESSION_COOKIE_SECURE")
    if secure is not None:
        out["SESSION_COOKIE_SECURE"] = secure
    migrate = _env_bool("JTCHECK_MIGRATE_ON_START")
    if migrate is not None:
        out["DB_UPGRADE_ON_START"] = migrate
    proxies = os.environ.get("JTCHECK_PROXY_COUNT", "").strip()
    if proxies:
        out["PROXY_COUNT"] = int(proxies)
    for name in ("BATCH_RUNNER", "RECORD_PAPER"):
        value = os.environ.get(name, "").strip()
        if value:
            out[name] = value
    for name in ("BATCH_UPLOAD_MAX_BYTES", "BATCH_JOB_TIMEOUT_S", "BATCH_STALE_AFTER_S"):
        value = os.environ.get(name, "").strip()
        if value:
            try:
                out[name] = int(value)
            except ValueError:
                raise ValueError(f"environment variable {name}={value!r}: use a whole number") from None
    return out


def instance_path(config: dict[str, Any] | None = None) -> Path:
    """The instance folder: ``config["JTCHECK_INSTANCE"]``, else ``$JTCHECK_INSTANCE``, else ``./instance``."""
    raw = (config or {}).get("JTCHECK_INSTANCE") or os.environ.get("JTCHECK_INSTANCE", "").strip() or "instance"
    return Path(raw).expanduser().resolve()


def instance_secret_key(folder: Path) -> str:
    """The secret key kept in ``folder``; generated (and written with mode 0600) if there is none yet.

    Safe when several worker processes start at once: the key is written to a private temporary file and
    then linked into place, so a reader never sees a half-written key and only one key ever wins.
    """
    folder.mkdir(mode=0o700, parents=True, exist_ok=True)   # database and secret key: owner only
    path = folder / SECRET_KEY_FILENAME
    if not path.exists():
        fd, tmp = tempfile.mkstemp(prefix=".secret_key.", dir=folder)   # mode 0600
        try:
            with os.fdopen(fd, "w", encoding="ascii") as fh:
                fh.write(secrets.token_urlsafe(48) + "\n")
                fh.flush()
                os.fsync(fh.fileno())
            try:
                os.link(tmp, path)
            except FileExistsError:
                pass   # another process was first; use its key
        finally:
            os.unlink(tmp)
    key = path.read_text(encoding="ascii").strip()
    if len(key) < 32:
        raise RuntimeError(f"{path} holds no usable secret key; delete it to have a new one made")
    return key
