"""Gunicorn settings for the jtcheck web service.

    gunicorn -c deploy/gunicorn.conf.py jtcheck.web.wsgi:app

Every value can be changed with an environment variable (listed beside it), so the same file serves
the container, the systemd unit and the load benchmark.  Command-line flags override this file.

The app is *not* preloaded: each worker imports ``jtcheck.web.wsgi`` itself, so each has its own
SQLAlchemy engine and connection pool (a pool made before ``fork`` would share sockets between
processes).  Before the workers start, the master has the database schema brought to the newest
migration once (``JTCHECK_MIGRATE_ON_START``), so that the workers' own start-up check finds nothing to do
and several workers never race to create the tables of a new database.

The flash kernels are compiled by numba and kept in its disk cache (next to the package, or in
``NUMBA_CACHE_DIR``).  Compiling them from nothing takes a minute or two of CPU, longer than a worker may
stay silent; so the master first fills the cache in a child process (a few seconds when it is already
full), and each worker then loads the kernels and the unit registry before it takes its first request
(``JTCHECK_WARM_UP``), instead of making the first users wait.
"""
from __future__ import annotations

import multiprocessing
import os
import subprocess
import sys
import time


def _int(name: str, default: int) -> int:
    raw = os.environ.get(name, "").strip()
    if not raw:
        return default
    try:
        return int(raw)
    except ValueError:
        raise SystemExit(f"gunicorn.conf.py: environment variable {name}={raw!r} is not an integer") from None


def _flag(name: str, default: bool) -> bool:
    raw = os.environ.get(name, "").strip().lower()
    if not raw:
        return default
    if raw in {"1", "true", "yes", "on"}:
        return True
    if raw in {"0", "false", "no", "off"}:
        return False
    raise SystemExit(f"gunicorn.conf.py: environment variable {name}={raw!r}: use 1 or 0")


# -- where to listen -------------------------------------------------------------------------------
# GUNICORN_BIND wins (e.g. "unix:/run/jtcheck/gunicorn.sock" or "0.0.0.0:8000"); else HOST:PORT.
# The default host is the loopback address: a reverse proxy on the same machine talks to it, nothing
# else can.  The container sets HOST=0.0.0.0.
_port = _int("PORT", 8000)
bind = [os.environ.get("GUNICORN_BIND", "").strip() or f"{os.environ.get('HOST', '127.0.0.1').strip()}:{_port}"]
backlog = _int("GUNICORN_BACKLOG", 2048)

# -- workers ---------------------------------------------------------------------------------------
# Computing a case is CPU work (compiled flashes), so processes, not threads, give the parallelism.
# WEB_CONCURRENCY (the common name on hosting platforms) sets the count; default 2 x cores + 1, counting
# the cores this process may run on.  A container limited with --cpus still sees every core of the host:
# set WEB_CONCURRENCY there.
try:
    _cores = len(os.sched_getaffinity(0))
except (AttributeError, OSError):
    _cores = multiprocessing.cpu_count()
workers = _int("WEB_CONCURRENCY", 2 * _cores + 1)
# GUNICORN_THREADS > 1 switches to the threaded worker (gthread), which also keeps connections alive.
threads = _int("GUNICORN_THREADS", 1)
worker_class = "gthread" if threads > 1 else "sync"
preload_app = False
# Recycle a worker after this many requests (0: never); a jitter keeps them from restarting together.
max_requests = _int("GUNICORN_MAX_REQUESTS", 0)
max_requests_jitter = _int("GUNICORN_MAX_REQUESTS_JITTER", max(1, max_requests // 10) if max_requests else 0)
# The workers' heartbeat files: on a RAM disk where there is one (a container's /tmp may be slow disk).
worker_tmp_dir = "/dev/shm" if os.path.isdir("/dev/shm") and os.access("/dev/shm", os.W_OK) else None

# -- time limits [s] -------------------------------------------------------------------------------
# A case with four conditions computes in well under a second; a result page draws the phase envelope
# (a second or two for a rich gas).  A worker silent for `timeout` seconds is killed and replaced.
timeout = _int("GUNICORN_TIMEOUT", 60)
graceful_timeout = _int("GUNICORN_GRACEFUL_TIMEOUT", 30)   # finish requests in flight on SIGTERM/HUP
keepalive = _int("GUNICORN_KEEPALIVE", 5)                   # behind nginx; only the gthread worker uses it

# -- request limits (the app itself refuses bodies over 1 MiB) -----------------------------------------
limit_request_line = 8190
limit_request_fields = 100
limit_request_field_size = 8190

# -- logging ---------------------------------------------------------------------------------------
# Access log to stdout (journald / container log) unless GUNICORN_ACCESS_LOG names a file ("" or
# "off": none).  The format: client address as the proxy saw it (X-Forwarded-For), peer address, time,
# request line, status, response bytes, referrer, user agent, and the time taken in microseconds.
# Tokens travel in the Authorization header and are never logged; no query string holds a secret.
_access = os.environ.get("GUNICORN_ACCESS_LOG", "-").strip()
accesslog = None if _access.lower() in {"", "off", "none"} else _access
access_log_format = ('%({x-forwarded-for}i)s %(h)s %(t)s "%(r)s" %(s)s %(b)s "%(f)s" "%(a)s" '
                     'dur_us=%(D)s pid=%(p)s')
errorlog = os.environ.get("GUNICORN_ERROR_LOG", "-").strip() or "-"
loglevel = os.environ.get("GUNICORN_LOG_LEVEL", "info").strip() or "info"
capture_output = True          # the app's own prints and warnings end up in the error log
proc_name = "jtcheck"

# Gunicorn 25.1 and newer open a control socket in $HOME by default; the service user's home may not be
# writable (systemd hardening, containers), and nothing here uses it.  Older versions ignore the name.
control_socket_disable = True

# X-Forwarded-* headers are handled by the app (JTCHECK_PROXY_COUNT, werkzeug's ProxyFix), which
# trusts exactly as many proxies as it is told.  Gunicorn trusts X-Forwarded-Proto from these addresses.
forwarded_allow_ips = os.environ.get("FORWARDED_ALLOW_IPS", "127.0.0.1,::1")


# -- hooks -----------------------------------------------------------------------------------------
# The master itself never imports jtcheck: migrations and the kernel cache are handled in child processes.
# So the master stays small, and the workers of a reload (SIGHUP) import the code installed now.

#: Run in a child process by the master: the schema to the newest migration (jtcheck.records.db), with the
#: database the app will use (DATABASE_URL, else the SQLite file in the instance folder).
MIGRATE_CODE = """
import logging, os
from jtcheck.records.db import database_url, upgrade_database
logging.basicConfig(level=logging.WARNING)
instance = os.environ.get("JTCHECK_INSTANCE", "").strip() or "instance"
upgrade_database(database_url(os.path.abspath(os.path.expanduser(instance))))
"""

#: Run in a child process by the master, and in each worker: load (or compile) the kernels a case
#: computation, a result diagram and a fluid page use, and build the unit registry.  Invented inputs.
WARM_UP_CODE = """
from jtcheck import Fluid, letdown
from jtcheck.units import parse_pressure, parse_temperature
parse_pressure("10 barg", "warm-up", 101325.0)
parse_temperature("5 degC", "warm-up")
gas = Fluid({"methane": 0.80, "ethane": 0.08, "propane": 0.06, "n-butane": 0.03, "nitrogen": 0.01,
             "carbon dioxide": 0.02})
letdown(gas, p_in=70e5, t_in=290.0, p_out=8e5)
letdown(gas, p_in=70e5, t_in=250.0, p_out=20e5)
letdown(gas, p_in=70e5, t_in=290.0, p_out=[60e5, 30e5, 8e5])
gas.phase_envelope()
"""


#: True in the master (and the workers it forks) once the migration step above has succeeded.
_migrated = False


def _warm_up_enabled() -> bool:
    return _flag("JTCHECK_WARM_UP", True)


def on_starting(server) -> None:   # server: gunicorn's Arbiter; once, before binding and forking
    """Refuse the example file's placeholders; bring the schema to the newest migration, once."""
    for name in ("SECRET_KEY", "DATABASE_URL", "REDIS_URL"):
        if "CHANGE-ME" in os.environ.get(name, ""):
            raise SystemExit(f"{name} still holds the placeholder of jtcheck.env.example: set a real value")
    if not _flag("JTCHECK_MIGRATE_ON_START", True):
        server.log.info("JTCHECK_MIGRATE_ON_START=0: not migrating (migrate once per upgrade yourself)")
        return
    server.log.info("bringing the database schema to the newest migration")
    t0 = time.monotonic()
    try:
        subprocess.run([sys.executable, "-c", MIGRATE_CODE], check=True,
                       timeout=_int("JTCHECK_MIGRATE_TIMEOUT", 1800))
    except (OSError, subprocess.SubprocessError) as exc:
        # never serve on a schema that is not the one this code expects
        raise SystemExit(f"migrating the database failed ({exc}); see the messages above") from None
    server.log.info("database schema is at the newest migration (%.1f s)", time.monotonic() - t0)
    global _migrated
    _migrated = True


def post_fork(server, worker) -> None:   # in each new worker, before it imports the app
    if _migrated:   # the master has migrated: the app need not check the schema again in every worker
        os.environ["JTCHECK_MIGRATE_ON_START"] = "0"


def when_ready(server) -> None:   # after binding, before the first worker is forked
    if not _warm_up_enabled():
        return
    t0 = time.monotonic()
    try:
        subprocess.run([sys.executable, "-c", WARM_UP_CODE], check=True,
                       timeout=_int("JTCHECK_WARM_UP_TIMEOUT", 900))
    except (OSError, subprocess.SubprocessError) as exc:
        server.log.warning("warming the compiled-kernel cache failed (%s); workers compile on first use", exc)
        return
    server.log.info("compiled-kernel cache ready (%.1f s)", time.monotonic() - t0)


def post_worker_init(worker) -> None:   # in each worker, after importing the app, before its first request
    if not _warm_up_enabled():
        return
    t0 = time.monotonic()
    try:
        exec(compile(WARM_UP_CODE, "<jtcheck warm-up>", "exec"), {})
    except Exception as exc:  # noqa: BLE001 - a failed warm-up must not stop the worker; the request will tell
        worker.log.warning("warm-up failed in worker %s: %s", worker.pid, exc)
        return
    worker.log.info("worker %s warmed up in %.1f s", worker.pid, time.monotonic() - t0)
