"""Load test of the web service: gunicorn on PostgreSQL, driven by concurrent API clients on this machine.

Run:  .venv/bin/python benchmarks/load_web.py [--seconds 60] [--clients 20] [--warmup 5] [--workers N]

What it does, and undoes:

1. creates a throwaway PostgreSQL database (``jtcheck_load`` on 127.0.0.1:5432, user postgres, trust auth;
   ``--pg`` changes the server) and brings it to the newest migration;
2. makes an admin and an engineer account and an API token for the engineer, with the records service and
   its password and token helpers, and a site with one unit;
3. starts ``gunicorn -c deploy/gunicorn.conf.py jtcheck.web.wsgi:app`` on a free port of 127.0.0.1 (workers:
   ``--workers``, else the configuration's default) and waits until ``/healthz`` answers (the workers warm
   up first; on a fresh checkout the flash kernels are compiled once, which takes a minute or two);
4. creates a fluid through the API, then runs ``--clients`` threads, each looping: ``POST /api/v1/cases``
   (a new case), ``POST /api/v1/cases/<id>/compute`` (compute and store it).  The first ``--warmup``
   seconds are not counted (connection pools and statement caches fill); then every request started in
   the next ``--seconds`` seconds is timed.  The clients stop by themselves, then gunicorn is stopped;
5. prints a table: requests, throughput, latency percentiles per endpoint as the clients saw it, the time
   spent inside the worker (from gunicorn's access log, so that queueing can be told apart from work),
   the errors, and who used the CPU meanwhile (gunicorn, PostgreSQL, the clients, other processes);
6. with ``--profile N`` (default 30), sends N create + compute pairs one at a time through the app in this
   process and splits their time into building the fluid, the flashes, the database and the rest;
7. drops the database (also when interrupted).

Traffic goes to 127.0.0.1 only.  The clients run on the same cores as the server.  Target: zero errors and
p95 under 200 ms.
"""
from __future__ import annotations

import argparse
import http.client
import json
import os
import re
import secrets
import shutil
import signal
import socket
import subprocess
import sys
import tempfile
import threading
import time
from collections import Counter, defaultdict
from dataclasses import dataclass, field
from pathlib import Path
from urllib.parse import urlsplit, urlunsplit

REPO = Path(__file__).resolve().parents[1]
GUNICORN_CONF = REPO / "deploy" / "gunicorn.conf.py"
DEFAULT_PG = "postgresql://postgres@127.0.0.1:5432/postgres"
DB_PREFIX = "jtcheck_load"
UA_WARMUP = "jtcheck-load-web/warm-up"
UA_MEASURED = "jtcheck-load-web/measured"

#: Invented pipeline gas of the fictional Kestrel Ridge gas terminal (mole fractions).
FLUID = {"name": "Kestrel Ridge load-test gas (invented)", "eos": "PR", "kij": "table",
         "composition": {"methane": 0.87, "ethane": 0.06, "propane": 0.025, "n-butane": 0.008, "nitrogen": 0.017,
                         "carbon dioxide": 0.02},
         "notes": "Invented composition for the load test."}

ENDPOINT_CREATE = "POST /api/v1/cases"
ENDPOINT_COMPUTE = "POST /api/v1/cases/<id>/compute"
_ACCESS_LINE = re.compile(r'"(?P<method>[A-Z]+) (?P<path>\S+) HTTP/[\d.]+" (?P<status>\d{3}) .*"(?P<ua>[^"]*)" '
                          r"dur_us=(?P<us>\d+)")


# -- small helpers ---------------------------------------------------------------------------------
def percentile(sorted_values: list[float], q: float) -> float:
    """Nearest-rank percentile ``q`` (0-100) of an ascending list; NaN for an empty one."""
    if not sorted_values:
        return float("nan")
    rank = max(1, -(-len(sorted_values) * q // 100))   # ceil(n q / 100), at least 1
    return sorted_values[int(rank) - 1]


def free_port() -> int:
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def loopback_only(url: str) -> None:
    host = urlsplit(url).hostname or ""
    if host not in {"127.0.0.1", "localhost", "::1"}:
        raise SystemExit(f"--pg must point at this machine (127.0.0.1 or localhost), not {host!r}")


def with_database(url: str, name: str) -> str:
    parts = urlsplit(url)
    return urlunsplit((parts.scheme, parts.netloc, "/" + name, parts.query, parts.fragment))


def pg_admin(url: str, sql: str) -> None:
    """Run one statement outside a transaction (CREATE/DROP DATABASE) on the maintenance database."""
    import psycopg

    with psycopg.connect(url.replace("postgresql+psycopg://", "postgresql://"), autocommit=True) as conn:
        conn.execute(sql)


# -- set-up ------------------------------------------------------------------------------------------
@dataclass
class Setup:
    token: str
    unit_id: int


def setup_database(db_url: str) -> Setup:
    """Migrate the new database and make the accounts, the token, a site and a unit (records layer only)."""
    from jtcheck.records import service
    from jtcheck.records.db import make_engine, make_session_factory, upgrade_database
    from jtcheck.records.models import Role
    from jtcheck.records.passwords import generate_password, hash_password
    from jtcheck.records.tokens import create_token

    upgrade_database(db_url)
    engine = make_engine(db_url)
    try:
        with make_session_factory(engine)() as s:
            admin = service.create_user(s, None, email="admin@load.example.org", name="Load Admin", role=Role.ADMIN,
                                        password_hash=hash_password(generate_password()))
            engineer = service.create_user(s, admin, email="engineer@load.example.org", name="Load Engineer",
                                           role=Role.ENGINEER, password_hash=hash_password(generate_password()))
            token = create_token(s, engineer)
            site = service.create_site(s, engineer, "Kestrel Ridge gas terminal (load test)",
                                       "Invented site for the load test.")
            unit = service.create_unit(s, engineer, site.id, "Town-main pressure-reduction station")
            return Setup(token=token, unit_id=unit.id)
    finally:
        engine.dispose()


# -- the server --------------------------------------------------------------------------------------
def gunicorn_command() -> list[str]:
    exe = Path(sys.executable).with_name("gunicorn")
    head = [str(exe)] if exe.exists() else [sys.executable, "-m", "gunicorn"]
    return [*head, "-c", str(GUNICORN_CONF), "jtcheck.web.wsgi:app"]


def start_gunicorn(port: int, db_url: str, instance: Path, secret_key: str, workers: int | None,
                   access_log: Path, server_log: Path) -> subprocess.Popen:
    env = dict(os.environ)
    for name in ("GUNICORN_BIND", "GUNICORN_CMD_ARGS", "GUNICORN_THREADS", "GUNICORN_MAX_REQUESTS", "REDIS_URL"):
        env.pop(name, None)
    env.update({"HOST": "127.0.0.1", "PORT": str(port), "DATABASE_URL": db_url, "SECRET_KEY": secret_key,
                "JTCHECK_INSTANCE": str(instance), "GUNICORN_ACCESS_LOG": str(access_log),
                "GUNICORN_LOG_LEVEL": "warning"})
    if workers is not None:
        env["WEB_CONCURRENCY"] = str(workers)
    log = server_log.open("wb")
    try:
        return subprocess.Popen(gunicorn_command(), cwd=REPO, env=env, stdout=log, stderr=subprocess.STDOUT,
                                start_new_session=True)
    finally:
        log.close()


def wait_healthy(proc: subprocess.Popen, port: int, server_log: Path, timeout_s: float = 600.0) -> None:
    deadline = time.monotonic() + timeout_s
    while time.monotonic() < deadline:
        if proc.poll() is not None:
            raise RuntimeError(f"gunicorn exited with code {proc.returncode}:\n{tail(server_log)}")
        try:
            status, _ = request(port, "GET", "/healthz", None, None, "jtcheck-load-web/setup", timeout=5)
            if status == 200:
                return
        except OSError:
            pass
        time.sleep(0.25)
    raise RuntimeError(f"gunicorn did not answer /healthz within {timeout_s:.0f} s:\n{tail(server_log)}")


def stop_gunicorn(proc: subprocess.Popen) -> None:
    if proc.poll() is not None:
        return
    proc.send_signal(signal.SIGTERM)        # graceful: finish requests in flight, then exit
    try:
        proc.wait(timeout=40)
    except subprocess.TimeoutExpired:
        os.killpg(proc.pid, signal.SIGKILL)
        proc.wait(timeout=10)


def tail(path: Path, lines: int = 40) -> str:
    try:
        return "\n".join(path.read_text(errors="replace").splitlines()[-lines:])
    except OSError:
        return "(no log)"


# -- the clients -------------------------------------------------------------------------------------
def request(port: int, method: str, path: str, token: str | None, payload: dict | None, agent: str,
            timeout: float = 60.0) -> tuple[int, bytes]:
    conn = http.client.HTTPConnection("127.0.0.1", port, timeout=timeout)
    try:
        headers = {"User-Agent": agent, "Accept": "application/json"}
        data = None
        if token:
            headers["Authorization"] = f"Bearer {token}"
        if payload is not None:
            data = json.dumps(payload).encode()
            headers["Content-Type"] = "application/json"
        conn.request(method, path, body=data, headers=headers)
        resp = conn.getresponse()
        return resp.status, resp.read()
    finally:
        conn.close()


@dataclass
class Sample:
    endpoint: str
    start: float            # time.monotonic() at the start
    latency_s: float
    ok: bool
    error: str = ""


@dataclass
class Run:
    port: int
    token: str
    unit_id: int
    fluid_id: int
    measure_from: float
    stop_at: float
    samples: list[Sample] = field(default_factory=list)
    lock: threading.Lock = field(default_factory=threading.Lock)


def case_body(run: Run, client: int, n: int) -> dict:
    # invented inputs, varied a little so that not every flash starts from the same point
    p_in = 60 + (client % 5) * 4 + (n % 3)
    return {"unit_id": run.unit_id, "tag": f"PCV-L{client:02d}-{n:05d}", "kind": "control_valve",
            "fluid_id": run.fluid_id, "service": "load test: town-main regulator (invented)",
            "inlet_pressure": f"{p_in} barg", "inlet_temperature": f"{12 + client % 7} degC",
            "outlet_pressure": "7 barg", "inlet_temperature_min": "2 degC", "inlet_pressure_max": f"{p_in + 8} barg",
            "mdmt": "-29 degC", "margin": "5 K"}


def timed(run: Run, endpoint: str, method: str, path: str, payload: dict | None, expect: int) -> bytes | None:
    t0 = time.monotonic()
    agent = UA_MEASURED if t0 >= run.measure_from else UA_WARMUP
    error, body = "", None
    try:
        status, body = request(run.port, method, path, run.token, payload, agent)
        if status != expect:
            error = f"HTTP {status}: {body[:200].decode(errors='replace')}"
    except (OSError, http.client.HTTPException) as exc:
        error = f"{type(exc).__name__}: {exc}"
    latency = time.monotonic() - t0
    with run.lock:
        run.samples.append(Sample(endpoint, t0, latency, not error, error))
    return None if error else body


def client_loop(run: Run, client: int) -> None:
    n = 0
    while time.monotonic() < run.stop_at:
        n += 1
        body = timed(run, ENDPOINT_CREATE, "POST", "/api/v1/cases", case_body(run, client, n), 201)
        if body is None:
            continue
        case_id = json.loads(body)["id"]
        timed(run, ENDPOINT_COMPUTE, "POST", f"/api/v1/cases/{case_id}/compute", None, 201)


# -- who used the CPU ----------------------------------------------------------------------------------
def _proc_cpu_s(pid: int) -> float:
    """User + system CPU time of a process [s] (Linux /proc); 0 if it is gone."""
    try:
        fields = Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()
    except OSError:
        return 0.0
    return (int(fields[11]) + int(fields[12])) / os.sysconf("SC_CLK_TCK")


def _children(pid: int) -> list[int]:
    out = []
    for entry in Path("/proc").iterdir():
        if entry.name.isdigit():
            try:
                if int((entry / "stat").read_text().rsplit(")", 1)[1].split()[1]) == pid:
                    out.append(int(entry.name))
            except (OSError, IndexError, ValueError):
                continue
    return out


def _machine_cpu_s() -> tuple[float, float]:
    """(busy, total) CPU time of the machine since boot [s], all cores."""
    values = [int(v) for v in Path("/proc/stat").read_text().splitlines()[0].split()[1:]]
    idle = values[3] + (values[4] if len(values) > 4 else 0)
    total = sum(values[:8])
    return (total - idle) / os.sysconf("SC_CLK_TCK"), total / os.sysconf("SC_CLK_TCK")


class CpuSampler:
    """CPU used by gunicorn, the PostgreSQL backends of the test database, this process and the rest."""

    def __init__(self, gunicorn_pid: int, pg_url: str, database: str):
        self.gunicorn_pid, self.pg_url, self.database = gunicorn_pid, pg_url, database
        self.samples: list[dict[str, float]] = []

    def _pg_pids(self) -> list[int]:
        import psycopg

        with psycopg.connect(self.pg_url, autocommit=True) as conn:
            rows = conn.execute("SELECT pid FROM pg_stat_activity WHERE datname = %s", (self.database,)).fetchall()
        return [r[0] for r in rows]

    def sample(self) -> None:
        try:
            busy, total = _machine_cpu_s()
            gunicorn = [self.gunicorn_pid, *_children(self.gunicorn_pid)]
            self.samples.append({
                "busy": busy, "total": total, "self": _proc_cpu_s(os.getpid()),
                **{f"g{p}": _proc_cpu_s(p) for p in gunicorn},
                **{f"p{p}": _proc_cpu_s(p) for p in self._pg_pids()}})
        except (OSError, ValueError, IndexError, ImportError) as exc:
            print(f"(CPU sampling unavailable: {exc})", file=sys.stderr)

    def summary(self) -> str | None:
        if len(self.samples) < 2:
            return None
        a, b = self.samples[0], self.samples[-1]
        wall = (b["total"] - a["total"]) / (os.cpu_count() or 1)

        def used(prefix: str) -> float:
            return sum(b[k] - a.get(k, 0.0) for k in b if k.startswith(prefix) and k[1:].isdigit())

        gunicorn, postgres, me = used("g"), used("p"), b["self"] - a["self"]
        busy = b["busy"] - a["busy"]
        other = max(0.0, busy - gunicorn - postgres - me)
        idle = max(0.0, (b["total"] - a["total"]) - busy)

        def pct(x: float) -> str:
            return f"{100 * x / wall:.0f} %"

        return (f"CPU in the measured window ({os.cpu_count()} cores = {100 * (os.cpu_count() or 1)} %): gunicorn "
                f"{pct(gunicorn)}, PostgreSQL {pct(postgres)}, load clients {pct(me)}, other processes on the "
                f"machine {pct(other)}, idle {pct(idle)}")


# -- the report --------------------------------------------------------------------------------------
def server_times(access_log: Path) -> dict[str, list[float]]:
    """Time inside the worker [ms] per endpoint, for the measured requests (from the access log)."""
    out: dict[str, list[float]] = defaultdict(list)
    try:
        text = access_log.read_text(errors="replace")
    except OSError:
        return out
    for line in text.splitlines():
        m = _ACCESS_LINE.search(line)
        if m is None or m["ua"] != UA_MEASURED or m["method"] != "POST":
            continue
        path = m["path"].split("?")[0]
        endpoint = ENDPOINT_COMPUTE if path.endswith("/compute") else ENDPOINT_CREATE if path == "/api/v1/cases" \
            else None
        if endpoint:
            out[endpoint].append(int(m["us"]) / 1000.0)
    return out


def report(run: Run, seconds: float, server: dict[str, list[float]], header: str) -> bool:
    measured = [s for s in run.samples if run.measure_from <= s.start < run.stop_at]
    warm = [s for s in run.samples if s.start < run.measure_from]
    rows = []
    for endpoint in (ENDPOINT_CREATE, ENDPOINT_COMPUTE, "all"):
        group = measured if endpoint == "all" else [s for s in measured if s.endpoint == endpoint]
        lat = sorted(s.latency_s * 1000.0 for s in group)
        srv = sorted(server[endpoint] if endpoint != "all" else [x for v in server.values() for x in v])
        rows.append((endpoint, len(group), len(group) / seconds, percentile(lat, 50), percentile(lat, 95),
                     percentile(lat, 99), lat[-1] if lat else float("nan"), sum(not s.ok for s in group),
                     percentile(srv, 50), percentile(srv, 95)))
    print(header)
    print()
    head = (f"{'endpoint':<34}{'requests':>9}{'req/s':>8}{'p50 ms':>9}{'p95 ms':>9}{'p99 ms':>9}{'max ms':>9}"
            f"{'errors':>8}   {'in worker p50/p95 ms':>20}")
    print(head)
    print("-" * len(head))
    for name, n, rps, p50, p95, p99, mx, err, s50, s95 in rows:
        print(f"{name:<34}{n:>9}{rps:>8.1f}{p50:>9.1f}{p95:>9.1f}{p99:>9.1f}{mx:>9.1f}{err:>8}   "
              f"{s50:>9.1f} /{s95:>8.1f}")
    print()
    print(f"warm-up: {len(warm)} requests in the first seconds, not counted "
          f"({sum(not s.ok for s in warm)} errors); latency as the clients saw it, "
          "'in worker' from gunicorn's access log (the rest is waiting for a free worker)")
    errors = Counter(s.error for s in run.samples if not s.ok)
    for text, count in errors.most_common(5):
        print(f"  error x{count}: {text}")
    total = rows[-1]
    ok = total[7] == 0 and total[1] > 0 and total[4] < 200.0
    print(f"target (zero errors, p95 < 200 ms): {'MET' if ok else 'MISSED'} "
          f"({total[7]} errors, p95 {total[4]:.1f} ms)")
    return ok


# -- where the time goes -------------------------------------------------------------------------------
@dataclass
class Split:
    """Wall time of one request [s], split into exclusive parts."""

    total: float = 0.0
    cpu: float = 0.0          # CPU time of this process (the database server's CPU is not in it)
    fluid: float = 0.0        # building jtcheck.Fluid objects from the stored fluid
    letdown: float = 0.0      # the isenthalpic letdowns (flashes)
    db: float = 0.0           # SQL statements and commits, round trip included
    queries: int = 0


def profile_requests(db_url: str, instance: Path, secret_key: str, setup: Setup, fluid_id: int,
                     n: int) -> dict[str, list[Split]]:
    """Time ``n`` create + compute pairs one after another, in this process, through the Flask test client.

    The database driver's ``execute``/``commit``, ``FluidRecord.to_fluid`` and the service's ``letdown`` are
    wrapped with timers, so the parts do not overlap; the rest is Python in Flask, SQLAlchemy's ORM, unit
    conversion and JSON.
    """
    import psycopg

    from jtcheck.records import service
    from jtcheck.records.models import FluidRecord
    from jtcheck.web import create_app
    from jtcheck.web.database import get_db

    current = Split()
    originals = []

    def wrap(owner, name: str, part: str, counts: bool = False) -> None:
        fn = getattr(owner, name)
        originals.append((owner, name, fn))

        def timed_call(*a, **kw):
            t0 = time.perf_counter()
            try:
                return fn(*a, **kw)
            finally:
                setattr(current, part, getattr(current, part) + time.perf_counter() - t0)
                if counts:
                    current.queries += 1

        setattr(owner, name, timed_call)

    app = create_app({"DATABASE_URL": db_url, "JTCHECK_INSTANCE": str(instance), "SECRET_KEY": secret_key,
                      "DB_UPGRADE_ON_START": False})
    client = app.test_client()
    headers = {"Authorization": f"Bearer {setup.token}"}
    run = Run(port=0, token=setup.token, unit_id=setup.unit_id, fluid_id=fluid_id, measure_from=0, stop_at=0)
    out: dict[str, list[Split]] = {ENDPOINT_CREATE: [], ENDPOINT_COMPUTE: []}
    wrap(psycopg.Cursor, "execute", "db", counts=True)
    wrap(psycopg.Connection, "commit", "db")
    wrap(psycopg.Connection, "rollback", "db")
    wrap(FluidRecord, "to_fluid", "fluid")
    wrap(service, "letdown", "letdown")
    try:
        for i in range(n + 3):      # the first three pairs warm this process up and are not kept
            pair = []
            for endpoint in (ENDPOINT_CREATE, ENDPOINT_COMPUTE):
                current.__init__()
                t0, c0 = time.perf_counter(), time.process_time()
                if endpoint == ENDPOINT_CREATE:
                    resp = client.post("/api/v1/cases", json=case_body(run, 99, i), headers=headers)
                    case_id = resp.get_json()["id"] if resp.status_code == 201 else None
                else:
                    resp = client.post(f"/api/v1/cases/{case_id}/compute", headers=headers)
                if resp.status_code != 201:
                    raise RuntimeError(f"profiling: {endpoint} answered {resp.status_code}: {resp.get_data()[:200]!r}")
                current.total, current.cpu = time.perf_counter() - t0, time.process_time() - c0
                pair.append((endpoint, Split(**vars(current))))
            if i >= 3:
                for endpoint, split in pair:
                    out[endpoint].append(split)
    finally:
        for owner, name, fn in reversed(originals):
            setattr(owner, name, fn)
        with app.app_context():
            get_db().engine.dispose()
    return out


def report_profile(splits: dict[str, list[Split]]) -> None:
    n = len(splits[ENDPOINT_CREATE])
    print()
    print(f"where the time goes: {n} create + compute pairs from one client, in-process (no HTTP, no queue); "
          "mean per request [ms]")
    head = (f"{'endpoint':<34}{'total':>8}{'CPU':>8}{'fluid':>8}{'letdown':>9}{'database':>10}{'queries':>9}"
            f"{'other':>8}")
    print(head)
    print("-" * len(head))
    for endpoint, group in splits.items():
        if not group:
            continue

        total, cpu, fluid, let, db, queries = (sum(getattr(s, attr) for s in group) / len(group) for attr in
                                               ("total", "cpu", "fluid", "letdown", "db", "queries"))
        print(f"{endpoint:<34}{total * 1e3:>8.1f}{cpu * 1e3:>8.1f}{fluid * 1e3:>8.1f}{let * 1e3:>9.1f}"
              f"{db * 1e3:>10.1f}{queries:>9.1f}{(total - fluid - let - db) * 1e3:>8.1f}")
    print("fluid: building jtcheck.Fluid from the stored fluid; letdown: the flashes of every condition; database: "
          "SQL statements and commits (round trips included); other: Flask, ORM, unit conversion, JSON")


# -- main ----------------------------------------------------------------------------------------------
def _interrupt(signum, frame) -> None:
    raise KeyboardInterrupt     # SIGTERM cleans up like Ctrl+C: gunicorn stopped, database dropped


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--seconds", type=float, default=60.0, help="measured duration [s] (default 60)")
    ap.add_argument("--clients", type=int, default=20, help="concurrent clients (default 20)")
    ap.add_argument("--warmup", type=float, default=5.0, help="seconds of load before measuring (default 5)")
    ap.add_argument("--workers", type=int, default=None,
                    help="gunicorn workers (default: WEB_CONCURRENCY, else 2 x cores + 1, as deploy/gunicorn.conf.py)")
    ap.add_argument("--pg", default=os.environ.get("JTCHECK_LOAD_PG", DEFAULT_PG),
                    help=f"maintenance database of the PostgreSQL server on this machine (default {DEFAULT_PG})")
    ap.add_argument("--database", default=DB_PREFIX, help=f"name of the throwaway database (default {DB_PREFIX}); "
                                                          f"it is dropped first and at the end")
    ap.add_argument("--profile", type=int, default=30, metavar="N",
                    help="after the load, time N create + compute pairs one at a time and show where the time goes "
                         "(default 30; 0: skip)")
    ap.add_argument("--keep-logs", action="store_true", help="keep the folder with gunicorn's logs")
    args = ap.parse_args(argv)
    if not 1 <= args.clients <= 200:
        ap.error("--clients must be 1..200")
    if not 1 <= args.seconds <= 900 or not 0 <= args.warmup <= 120:
        ap.error("--seconds must be 1..900 and --warmup 0..120")
    if not re.fullmatch(rf"{DB_PREFIX}\w*", args.database):
        ap.error(f"--database must start with {DB_PREFIX!r} (the database is dropped)")
    loopback_only(args.pg)

    work = Path(tempfile.mkdtemp(prefix="jtcheck-load-"))
    instance, access_log, server_log = work / "instance", work / "access.log", work / "gunicorn.log"
    db_url = with_database(args.pg, args.database)
    secret_key = secrets.token_urlsafe(48)
    proc: subprocess.Popen | None = None
    created = False
    previous_term = signal.signal(signal.SIGTERM, _interrupt)
    try:
        pg_admin(args.pg, f'DROP DATABASE IF EXISTS "{args.database}" WITH (FORCE)')
        pg_admin(args.pg, f'CREATE DATABASE "{args.database}"')
        created = True
        print(f"setting up: database {args.database}, accounts, API token ...", flush=True)
        setup = setup_database(db_url)
        port = free_port()
        proc = start_gunicorn(port, db_url, instance, secret_key, args.workers, access_log, server_log)
        print("starting gunicorn; its workers warm up before they answer ...", flush=True)
        wait_healthy(proc, port, server_log)
        workers = args.workers or int(os.environ.get("WEB_CONCURRENCY") or 2 * len(os.sched_getaffinity(0)) + 1)
        status, body = request(port, "POST", "/api/v1/fluids", setup.token, FLUID, "jtcheck-load-web/setup")
        if status != 201:
            raise RuntimeError(f"creating the fluid failed: HTTP {status} {body[:300]!r}")
        fluid_id = json.loads(body)["id"]

        load_before = os.getloadavg()[0]
        start = time.monotonic()
        run = Run(port=port, token=setup.token, unit_id=setup.unit_id, fluid_id=fluid_id,
                  measure_from=start + args.warmup, stop_at=start + args.warmup + args.seconds)
        print(f"running: {args.clients} clients, {args.warmup:g} s warm-up + {args.seconds:g} s measured, "
              f"gunicorn {workers} workers on 127.0.0.1:{port} ...", flush=True)
        threads = [threading.Thread(target=client_loop, args=(run, i), name=f"client-{i}", daemon=True)
                   for i in range(args.clients)]
        for t in threads:
            t.start()
        sampler = CpuSampler(proc.pid, args.pg, args.database)
        time.sleep(max(0.0, run.measure_from - time.monotonic()))
        sampler.sample()
        time.sleep(max(0.0, run.stop_at - time.monotonic()))
        sampler.sample()
        for t in threads:
            t.join(timeout=args.warmup + args.seconds + 120)
        stop_gunicorn(proc)     # flushes the access log
        header = (f"jtcheck web load test: {args.clients} clients, {args.seconds:g} s measured after "
                  f"{args.warmup:g} s warm-up; gunicorn {workers} sync workers, PostgreSQL (database "
                  f"{args.database}); {os.cpu_count()} cores shared by server, database and clients; "
                  f"1-min load average {load_before:.1f} before, {os.getloadavg()[0]:.1f} after")
        report(run, args.seconds, server_times(access_log), header)
        cpu = sampler.summary()
        if cpu:
            print(cpu)
        if args.profile > 0:
            report_profile(profile_requests(db_url, instance, secret_key, setup, fluid_id, args.profile))
        return 0
    except KeyboardInterrupt:
        print("interrupted; cleaning up", file=sys.stderr)
        return 130
    finally:
        if proc is not None:
            stop_gunicorn(proc)
        if created:
            try:
                pg_admin(args.pg, f'DROP DATABASE IF EXISTS "{args.database}" WITH (FORCE)')
            except Exception as exc:  # noqa: BLE001 - report and go on cleaning up
                print(f"could not drop the database {args.database}: {exc}", file=sys.stderr)
        if args.keep_logs:
            print(f"logs kept in {work}")
        else:
            shutil.rmtree(work, ignore_errors=True)
        signal.signal(signal.SIGTERM, previous_term)


if __name__ == "__main__":
    sys.exit(main())
