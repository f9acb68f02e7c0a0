"""Batch jobs (jtcheck.batch.jobs): checked and stored on upload, run by a thread or by an RQ worker, never left
hanging.

The database is a SQLite file, or, with ``DATABASE_URL`` set, a schema of this module's own inside that PostgreSQL
database (whose name must contain "test").  The RQ tests use the real Redis at redis://127.0.0.1:6379/15 (skipped
when it does not answer) with rq's SimpleWorker in burst mode in this process; they delete exactly the keys that
appeared during the test.
"""
from __future__ import annotations

import os
import threading
import time
import uuid
from datetime import timedelta

import pytest
from sqlalchemy import create_engine, func, select, text, update
from sqlalchemy.engine import make_url

from jtcheck.batch import jobs
from jtcheck.batch.reader import read_cases
from jtcheck.batch.template import write_template
from jtcheck.errors import InputError
from jtcheck.records import service
from jtcheck.records.db import (
    downgrade_database,
    make_engine,
    make_session_factory,
    normalise_database_url,
    upgrade_database,
)
from jtcheck.records.errors import PermissionDenied
from jtcheck.records.models import AuditEntry, BatchJob, BatchStatus, Role, User
from jtcheck.screening import batch as screening_batch

#: Opens a database (see tests/conftest.py): the PostgreSQL run of `make test` includes this module.
pytestmark = pytest.mark.database

REDIS_URL = "redis://127.0.0.1:6379/15"
#: Longest wait for a thread job [s]: a wait, not a speed check (a fresh checkout compiles the kernels first).
TIMEOUT_S = 900
TEMPLATE = write_template("csv")
TAGS = [c.tag for c in read_cases(TEMPLATE, filename="t.csv").cases]
BAD_ROW = b'PCV-BAD,bad,control_valve,"methane=0.9,ethane=0.1",PR,10,20,50,,,-29,,5,no,1.01325\r\n'


# -- fixtures -------------------------------------------------------------------------------------------------
@pytest.fixture(scope="module")
def db_url(tmp_path_factory):
    env = os.environ.get("DATABASE_URL", "").strip()
    if not env:
        url = f"sqlite:///{tmp_path_factory.mktemp('batch-jobs') / 'jtcheck.sqlite3'}"
        upgrade_database(url)
        yield url
        downgrade_database(url, "base")
        return
    url = normalise_database_url(env)
    name = make_url(url).database or ""
    if "test" not in name:
        pytest.fail(f"DATABASE_URL names the database {name!r}; the tests drop what they create in it, so its name "
                    "must contain 'test'")
    schema = f"jtcheck_batch_test_{uuid.uuid4().hex[:12]}"
    admin = create_engine(url)
    with admin.begin() as conn:
        conn.execute(text(f'CREATE SCHEMA "{schema}"'))
    scoped = make_url(url).update_query_dict({"options": f"-csearch_path={schema}"}).render_as_string(
        hide_password=False)
    try:
        upgrade_database(scoped)
        yield scoped
        downgrade_database(scoped, "base")
    finally:
        with admin.begin() as conn:
            conn.execute(text(f'DROP SCHEMA IF EXISTS "{schema}" CASCADE'))
        admin.dispose()


@pytest.fixture(scope="module")
def engine(db_url):
    eng = make_engine(db_url)
    yield eng
    eng.dispose()


@pytest.fixture(scope="module")
def users(engine) -> dict[Role, int]:
    with make_session_factory(engine)() as s:
        admin = service.create_user(s, None, email="admin@batch.example.org", name="Ada Admin", role="admin",
                                    password_hash="not-a-real-hash")
        out = {Role.ADMIN: admin.id}
        for role in (Role.ENGINEER, Role.CHECKER):
            out[role] = service.create_user(s, admin, email=f"{role.value}@batch.example.org",
                                            name=f"{role.value.title()} User", role=role,
                                            password_hash="not-a-real-hash").id
        return out


@pytest.fixture
def session(engine):
    with make_session_factory(engine)() as s:
        yield s


@pytest.fixture
def engineer(session, users):
    return session.get(User, users[Role.ENGINEER])


@pytest.fixture
def config(db_url) -> dict:
    """Settings of the thread runner (no Redis, whatever the environment says)."""
    return {"DATABASE_URL": db_url, "BATCH_RUNNER": "thread"}


@pytest.fixture
def redis_db():
    """Redis database 15, or skip; afterwards the keys that appeared during the test are deleted (only those)."""
    from redis import Redis
    from redis.exceptions import ConnectionError as RedisConnectionError

    conn = Redis.from_url(REDIS_URL)
    try:
        conn.ping()
    except RedisConnectionError as exc:
        conn.close()
        pytest.skip(f"no Redis at {REDIS_URL}: {exc}")
    before = set(conn.keys("*"))
    try:
        yield conn
    finally:
        new = set(conn.keys("*")) - before
        if new:
            conn.delete(*new)
        conn.close()


def _load(engine, job_id: int) -> BatchJob:
    with make_session_factory(engine)() as s:
        job = s.get(BatchJob, job_id)
        job.results, job.counts, job.input_file, job.bad_rows   # noqa: B018 - loaded before the session ends
        return job


def _run_thread(config, job_id: int, **kwargs) -> None:
    thread = jobs.start_job(config, job_id, **kwargs)
    assert isinstance(thread, threading.Thread)
    thread.join(TIMEOUT_S)
    assert not thread.is_alive(), f"batch {job_id} still running after {TIMEOUT_S} s"


def _comparable(job: BatchJob) -> dict:
    counts = dict(job.counts)
    counts.pop("seconds")
    return {"status": job.status, "done": job.done, "total": job.total, "results": job.results, "counts": counts,
            "message": job.message}


# -- creating ------------------------------------------------------------------------------------------------
def test_a_good_file_is_stored_as_a_queued_job(session, engineer):
    job = jobs.create_job(session, engineer, "letdowns.csv", TEMPLATE, {"limit": " -29   degC ", "keep_going": "on"})
    assert job.id is not None
    assert (job.status, job.total, job.done, job.runner) == (BatchStatus.QUEUED, len(TAGS), 0, "thread")
    assert job.input_file == TEMPLATE and job.bad_rows is None and job.results is None
    assert job.options == {"limit": "-29 degC", "mdmt": "", "margin": "", "compare_models": True, "keep_going": True}
    assert job.reading["errors"] == [] and job.reading["units"]["inlet_temperature"] == "degC"
    audit = session.scalars(select(AuditEntry).where(AuditEntry.entity == "batch_job",
                                                     AuditEntry.entity_id == job.id)).all()
    assert [(a.action, a.new_value) for a in audit] == [("create", "letdowns.csv")]


def test_a_file_with_errors_is_refused_with_every_error_and_nothing_stored(session, engineer):
    before = session.scalar(select(func.count()).select_from(BatchJob))
    data = TEMPLATE + BAD_ROW + b',no tag,control_valve,"methane=1",PR,70,20,10,,,-29,,5,maybe,1.01325\r\n'
    with pytest.raises(jobs.BatchFileError) as caught:
        jobs.create_job(session, engineer, "bad.csv", data, {})
    err = caught.value
    assert err.errors == read_cases(data, filename="bad.csv").errors
    assert {e.row for e in err.errors} == {len(TAGS) + 2, len(TAGS) + 3}
    assert all(e.reason for e in err.errors)
    assert "nothing was stored" in err.message
    assert session.scalar(select(func.count()).select_from(BatchJob)) == before


def test_keep_going_stores_the_good_rows_and_the_bad_rows_file(session, engineer):
    job = jobs.create_job(session, engineer, "mixed.csv", TEMPLATE + BAD_ROW, {"keep_going": True})
    assert job.total == len(TAGS)
    assert job.bad_rows is not None and b"PCV-BAD" in job.bad_rows and b"problems" in job.bad_rows
    assert [e["row"] for e in job.reading["errors"]] == [len(TAGS) + 2]


@pytest.mark.parametrize(("options", "field"), [({"limit": "cold"}, "limit"), ({"mdmt": "-500 degC"}, "mdmt"),
                                                ({"margin": "500 K"}, "margin"), ({"limit": "x" * 41}, "limit")])
def test_bad_form_limits_name_their_field(session, engineer, options, field):
    with pytest.raises(InputError) as caught:
        jobs.create_job(session, engineer, "letdowns.csv", TEMPLATE, options)
    assert caught.value.field == field


def test_only_engineers_and_admins_create_jobs(session, users):
    checker = session.get(User, users[Role.CHECKER])
    with pytest.raises(PermissionDenied):
        jobs.create_job(session, checker, "letdowns.csv", TEMPLATE, {})
    admin = session.get(User, users[Role.ADMIN])
    assert jobs.create_job(session, admin, "letdowns.csv", TEMPLATE, {}).id is not None


def test_an_empty_or_unreadable_file_is_refused(session, engineer):
    with pytest.raises(InputError, match="is empty"):
        jobs.create_job(session, engineer, "empty.csv", b"", {})
    with pytest.raises(jobs.BatchFileError, match="give a .csv or .xlsx file"):
        jobs.create_job(session, engineer, "list.pdf", b"%PDF-1.7", {})
    with pytest.raises(jobs.BatchFileError, match="no case rows"):
        jobs.create_job(session, engineer, "header-only.csv", TEMPLATE.splitlines()[0], {})


def test_the_runner_follows_the_configuration(monkeypatch):
    monkeypatch.delenv("REDIS_URL", raising=False)
    assert jobs.runner_for({}) == "thread"
    assert jobs.runner_for({"REDIS_URL": REDIS_URL}) == "rq"
    assert jobs.runner_for({"REDIS_URL": REDIS_URL, "BATCH_RUNNER": "thread"}) == "thread"
    monkeypatch.setenv("REDIS_URL", REDIS_URL)
    assert jobs.runner_for({}) == "rq"
    with pytest.raises(InputError, match="BATCH_RUNNER"):
        jobs.runner_for({"BATCH_RUNNER": "celery"})
    monkeypatch.delenv("REDIS_URL")
    with pytest.raises(InputError, match="needs REDIS_URL"):
        jobs.runner_for({"BATCH_RUNNER": "rq"})


# -- running in a thread ------------------------------------------------------------------------------------
def test_a_thread_job_screens_every_row_and_stores_the_results(engine, session, engineer, config):
    job = jobs.create_job(session, engineer, "letdowns.csv", TEMPLATE, {})
    _run_thread(config, job.id)
    done = _load(engine, job.id)
    assert done.status is BatchStatus.DONE and done.message == ""
    assert done.done == done.total == len(TAGS)
    assert [r["tag"] for r in done.results] == TAGS
    direct = screening_batch.screen_batch(read_cases(TEMPLATE, filename="t.csv").cases)
    assert [r["outcome"] for r in done.results] == [r.outcome for r in direct.rows]
    assert [r["t_screen_k"] for r in done.results] == pytest.approx([r.t_screen_k for r in direct.rows])
    assert done.counts["by_outcome"] == {o: sum(r.outcome == o for r in direct.rows) for o in jobs.OUTCOMES}
    assert done.counts["rows"] == len(TAGS) and done.counts["skipped"] == 0
    assert done.started_at <= done.finished_at


def test_progress_is_written_while_the_job_runs(engine, session, engineer, config, monkeypatch):
    seen = []
    real = screening_batch.screen_batch

    def watched(cases, *, compare_models=True, progress=None):
        progress(3, len(cases))
        seen.append((_load(engine, job.id).status, _load(engine, job.id).done))
        return real(cases, compare_models=compare_models, progress=progress)

    monkeypatch.setattr(jobs, "PROGRESS_INTERVAL_S", 0.0)
    job = jobs.create_job(session, engineer, "letdowns.csv", TEMPLATE, {})
    _run_thread(config, job.id, screen=watched)
    assert seen == [(BatchStatus.RUNNING, 3)]
    assert _load(engine, job.id).status is BatchStatus.DONE


def test_a_job_whose_screening_raises_ends_failed_with_the_message(engine, session, engineer, config):
    def broken(cases, *, compare_models=True, progress=None):
        raise ValueError("the flash kernel refused row 4")

    job = jobs.create_job(session, engineer, "letdowns.csv", TEMPLATE, {})
    _run_thread(config, job.id, screen=broken)
    failed = _load(engine, job.id)
    assert failed.status is BatchStatus.FAILED
    assert "the flash kernel refused row 4" in failed.message
    assert failed.finished_at is not None and failed.results is None


def test_a_job_runs_once(engine, session, engineer, config, db_url):
    job = jobs.create_job(session, engineer, "letdowns.csv", TEMPLATE, {})
    _run_thread(config, job.id)
    first = _load(engine, job.id)
    assert jobs.run_job(db_url, job.id) == "done"                   # nothing to do: the stored results stay
    assert _load(engine, job.id).finished_at == first.finished_at
    assert jobs.run_job(db_url, 999_999) == "missing"


def test_a_running_job_without_a_sign_of_life_is_marked_failed(engine, session, engineer):
    job = jobs.create_job(session, engineer, "letdowns.csv", TEMPLATE, {})
    assert not jobs.expire_if_stale(session, job)                   # just queued: fine
    old = jobs.utcnow() - timedelta(hours=1)
    session.execute(update(BatchJob).where(BatchJob.id == job.id).values(status="running", heartbeat_at=old))
    session.commit()
    session.refresh(job)
    assert not jobs.expire_if_stale(session, job, stale_after_s=2 * 3600)
    assert jobs.expire_if_stale(session, job, stale_after_s=600)
    assert job.status is BatchStatus.FAILED and "no sign of life for 600 s" in job.message


def _orphan(session, job_id: int, attempts: int) -> None:
    """Make job ``job_id`` look like the work of a runner that died an hour ago."""
    old = jobs.utcnow() - timedelta(hours=1)
    session.execute(update(BatchJob).where(BatchJob.id == job_id).values(status="running", heartbeat_at=old,
                                                                         attempts=attempts))
    session.commit()


def test_an_orphaned_job_is_requeued_once_then_marked_failed_and_can_be_restarted(engine, session, engineer, config):
    job = jobs.create_job(session, engineer, "letdowns.csv", TEMPLATE, {})
    _orphan(session, job.id, attempts=1)
    found = jobs.recover_orphans(engine, config, start=False)
    assert found == {"requeued": [job.id], "failed": []}
    again = _load(engine, job.id)
    assert again.status is BatchStatus.QUEUED and "requeued: the worker stopped (attempt 2 of 2)" in again.message
    assert jobs.recover_orphans(engine, config, start=False) == {"requeued": [], "failed": []}   # fresh beat
    _orphan(session, job.id, attempts=2)
    assert jobs.recover_orphans(engine, config, start=False) == {"requeued": [], "failed": [job.id]}
    failed = _load(engine, job.id)
    assert failed.status is BatchStatus.FAILED and "started 2 times" in failed.message
    assert "Restart it from its page" in failed.message
    restarted = jobs.restart_job(session, engineer, job.id)
    assert restarted.status is BatchStatus.QUEUED and restarted.attempts == 0
    _run_thread(config, job.id)
    done = _load(engine, job.id)
    assert done.status is BatchStatus.DONE and done.attempts == 1


def test_a_requeued_job_is_started_again_and_finishes(engine, session, engineer, config):
    job = jobs.create_job(session, engineer, "letdowns.csv", TEMPLATE, {})
    _orphan(session, job.id, attempts=1)
    assert jobs.recover_orphans(engine, config)["requeued"] == [job.id]      # start=True: a thread takes it
    deadline = time.monotonic() + TIMEOUT_S
    while _load(engine, job.id).status is not BatchStatus.DONE and time.monotonic() < deadline:
        time.sleep(0.2)
    assert _load(engine, job.id).status is BatchStatus.DONE


def test_the_worker_beats_while_one_row_takes_long(engine, session, engineer, config, monkeypatch):
    beats = []
    real = screening_batch.screen_batch

    def slow(cases, *, compare_models=True, progress=None):
        first = _load(engine, job.id).heartbeat_at
        time.sleep(0.5)              # one long row: no progress written meanwhile
        beats.append((first, _load(engine, job.id).heartbeat_at))
        return real(cases, compare_models=compare_models, progress=progress)

    monkeypatch.setattr(jobs, "HEARTBEAT_S", 0.1)
    job = jobs.create_job(session, engineer, "letdowns.csv", TEMPLATE, {})
    _run_thread(config, job.id, screen=slow)
    (first, later), = beats
    assert later > first


# -- running on the RQ queue ----------------------------------------------------------------------------------
def test_the_rq_path_gives_the_same_results_as_the_thread_path(engine, session, engineer, config, redis_db, db_url):
    threaded = jobs.create_job(session, engineer, "letdowns.csv", TEMPLATE, {"limit": "-20 degC"})
    queued = jobs.create_job(session, engineer, "letdowns.csv", TEMPLATE, {"limit": "-20 degC"}, runner="rq")
    _run_thread(config, threaded.id)

    rq_job = jobs.start_job({"DATABASE_URL": db_url, "REDIS_URL": REDIS_URL}, queued.id)
    assert rq_job is not None and rq_job.origin == jobs.QUEUE_NAME
    assert rq_job.args == (db_url, queued.id) and rq_job.func_name == "jtcheck.batch.jobs.run_job"
    assert _load(engine, queued.id).status is BatchStatus.QUEUED         # waits for a worker
    assert jobs.work(REDIS_URL, burst=True, simple=True) is True
    rq_job.refresh()
    assert rq_job.get_status() == "finished" and rq_job.return_value() == "done"

    by_rq, by_thread = _load(engine, queued.id), _load(engine, threaded.id)
    assert by_rq.runner == "rq" and by_thread.runner == "thread"
    assert _comparable(by_rq) == _comparable(by_thread)
    assert by_rq.status is BatchStatus.DONE and len(by_rq.results) == len(TAGS)


def test_a_failing_rq_job_ends_failed_with_the_message(engine, session, engineer, redis_db, db_url, monkeypatch):
    def broken(cases, *, compare_models=True, progress=None):
        raise RuntimeError("no memory left for row 2")

    monkeypatch.setattr(screening_batch, "screen_batch", broken)
    job = jobs.create_job(session, engineer, "letdowns.csv", TEMPLATE, {}, runner="rq")
    rq_job = jobs.start_job({"DATABASE_URL": db_url, "REDIS_URL": REDIS_URL}, job.id)
    jobs.work(REDIS_URL, burst=True, simple=True)
    rq_job.refresh()
    assert rq_job.get_status() == "failed"                             # RQ lists it as failed too
    failed = _load(engine, job.id)
    assert failed.status is BatchStatus.FAILED and "no memory left for row 2" in failed.message


def test_an_rq_job_that_runs_out_of_time_ends_failed(engine, session, engineer, redis_db, db_url, monkeypatch):
    def endless(cases, *, compare_models=True, progress=None):
        time.sleep(30)

    monkeypatch.setattr(screening_batch, "screen_batch", endless)
    job = jobs.create_job(session, engineer, "letdowns.csv", TEMPLATE, {}, runner="rq")
    jobs.start_job({"DATABASE_URL": db_url, "REDIS_URL": REDIS_URL, "BATCH_JOB_TIMEOUT_S": 1}, job.id)
    started = time.monotonic()
    jobs.work(REDIS_URL, burst=True, simple=True)
    assert time.monotonic() - started < 20
    failed = _load(engine, job.id)
    assert failed.status is BatchStatus.FAILED and "JobTimeoutException" in failed.message


def test_an_unreachable_queue_fails_the_job_at_once(engine, session, engineer, db_url):
    job = jobs.create_job(session, engineer, "letdowns.csv", TEMPLATE, {}, runner="rq")
    assert jobs.start_job({"DATABASE_URL": db_url, "REDIS_URL": "redis://127.0.0.1:1/0"}, job.id) is None
    failed = _load(engine, job.id)
    assert failed.status is BatchStatus.FAILED and "could not be queued" in failed.message
