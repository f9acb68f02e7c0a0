"""Load benchmark of the production set-up: 50 concurrent users for 60 s on PostgreSQL behind gunicorn.

Run:  .venv/bin/python benchmarks/bench_load.py [--users 50] [--seconds 60] [--warmup 10] [--think 1.0]

What it does, and undoes (the server, database and helpers are those of ``benchmarks/load_web.py``):

1. creates a throwaway PostgreSQL database (``jtcheck_bench_load`` on 127.0.0.1:5432), brings it to the newest
   migration and makes an admin and an engineer (with a known password and an API token), a site, a unit;
2. starts ``gunicorn -c deploy/gunicorn.conf.py jtcheck.web.wsgi:app`` as the README's production set-up
   (workers: ``--workers``, else the configuration's default) and waits for ``/healthz``;
3. through the API: makes the invented fluid, ``--cases`` cases, computes half of them (so that pages and
   results have content); signs in once through the sign-in form (with its CSRF token) for the page views;
4. runs ``--users`` threads for ``--warmup`` + ``--seconds`` seconds.  Each user repeats: pick a request by the
   weights below, send it, wait a think time drawn uniformly from 0.5 to 1.5 times ``--think`` seconds.  Only
   requests started after the warm-up are counted:

   ======== ================================================ ======
   kind     request                                          weight
   ======== ================================================ ======
   page     ``GET /cases`` (case list page)                  15
   page     ``GET /cases/<id>`` (case page)                  15
   page     ``GET /fluids``                                  5
   api      ``GET /api/v1/cases?limit=50``                   15
   api      ``GET /api/v1/cases/<id>``                       15
   api      ``GET /api/v1/cases/<id>/results``               10
   api      ``GET /api/v1/fluids``                           5
   compute  ``POST /api/v1/cases/<id>/compute``              10
   compute  ``POST /api/v1/letdown`` (nothing stored)        10
   ======== ================================================ ======

   With ``--hostile N``, N more users upload a zip bomb (an XLSX of about 1 MB that unpacks to over 256 MB) to the
   batch page back to back, and one more asks ``GET /healthz`` every 0.2 s: the bombs must all be refused (422)
   and /healthz must keep answering (its p95 is printed as kind "health"; target under 1 s);
5. prints a table (requests, p50, p95, p99, max, errors per request and per kind) and the verdict against the
   targets: page views and API reads p95 <= 300 ms, computes p95 <= 1.5 s, 0 errors;
6. stops gunicorn and drops the database (also when interrupted).

Traffic goes to 127.0.0.1 only; the users run on the same cores as the server and the database.
"""
from __future__ import annotations

import argparse
import http.client
import json
import os
import random
import re
import secrets
import shutil
import signal
import subprocess
import sys
import tempfile
import threading
import time
from collections import defaultdict
from dataclasses import dataclass, field
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
import load_web  # noqa: E402 - the server, database and percentile helpers of the loopback load test

DB_NAME = "jtcheck_bench_load"
AGENT = "jtcheck-bench-load"
PASSWORD = "bench-load-" + secrets.token_urlsafe(12)
TARGET_S = {"page": 0.300, "api": 0.300, "compute": 1.500, "health": 1.000, "hostile": 60.0}

#: (kind, label, method, path template, weight); ``{id}`` is a case of the benchmark.
REQUESTS = (
    ("page", "GET /cases", "GET", "/cases", 15),
    ("page", "GET /cases/<id>", "GET", "/cases/{id}", 15),
    ("page", "GET /fluids", "GET", "/fluids", 5),
    ("api", "GET /api/v1/cases?limit=50", "GET", "/api/v1/cases?limit=50", 15),
    ("api", "GET /api/v1/cases/<id>", "GET", "/api/v1/cases/{id}", 15),
    ("api", "GET /api/v1/cases/<id>/results", "GET", "/api/v1/cases/{id}/results", 10),
    ("api", "GET /api/v1/fluids", "GET", "/api/v1/fluids", 5),
    ("compute", "POST /api/v1/cases/<id>/compute", "POST", "/api/v1/cases/{id}/compute", 10),
    ("compute", "POST /api/v1/letdown", "POST", "/api/v1/letdown", 10),
)
#: An invented letdown of the fictional Kestrel Ridge terminal for ``POST /api/v1/letdown``.
LETDOWN = {"fluid": {"composition": load_web.FLUID["composition"], "eos": "PR"}, "p_in": "70 barg",
           "t_in": "12 degC", "p_out": "7 barg", "mdmt": "-29 degC", "margin": "5 K"}


@dataclass
class Sample:
    kind: str
    label: str
    latency_s: float
    error: str


@dataclass
class Bench:
    port: int
    token: str
    cookie: str
    case_ids: list[int]
    measure_from: float
    stop_at: float
    think_s: float
    samples: list[Sample] = field(default_factory=list)
    lock: threading.Lock = field(default_factory=threading.Lock)


def http_call(port: int, method: str, path: str, headers: dict[str, str], body: bytes | None = None,
              timeout: float = 60.0) -> tuple[int, dict[str, str], bytes]:
    conn = http.client.HTTPConnection("127.0.0.1", port, timeout=timeout)
    try:
        conn.request(method, path, body=body, headers={"User-Agent": AGENT, **headers})
        resp = conn.getresponse()
        return resp.status, {k.lower(): v for k, v in resp.getheaders()}, resp.read()
    finally:
        conn.close()


def api_call(port: int, token: str, method: str, path: str, payload: dict | None = None) -> tuple[int, bytes]:
    headers = {"Authorization": f"Bearer {token}", "Accept": "application/json"}
    body = None
    if payload is not None:
        headers["Content-Type"] = "application/json"
        body = json.dumps(payload).encode()
    status, _, data = http_call(port, method, path, headers, body)
    return status, data


def _cookie(headers: dict[str, str]) -> str:
    raw = headers.get("set-cookie", "")
    return raw.split(";", 1)[0] if raw else ""


def sign_in(port: int, email: str) -> str:
    """The session cookie of ``email``, signed in through the sign-in form (its CSRF token included)."""
    status, headers, page = http_call(port, "GET", "/login", {})
    token = re.search(rb'name="csrf_token"[^>]*value="([^"]+)"', page)
    if status != 200 or token is None:
        raise RuntimeError(f"the sign-in page answered {status} without a CSRF token")
    from urllib.parse import urlencode

    form = urlencode({"email": email, "password": PASSWORD, "csrf_token": token.group(1).decode()}).encode()
    status, headers, _ = http_call(port, "POST", "/login", {"Cookie": _cookie(headers),
                                                           "Content-Type": "application/x-www-form-urlencoded"}, form)
    cookie = _cookie(headers)
    if status != 302 or not cookie:
        raise RuntimeError(f"signing in answered {status}")
    return cookie


def setup_accounts(db_url: str) -> tuple[str, int]:
    """Accounts with a known password, the engineer's API token, a site and a unit: ``(token, unit_id)``."""
    from jtcheck.records import service
    from jtcheck.records.db import make_engine, make_session_factory, upgrade_database
    from jtcheck.records.models import Role
    from jtcheck.records.passwords import hash_password
    from jtcheck.records.tokens import create_token

    upgrade_database(db_url)
    engine = make_engine(db_url)
    try:
        with make_session_factory(engine)() as s:
            admin = service.create_user(s, None, email="admin@bench.example.org", name="Bench Admin", role=Role.ADMIN,
                                        password_hash=hash_password(PASSWORD))
            engineer = service.create_user(s, admin, email="engineer@bench.example.org", name="Bench Engineer",
                                           role=Role.ENGINEER, password_hash=hash_password(PASSWORD))
            token = create_token(s, engineer)
            site = service.create_site(s, admin, "Kestrel Ridge gas terminal (benchmark)", "Invented site.")
            unit = service.create_unit(s, admin, site.id, "Town-main pressure-reduction station")
            return token, unit.id
    finally:
        engine.dispose()


def make_cases(port: int, token: str, unit_id: int, n: int) -> list[int]:
    status, body = api_call(port, token, "POST", "/api/v1/fluids", load_web.FLUID)
    if status != 201:
        raise RuntimeError(f"creating the fluid: HTTP {status} {body[:200]!r}")
    fluid_id = json.loads(body)["id"]
    ids = []
    for k in range(n):
        p_in = 55 + (k % 6) * 5
        case = {"unit_id": unit_id, "tag": f"PCV-B{k:03d}", "kind": "control_valve", "fluid_id": fluid_id,
                "service": "benchmark: town-main regulator (invented)", "inlet_pressure": f"{p_in} barg",
                "inlet_temperature": f"{8 + k % 9} degC", "outlet_pressure": "7 barg",
                "inlet_temperature_min": "2 degC", "mdmt": "-29 degC", "margin": "5 K"}
        status, body = api_call(port, token, "POST", "/api/v1/cases", case)
        if status != 201:
            raise RuntimeError(f"creating a case: HTTP {status} {body[:200]!r}")
        ids.append(json.loads(body)["id"])
        if k % 2 == 0:
            status, body = api_call(port, token, "POST", f"/api/v1/cases/{ids[-1]}/compute")
            if status != 201:
                raise RuntimeError(f"computing a case: HTTP {status} {body[:200]!r}")
    return ids


def one_request(bench: Bench, rng: random.Random) -> None:
    kind, label, method, template, _ = rng.choices(REQUESTS, weights=[r[4] for r in REQUESTS])[0]
    path = template.format(id=rng.choice(bench.case_ids))
    t0 = time.monotonic()
    error = ""
    try:
        if kind == "page":
            status, _, body = http_call(bench.port, method, path, {"Cookie": bench.cookie})
        else:
            status, body = api_call(bench.port, bench.token, method, path, LETDOWN if path.endswith("/letdown")
                                    else None)
        expected = 201 if label.endswith("/compute") else 200
        if status != expected:
            error = f"HTTP {status}: {body[:120].decode(errors='replace')}"
    except (OSError, http.client.HTTPException) as exc:
        error = f"{type(exc).__name__}: {exc}"
    latency = time.monotonic() - t0
    if t0 >= bench.measure_from:
        with bench.lock:
            bench.samples.append(Sample(kind, label, latency, error))


def _record(bench: Bench, kind: str, label: str, t0: float, error: str) -> None:
    if t0 >= bench.measure_from:
        with bench.lock:
            bench.samples.append(Sample(kind, label, time.monotonic() - t0, error))


def health_loop(bench: Bench) -> None:
    while time.monotonic() < bench.stop_at:
        t0 = time.monotonic()
        try:
            status, _, _ = http_call(bench.port, "GET", "/healthz", {})
            error = "" if status == 200 else f"HTTP {status}"
        except (OSError, http.client.HTTPException) as exc:
            error = f"{type(exc).__name__}: {exc}"
        _record(bench, "health", "GET /healthz", t0, error)
        time.sleep(0.2)


def hostile_loop(bench: Bench, bomb: bytes) -> None:
    """Upload the zip bomb to the batch page again and again; a refusal (422) is the expected answer."""
    while time.monotonic() < bench.stop_at:
        t0 = time.monotonic()
        try:
            status, headers, page = http_call(bench.port, "GET", "/batches", {"Cookie": bench.cookie})
            token = re.search(rb'name="csrf_token"[^>]*value="([^"]+)"', page)
            boundary = "jtcheck-bench-" + secrets.token_hex(6)
            body = (f"--{boundary}\r\nContent-Disposition: form-data; name=\"csrf_token\"\r\n\r\n"
                    f"{token.group(1).decode() if token else ''}\r\n--{boundary}\r\nContent-Disposition: form-data; "
                    f"name=\"file\"; filename=\"bomb.xlsx\"\r\nContent-Type: application/octet-stream\r\n\r\n"
                    ).encode() + bomb + f"\r\n--{boundary}--\r\n".encode()
            cookie = _cookie(headers) or bench.cookie      # the page may store the form's CSRF secret in the session
            status, _, page = http_call(bench.port, "POST", "/batches", {
                "Cookie": cookie, "Content-Type": f"multipart/form-data; boundary={boundary}"}, body)
            error = "" if status == 422 and b"unpacked is read" in page else f"HTTP {status}: not refused as expected"
        except (OSError, http.client.HTTPException) as exc:
            error = f"{type(exc).__name__}: {exc}"
        _record(bench, "hostile", "POST /batches (zip bomb)", t0, error)


def zip_bomb() -> bytes:
    """An XLSX of about 1 MB whose sheet unpacks to over 256 MB (one row of empty inline-string cells)."""
    import io
    import zipfile

    from jtcheck.batch.layout import MAX_UNPACKED_BYTES

    block = b'<c t="inlineStr"><is><t></t></is></c>' * 100_000
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED, compresslevel=1) as z:
        z.writestr("[Content_Types].xml", "<Types/>")
        z.writestr("xl/workbook.xml", "<workbook/>")
        with z.open("xl/worksheets/sheet1.xml", "w", force_zip64=True) as f:
            f.write(b"<worksheet><sheetData><row r=\"1\">")
            for _ in range(MAX_UNPACKED_BYTES // len(block) + 2):
                f.write(block)
            f.write(b"</row></sheetData></worksheet>")
    return out.getvalue()


def user_loop(bench: Bench, seed: int) -> None:
    rng = random.Random(seed)
    time.sleep(rng.uniform(0, bench.think_s))            # users do not all start at once
    while time.monotonic() < bench.stop_at:
        one_request(bench, rng)
        time.sleep(bench.think_s * rng.uniform(0.5, 1.5))


def report(bench: Bench, seconds: float, header: str) -> bool:
    groups: dict[tuple[str, str], list[Sample]] = defaultdict(list)
    for s in bench.samples:
        groups[(s.kind, s.label)].append(s)
        groups[(s.kind, f"all {s.kind}")].append(s)
    print()
    print(header)
    head = f"{'kind':<9}{'request':<36}{'requests':>9}{'req/s':>7}{'p50 ms':>9}{'p95 ms':>9}{'p99 ms':>9}" \
           f"{'max ms':>9}{'errors':>8}"
    print(head)
    print("-" * len(head))
    order = [(k, label) for k, label, *_ in REQUESTS]
    order += [("health", "GET /healthz"), ("hostile", "POST /batches (zip bomb)")]
    for kind in ("page", "api", "compute"):
        order.append((kind, f"all {kind}"))
    met = True
    for key in order:
        group = groups.get(key, [])
        if not group:
            continue
        lat = sorted(s.latency_s for s in group)
        errors = sum(1 for s in group if s.error)
        p95 = load_web.percentile(lat, 95)
        if key[1].startswith("all ") or key[0] == "health":
            met &= errors == 0 and p95 <= TARGET_S[key[0]]
        print(f"{key[0]:<9}{key[1]:<36}{len(group):>9}{len(group) / seconds:>7.1f}"
              f"{load_web.percentile(lat, 50) * 1e3:>9.1f}{p95 * 1e3:>9.1f}{load_web.percentile(lat, 99) * 1e3:>9.1f}"
              f"{lat[-1] * 1e3:>9.1f}{errors:>8}")
    first_errors = [s for s in bench.samples if s.error][:5]
    for s in first_errors:
        print(f"error: {s.label}: {s.error}")
    print(f"targets: page views and API reads p95 <= {TARGET_S['page'] * 1e3:.0f} ms, computes p95 <= "
          f"{TARGET_S['compute']:.1f} s, /healthz p95 < 1 s (with --hostile), 0 errors (a refused bomb is no error): "
          f"{'MET' if met else 'NOT MET'}")
    return met


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--users", type=int, default=50, help="concurrent users (default 50)")
    ap.add_argument("--seconds", type=float, default=60.0, help="measured duration [s] (default 60)")
    ap.add_argument("--warmup", type=float, default=10.0, help="seconds of load before measuring (default 10)")
    ap.add_argument("--think", type=float, default=1.0, help="mean think time between a user's requests [s]")
    ap.add_argument("--cases", type=int, default=60, help="cases made before the load (default 60)")
    ap.add_argument("--workers", type=int, default=None, help="gunicorn workers (default: the configuration's)")
    ap.add_argument("--hostile", type=int, default=0, metavar="N",
                    help="N more users upload zip bombs meanwhile, and /healthz is timed (default 0)")
    ap.add_argument("--pg", default=os.environ.get("JTCHECK_LOAD_PG", load_web.DEFAULT_PG),
                    help="maintenance database of the PostgreSQL server on this machine")
    args = ap.parse_args(argv)
    if not 1 <= args.users <= 500 or not 1 <= args.seconds <= 900 or not 0 <= args.warmup <= 120:
        ap.error("--users 1..500, --seconds 1..900, --warmup 0..120")
    load_web.loopback_only(args.pg)
    work = Path(tempfile.mkdtemp(prefix="jtcheck-bench-load-"))
    db_url = load_web.with_database(args.pg, DB_NAME)
    proc: subprocess.Popen | None = None
    created = False
    previous_term = signal.signal(signal.SIGTERM, load_web._interrupt)
    try:
        load_web.pg_admin(args.pg, f'DROP DATABASE IF EXISTS "{DB_NAME}" WITH (FORCE)')
        load_web.pg_admin(args.pg, f'CREATE DATABASE "{DB_NAME}"')
        created = True
        print(f"setting up: database {DB_NAME}, accounts ...", flush=True)
        token, unit_id = setup_accounts(db_url)
        port = load_web.free_port()
        proc = load_web.start_gunicorn(port, db_url, work / "instance", secrets.token_urlsafe(48), args.workers,
                                       work / "access.log", work / "gunicorn.log")
        print("starting gunicorn; its workers warm up before they answer ...", flush=True)
        load_web.wait_healthy(proc, port, work / "gunicorn.log")
        print(f"making {args.cases} cases (half computed) and signing in ...", flush=True)
        case_ids = make_cases(port, token, unit_id, args.cases)
        cookie = sign_in(port, "engineer@bench.example.org")
        workers = args.workers or int(os.environ.get("WEB_CONCURRENCY") or 2 * len(os.sched_getaffinity(0)) + 1)
        start = time.monotonic()
        bench = Bench(port=port, token=token, cookie=cookie, case_ids=case_ids, measure_from=start + args.warmup,
                      stop_at=start + args.warmup + args.seconds, think_s=args.think)
        load_before = os.getloadavg()[0]
        print(f"running: {args.users} users, think time {args.think:g} s (0.5-1.5 x), {args.warmup:g} s warm-up + "
              f"{args.seconds:g} s measured ...", flush=True)
        threads = [threading.Thread(target=user_loop, args=(bench, k), daemon=True) for k in range(args.users)]
        if args.hostile:
            bomb = zip_bomb()
            threads += [threading.Thread(target=hostile_loop, args=(bench, bomb), daemon=True)
                        for _ in range(args.hostile)]
            threads.append(threading.Thread(target=health_loop, args=(bench,), daemon=True))
        for t in threads:
            t.start()
        for t in threads:
            t.join(timeout=args.warmup + args.seconds + 120)
        hostile = f" + {args.hostile} uploading zip bombs" if args.hostile else ""
        header = (f"jtcheck load benchmark: {args.users} users{hostile}, {args.seconds:g} s measured after "
                  f"{args.warmup:g} s warm-up, think time {args.think:g} s; gunicorn {workers} sync workers "
                  f"(deploy/gunicorn.conf.py), "
                  f"PostgreSQL; {os.cpu_count()} cores shared by server, database, users (and other work: 1-min "
                  f"load average {load_before:.1f} before, {os.getloadavg()[0]:.1f} after)")
        report(bench, args.seconds, header)
        return 0
    except KeyboardInterrupt:
        print("interrupted; cleaning up", file=sys.stderr)
        return 130
    finally:
        if proc is not None:
            load_web.stop_gunicorn(proc)
        if created:
            try:
                load_web.pg_admin(args.pg, f'DROP DATABASE IF EXISTS "{DB_NAME}" WITH (FORCE)')
            except Exception as exc:  # noqa: BLE001 - report and go on cleaning up
                print(f"could not drop the database {DB_NAME}: {exc}", file=sys.stderr)
        shutil.rmtree(work, ignore_errors=True)
        signal.signal(signal.SIGTERM, previous_term)


if __name__ == "__main__":
    sys.exit(main())
