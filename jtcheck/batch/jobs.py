"""Batch screening jobs: an uploaded letdown list, checked and stored, then screened in the background.

>>> job = create_job(session, user, "letdowns.xlsx", data, {"keep_going": True})   # doctest: +SKIP
>>> start_job(app, job.id)                                                        # doctest: +SKIP

1. :func:`create_job` reads the file with :func:`jtcheck.batch.reader.read_cases` (fluid names are looked up
   in the case register's fluid library).  A file with bad rows is refused as a whole, nothing stored, and
   :class:`BatchFileError` carries every row error (row, column, value, reason) for the caller to show; with
   ``keep_going`` the good rows are kept and the bad ones go to a bad-rows CSV stored with the job.  The job
   (``jtcheck.records.models.BatchJob``) is stored with the uploaded bytes, status ``queued``.
2. :func:`start_job` hands the job to a worker.  Without a Redis URL the worker is a daemon thread of the
   calling process with its own database session.  With one (config ``REDIS_URL``, else the environment
   variable ``REDIS_URL``; config ``BATCH_RUNNER`` = ``"thread"`` or ``"rq"`` forces a runner) the function
   :func:`run_job` is put on the RQ queue :data:`QUEUE_NAME`, where an ``rq`` worker process takes it.
3. :func:`run_job` (module-level, so that an ``rq`` worker can import it) takes the job, reads the stored file
   again, applies the upload form's limits where the file's cells are empty, screens the rows with
   :func:`jtcheck.screening.batch.screen_batch` (each row by its case kind) writing the progress (rows done) about every
   :data:`PROGRESS_INTERVAL_S` seconds, and stores the results, the counts by outcome and the status
   ``done``.  Any exception ends the job ``failed`` with the message: a job never hangs.  A running job whose
   worker fell silent for longer than the stale limit (the process was stopped) is marked failed by
   :func:`expire_if_stale`, which the pages call.

The worker process
------------------
``jtcheck worker`` (:func:`work`) runs an RQ worker on the queue; it needs ``REDIS_URL`` (the same Redis as the
web service) and the jtcheck package, nothing else: the database URL travels with each queued job.  Plain
``rq worker --url "$REDIS_URL" jtcheck-batches`` does the same.  Run one or more next to the web service when
``REDIS_URL`` is set; without a worker, batches stay queued (the page says so).
"""
from __future__ import annotations

import logging
import math
import os
import threading
import time
import uuid
from collections.abc import Callable, Iterator, Mapping, Sequence
from contextlib import contextmanager
from dataclasses import asdict, dataclass, replace
from datetime import timedelta
from typing import Any

from sqlalchemy import Engine, select, update
from sqlalchemy.orm import Session

from jtcheck.errors import InputError, JtcheckError
from jtcheck.records.db import SQLITE_BEGIN_OPTION, make_engine, make_session_factory
from jtcheck.records.errors import PermissionDenied
from jtcheck.records.mdmt_curves import curve_table
from jtcheck.records.models import AuditEntry, BatchJob, BatchStatus, Role, User, utcnow
from jtcheck.screening.batch import BatchCase, BatchRowResult, BatchScreening
from jtcheck.screening.cold_metal import ColdLimits
from jtcheck.screening.findings import Outcome
from jtcheck.units import parse_temperature, parse_temperature_difference

logger = logging.getLogger(__name__)

#: The RQ queue of batch jobs.
QUEUE_NAME = "jtcheck-batches"
#: Shortest time between two progress writes [s].
PROGRESS_INTERVAL_S = 0.5
#: Longest time an RQ job may run before RQ stops it [s] (config ``BATCH_JOB_TIMEOUT_S``).
JOB_TIMEOUT_S = 6 * 3600
#: A running worker writes a sign of life this often, also while one row takes long [s].
HEARTBEAT_S = 15.0
#: A running job without a sign of life for this long is orphaned [s] (config ``BATCH_STALE_AFTER_S``):
#: requeued once, then marked failed (:func:`recover_orphans`).
STALE_AFTER_S = 120
#: How often a job is started before an orphaned one is marked failed instead of requeued.
MAX_ATTEMPTS = 2
#: Longest text of an upload-form limit field.
MAX_OPTION_TEXT = 40
#: Longest stored file name.
MAX_FILENAME = 255
#: Roles that may create batches.
CREATE_ROLES = frozenset({Role.ENGINEER, Role.ADMIN})
#: Longest stored failure message.
MAX_MESSAGE = 2000
#: Outcome words in the order pages list them (worst first).
OUTCOMES: tuple[str, ...] = (Outcome.FAIL.value, Outcome.MARGIN_ERODED.value, Outcome.NOT_SCREENED.value,
                             Outcome.PASS.value)

ScreenFn = Callable[..., BatchScreening]


# -- options -------------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class DefaultLimits:
    """The upload form's limits, applied where a row's cells are empty [K]."""

    limit_k: float | None = None
    mdmt_k: float | None = None
    margin_k: float | None = None


def _flag(value: Any, default: bool) -> bool:
    if value is None:
        return default
    if isinstance(value, bool):
        return value
    text = str(value).strip().lower()
    if text in ("1", "true", "yes", "on", "y"):
        return True
    if text in ("", "0", "false", "no", "off", "n"):
        return False
    raise InputError("options", f"expected yes or no, got {value!r}")


@dataclass(frozen=True)
class BatchOptions:
    """The settings of an upload: limits as typed (applied where the file's cells are empty), whether PR and SRK
    are compared, and whether bad rows are skipped (``keep_going``) instead of refusing the file."""

    limit: str = ""
    mdmt: str = ""
    margin: str = ""
    compare_models: bool = True
    keep_going: bool = False

    @classmethod
    def from_mapping(cls, data: Mapping[str, Any] | BatchOptions | None) -> BatchOptions:
        """Options from a dict (form fields or a stored ``BatchJob.options``); flags accept yes/no words."""
        if isinstance(data, BatchOptions):
            return data
        data = data or {}
        texts = {}
        for key in ("limit", "mdmt", "margin"):
            text = " ".join(str(data.get(key) or "").split())
            if len(text) > MAX_OPTION_TEXT:
                raise InputError(key, f"at most {MAX_OPTION_TEXT} characters, e.g. '-29 degC'")
            texts[key] = text
        return cls(**texts, compare_models=_flag(data.get("compare_models"), True),
                   keep_going=_flag(data.get("keep_going"), False))

    def to_dict(self) -> dict[str, Any]:
        return asdict(self)

    def default_limits(self) -> DefaultLimits:
        """The limits in K (None where a field is empty).

        Raises
        ------
        jtcheck.errors.InputError
            Naming the field (``limit``, ``mdmt``, ``margin``) for a text that is not a temperature (or, for the
            margin, a temperature difference) with a unit, or lies out of range.
        """
        limit = parse_temperature(self.limit, "limit") if self.limit else None
        mdmt = parse_temperature(self.mdmt, "mdmt") if self.mdmt else None
        margin = parse_temperature_difference(self.margin, "margin") if self.margin else None
        ColdLimits(mdmt_k=mdmt, user_limit_k=limit, margin_k=margin or 0.0)   # the ranges of the screening
        return DefaultLimits(limit_k=limit, mdmt_k=mdmt, margin_k=margin)


# -- errors --------------------------------------------------------------------------------------------------
class BatchFileError(JtcheckError):
    """An upload that cannot become a job: rows that could not be read (without keep-going), or no row at all.

    Attributes
    ----------
    filename : str
    errors : list of RowError
        Every problem found (``row``, ``column``, ``value``, ``reason``), in file order.
    warnings : list
        What reading the file warned about.
    message : str
        One sentence for the top of the page.
    """

    def __init__(self, filename: str, message: str, errors: Sequence[Any] = (), warnings: Sequence[Any] = ()):
        self.filename = filename
        self.message = message
        self.errors = list(errors)
        self.warnings = list(warnings)
        super().__init__(message)


# -- reading -------------------------------------------------------------------------------------------------
def fluid_library(session: Session) -> Mapping[str, Any]:
    """The case register's fluids by name (each :class:`jtcheck.Fluid` made when a row first names it)."""
    from jtcheck.batch.reader import register_fluid_library

    return register_fluid_library(session)


#: Upload-form field -> the layout's column key it fills where the file's cell is empty.
DEFAULT_COLUMNS = {"limit": "cold_limit", "mdmt": "mdmt", "margin": "margin"}


def _read(data: bytes, filename: str, library: Mapping[str, Any], opts: BatchOptions, mdmt_table: Any = None) -> Any:
    from jtcheck.batch.reader import read_cases

    defaults = {column: getattr(opts, field) for field, column in DEFAULT_COLUMNS.items() if getattr(opts, field)}
    try:
        return read_cases(data, filename=filename, fluid_library=library, keep_going=opts.keep_going,
                          defaults=defaults, mdmt_table=mdmt_table)
    except InputError as exc:
        field = {column: field for field, column in DEFAULT_COLUMNS.items()}.get(exc.field)
        if field is not None:       # a form default the reader refused: name the form's field
            raise InputError(field, exc.message) from None
        raise


def _error_dict(err: Any) -> dict[str, Any]:
    return {"row": getattr(err, "row", None), "column": str(getattr(err, "column", "") or ""),
            "value": str(getattr(err, "value", "") or ""), "reason": str(getattr(err, "reason", "") or err)}


def _warning_text(w: Any) -> str:
    if isinstance(w, str):
        return w
    row = getattr(w, "row", None)
    reason = getattr(w, "reason", None) or getattr(w, "message", None) or str(w)
    return f"row {row}: {reason}" if row is not None else str(reason)


def _jsonable(value: Any) -> Any:
    """Plain JSON values; NaN and infinity become None (the database refuses them)."""
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    if isinstance(value, dict):
        return {str(k): _jsonable(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_jsonable(v) for v in value]
    if value is None or isinstance(value, (str, int, bool)):
        return value
    try:
        return _jsonable(float(value))
    except (TypeError, ValueError):
        return str(value)


def _units(result: Any) -> dict[str, Any]:
    units = getattr(result, "units", None)
    return _jsonable(dict(units)) if isinstance(units, Mapping) else {}


# -- creating a job ------------------------------------------------------------------------------------------
def may_create(user: User | None) -> bool:
    """True if ``user`` may upload batches (engineers and admins)."""
    return isinstance(user, User) and user.active and Role(user.role) in CREATE_ROLES


@contextmanager
def _writing(session: Session) -> Iterator[None]:
    """A unit of work that holds the write lock from its start on SQLite (``BEGIN IMMEDIATE``), so that it queues
    behind a worker's progress write instead of failing at once; committed, or rolled back on any error."""
    try:
        if session.in_transaction() and not (session.new or session.dirty or session.deleted):
            session.commit()
        session.connection(execution_options={SQLITE_BEGIN_OPTION: "IMMEDIATE"})
        yield
        session.commit()
    except BaseException:
        session.rollback()
        raise


def runner_for(config: Mapping[str, Any]) -> str:
    """``"rq"`` when batches go to the RQ queue (a Redis URL is configured), else ``"thread"``."""
    return "rq" if redis_url_for(config) else "thread"


def redis_url_for(config: Mapping[str, Any]) -> str | None:
    """The Redis URL of the batch queue: config ``REDIS_URL``, else the environment variable; None for threads.

    Config ``BATCH_RUNNER`` = ``"thread"`` ignores Redis; ``"rq"`` requires it.
    """
    runner = str(config.get("BATCH_RUNNER") or "auto").strip().lower()
    if runner not in ("auto", "thread", "rq"):
        raise InputError("BATCH_RUNNER", f"use auto, thread or rq, not {runner!r}")
    if runner == "thread":
        return None
    url = str(config.get("REDIS_URL") or os.environ.get("REDIS_URL", "")).strip() or None
    if runner == "rq" and url is None:
        raise InputError("BATCH_RUNNER", "BATCH_RUNNER=rq needs REDIS_URL (the Redis of the batch queue)")
    return url


def create_job(session: Session, user: User, filename: str, data: bytes,
               options: Mapping[str, Any] | BatchOptions | None = None, *, runner: str = "thread") -> BatchJob:
    """Check an uploaded letdown list and store it as a queued job.

    Parameters
    ----------
    session : Session
    user : User
        The engineer or admin who uploads it.
    filename : str
        The uploaded file's name (its extension tells CSV from XLSX).
    data : bytes
        The file.
    options : dict or BatchOptions
        ``limit``, ``mdmt``, ``margin`` (texts with units, applied where the file's cells are empty),
        ``compare_models`` and ``keep_going``.
    runner : {"thread", "rq"}
        Who will run it (:func:`runner_for` the app's config).

    Returns
    -------
    BatchJob
        Stored with status ``queued``; ``total`` is the number of rows to screen.

    Raises
    ------
    PermissionDenied
        For a role other than engineer or admin.
    jtcheck.errors.InputError
        For a bad option (field ``limit``, ``mdmt``, ``margin``) or an empty file (field ``file``).
    BatchFileError
        When rows could not be read and ``keep_going`` is false, or no row could be read: nothing is stored.
    """
    if not may_create(user):
        role = Role(user.role).value if isinstance(user, User) else "anonymous"
        raise PermissionDenied("screen batches", f"the role {role!r} may not; allowed roles: engineer, admin")
    if runner not in ("thread", "rq"):
        raise InputError("runner", f"use thread or rq, not {runner!r}")
    opts = BatchOptions.from_mapping(options)
    opts.default_limits()
    name = (os.path.basename(str(filename or "").replace("\\", "/")).strip() or "upload")[:MAX_FILENAME]
    if not data:
        raise InputError("file", f"{name} is empty: choose a CSV or XLSX letdown list")
    library = fluid_library(session)
    try:
        result = _read(data, name, library, opts, curve_table(session))
    except InputError as exc:      # the file as a whole: not CSV/XLSX, no header, too many rows ...
        if exc.field in DEFAULT_COLUMNS:
            raise
        raise BatchFileError(name, f"{name}: {exc.message}; nothing was stored") from exc
    errors, warnings = list(result.errors), list(getattr(result, "warnings", []) or [])
    if errors and not opts.keep_going:
        raise BatchFileError(name, f"{name}: {len(errors)} problem{'s' if len(errors) != 1 else ''} found; "
                                   "nothing was stored. Correct the file (or tick 'keep going' to screen the good "
                                   "rows and download the bad ones)", errors, warnings)
    if not result.cases:
        raise BatchFileError(name, f"{name} holds no row that could be read; nothing was stored", errors, warnings)
    bad = None
    if errors:
        from jtcheck.batch.reader import bad_rows_file

        bad = bad_rows_file(result)
    now = utcnow()
    job = BatchJob(created_by=user, created_at=now, heartbeat_at=now, filename=name, status=BatchStatus.QUEUED,
                   total=len(result.cases), done=0, options=opts.to_dict(), input_file=bytes(data), bad_rows=bad,
                   results=None, counts=None, message="", runner=runner,
                   reading={"errors": [_error_dict(e) for e in errors],
                            "warnings": [_warning_text(w) for w in warnings], "units": _units(result)})
    with _writing(session):
        session.add(job)
        session.flush()
        session.add(AuditEntry(user=user, entity="batch_job", entity_id=job.id, action="create", field="filename",
                               new_value=name))
    return job


# -- running a job ------------------------------------------------------------------------------------------
def _case_inputs(case: BatchCase | None, source: Any = None) -> dict[str, Any]:
    if case is None:
        return {}
    lim = case.limits
    return _jsonable({
        "fluid": getattr(source, "fluid_name", ""), "p_atm_pa": getattr(source, "p_atm_pa", None),
        "p_in_pa": case.p_in_pa, "t_in_k": case.t_in_k, "p_out_pa": case.p_out_pa, "t_in_min_k": case.t_in_min_k,
        "p_in_max_pa": case.p_in_max_pa, "mdmt_k": lim.mdmt_k, "user_limit_k": lim.user_limit_k,
        "limit_k": lim.governing_k, "margin_k": lim.margin_k, "water_saturated": bool(case.water_saturated),
        "eos": getattr(getattr(case.fluid, "eos", None), "value", str(getattr(case.fluid, "eos", ""))),
    })


def row_dict(result: BatchRowResult, case: BatchCase | None, source: Any = None) -> dict[str, Any]:
    """One stored result row: the :class:`BatchRowResult` (SI) plus the row's service, kind and inputs (SI, with
    the fluid's name as the file gave it: ``source`` is the reader's ``CaseSource``)."""
    findings = [_jsonable(dict(f)) for f in result.findings]
    return {
        "row": result.row, "tag": result.tag, "service": case.service if case is not None else "",
        "kind": case.kind if case is not None else "", "outcome": result.outcome,
        "t_screen_k": _jsonable(result.t_screen_k), "coldest_condition": result.coldest_condition,
        "governing_model": result.governing_model, "t_out_by_model": _jsonable(dict(result.t_out_by_model)),
        "phase": result.phase, "vapor_fraction": _jsonable(result.vapor_fraction),
        "margin_to_limit_k": _jsonable(result.margin_to_limit_k), "findings": findings, "path": result.path,
        "converged": bool(result.converged), "message": result.message,
        "hazard": any(f.get("severity") == "hazard" for f in findings),
        "inputs": _case_inputs(case, source),
    }


def _counts(screening: BatchScreening, rows: list[dict[str, Any]], skipped: int) -> dict[str, Any]:
    by_outcome = {o: 0 for o in OUTCOMES}
    for r in rows:
        by_outcome[r["outcome"]] = by_outcome.get(r["outcome"], 0) + 1
    return _jsonable({"rows": len(rows), "by_outcome": by_outcome, "n_scalar": screening.n_scalar,
                      "seconds": screening.seconds, "skipped": skipped,
                      "hazard_rows": sum(1 for r in rows if r["hazard"]), "notes": list(screening.notes)})


def _failure_text(exc: BaseException) -> str:
    if isinstance(exc, InputError):
        text = f"{exc.field}: {exc.message}"
    elif isinstance(exc, JtcheckError):
        text = str(exc)
    else:
        text = f"{type(exc).__name__}: {exc}"
    return ("the screening stopped: " + text)[:MAX_MESSAGE]


class _Worker:
    """The run of one job in one process: its own session, progress writes, the final store."""

    def __init__(self, engine: Engine, job_id: int, screen: ScreenFn | None = None,
                 config: Mapping[str, Any] | None = None):
        self.engine = engine
        self.config = config
        self.sessions = make_session_factory(engine)
        self.job_id = job_id
        self.screen = screen
        self._last = 0.0

    def _write(self, values: dict[str, Any], *, only_if: tuple[BatchStatus, ...] = ()) -> bool:
        with self.sessions() as session, _writing(session):
            stmt = update(BatchJob).where(BatchJob.id == self.job_id)
            if only_if:
                stmt = stmt.where(BatchJob.status.in_([s.value for s in only_if]))
            return session.execute(stmt.values(**values).execution_options(synchronize_session=False)).rowcount == 1

    def claim(self) -> bool:
        now = utcnow()
        return self._write({"status": BatchStatus.RUNNING, "started_at": now, "heartbeat_at": now, "done": 0,
                            "message": "", "attempts": BatchJob.attempts + 1}, only_if=(BatchStatus.QUEUED,))

    def beat(self) -> None:
        """A sign of life (also while one row takes long), so that the job is never taken for orphaned."""
        self._write({"heartbeat_at": utcnow()}, only_if=(BatchStatus.RUNNING,))

    @contextmanager
    def heartbeat(self, interval_s: float | None = None) -> Iterator[None]:
        """Beat every ``interval_s`` (default :data:`HEARTBEAT_S`) in a thread while the block runs."""
        stop = threading.Event()
        interval = HEARTBEAT_S if interval_s is None else interval_s

        def loop() -> None:
            beats = 0
            while not stop.wait(interval):
                beats += 1
                try:
                    self.beat()
                    if self.config is not None and beats % 4 == 0:    # about every minute: other runners' orphans
                        recover_orphans(self.engine, self.config)
                except Exception:       # the database is away for a moment: the next beat tries again
                    logger.warning("batch %s: heartbeat not written", self.job_id, exc_info=True)

        thread = threading.Thread(target=loop, name=f"jtcheck-batch-{self.job_id}-heartbeat", daemon=True)
        thread.start()
        try:
            yield
        finally:
            stop.set()
            thread.join(5.0)

    def progress(self, done: int, total: int) -> None:
        now = time.monotonic()
        if now - self._last < PROGRESS_INTERVAL_S and done < total:
            return
        self._last = now
        self._write({"done": max(0, int(done)), "total": max(0, int(total)), "heartbeat_at": utcnow()},
                    only_if=(BatchStatus.RUNNING,))

    def fail(self, message: str) -> None:
        self._write({"status": BatchStatus.FAILED, "message": message[:MAX_MESSAGE], "finished_at": utcnow()},
                    only_if=(BatchStatus.QUEUED, BatchStatus.RUNNING))

    def run(self) -> str:
        with self.sessions() as session:
            job = session.get(BatchJob, self.job_id)
            if job is None:
                logger.warning("batch %s: no such job", self.job_id)
                return "missing"
            if BatchStatus(job.status) is not BatchStatus.QUEUED:
                return BatchStatus(job.status).value
        if not self.claim():
            return "taken"          # another worker was first
        with self.heartbeat():
            return self._screen()

    def _screen(self) -> str:
        with self.sessions() as session:
            job = session.get(BatchJob, self.job_id)
            assert job is not None
            data, filename = job.input_file, job.filename
            opts = BatchOptions.from_mapping(job.options)
            library = fluid_library(session)
            table = curve_table(session)
        result = _read(data, filename, library, opts, table)
        if result.errors and not opts.keep_going:
            raise BatchFileError(filename, f"{filename} no longer reads cleanly ({len(result.errors)} problems; "
                                           "was a fluid of the register renamed?)", result.errors)
        cases = list(result.cases)
        self._write({"total": len(cases), "heartbeat_at": utcnow()}, only_if=(BatchStatus.RUNNING,))
        screen = self.screen
        if screen is None:
            from jtcheck.screening import batch as screening_batch

            screen = screening_batch.screen_batch
        screening = screen(cases, compare_models=opts.compare_models, progress=self.progress)
        by_row = {c.row: c for c in cases}
        rows = [row_dict(r, by_row.get(r.row), result.sources.get(r.row)) for r in screening.rows]
        counts = _counts(screening, rows, len(result.errors))
        stored = self._write({"status": BatchStatus.DONE, "results": rows, "counts": counts, "done": len(cases),
                              "total": len(cases), "finished_at": utcnow(), "heartbeat_at": utcnow()},
                             only_if=(BatchStatus.RUNNING,))
        return BatchStatus.DONE.value if stored else "expired"


def _run(engine: Engine, job_id: int, *, reraise: bool, screen: ScreenFn | None = None,
         config: Mapping[str, Any] | None = None) -> str:
    worker = _Worker(engine, job_id, screen, config)
    try:
        return worker.run()
    except Exception as exc:
        logger.exception("batch %s failed", job_id)
        try:
            worker.fail(_failure_text(exc))
        except Exception:       # the database itself is gone: the stale rule will end the job
            logger.exception("batch %s: could not store the failure", job_id)
        if reraise:
            raise
        return BatchStatus.FAILED.value


def run_job(database_url: str, job_id: int) -> str:
    """Screen job ``job_id`` of the database at ``database_url`` (what an RQ worker runs).

    Returns the final status (``"done"``, ``"failed"``; ``"missing"`` or the current status when there was
    nothing to do: a job runs once).  A failure is stored with the job and raised again, so that RQ lists it too.
    """
    engine = make_engine(database_url)
    config = {"DATABASE_URL": database_url, "REDIS_URL": os.environ.get("REDIS_URL", ""), "BATCH_RUNNER": "rq"}
    try:
        return _run(engine, int(job_id), reraise=True, config=config)
    finally:
        engine.dispose()


def rq_failure_callback(job: Any, connection: Any, exc_type: Any = None, exc_value: Any = None,
                        tb: Any = None) -> None:
    """RQ's ``on_failure`` of a batch job: store the failure if :func:`run_job` could not (timeout, killed)."""
    database_url, job_id = job.args[0], int(job.args[1])
    reason = f"{getattr(exc_type, '__name__', 'error')}: {exc_value}" if exc_value is not None else "stopped"
    engine = make_engine(database_url)
    try:
        _Worker(engine, job_id).fail(f"the worker stopped the job: {reason}")
    finally:
        engine.dispose()


# -- starting a job -----------------------------------------------------------------------------------------
THREADS_KEY = "jtcheck_batch_threads"


def _config_of(app_or_config: Any) -> Mapping[str, Any]:
    return app_or_config.config if hasattr(app_or_config, "config") else app_or_config


def start_job(app_or_config: Any, job_id: int, *, screen: ScreenFn | None = None) -> Any:
    """Hand job ``job_id`` to a worker.

    Parameters
    ----------
    app_or_config : Flask or dict
        The web app (its engine is shared with the worker thread; the thread is kept in
        ``app.extensions["jtcheck_batch_threads"]``) or a config dict with ``DATABASE_URL``.
    job_id : int
    screen : callable, optional
        Instead of :func:`jtcheck.screening.batch.screen_batch` (threads only; tests).

    Returns
    -------
    threading.Thread or rq.job.Job
        The started thread, or the queued RQ job.  If the queue cannot be reached the job is stored
        ``failed`` with the reason, and None is returned.
    """
    config = _config_of(app_or_config)
    redis_url = redis_url_for(config)
    database_url = str(config.get("DATABASE_URL") or "")
    if redis_url:
        return _enqueue(redis_url, database_url, job_id, config)
    app_engine = None
    if hasattr(app_or_config, "extensions") and "jtcheck_db" in app_or_config.extensions:
        app_engine = app_or_config.extensions["jtcheck_db"].engine

    def target() -> None:
        engine = app_engine or make_engine(database_url)
        try:
            _run(engine, job_id, reraise=False, screen=screen, config=dict(config))
        finally:
            if app_engine is None:
                engine.dispose()

    thread = threading.Thread(target=target, name=f"jtcheck-batch-{job_id}", daemon=True)
    if hasattr(app_or_config, "extensions"):
        threads: dict[int, threading.Thread] = app_or_config.extensions.setdefault(THREADS_KEY, {})
        for key in [k for k, t in threads.items() if not t.is_alive()]:
            threads.pop(key, None)
        threads[job_id] = thread
    thread.start()
    return thread


def join_threads(app: Any, timeout: float = 60.0) -> bool:
    """Wait for the app's batch threads to end (tests, shutdown); True if none is left running."""
    deadline = time.monotonic() + timeout
    threads: dict[int, threading.Thread] = app.extensions.get(THREADS_KEY, {})
    for thread in list(threads.values()):
        thread.join(max(0.0, deadline - time.monotonic()))
    return not any(t.is_alive() for t in threads.values())


def _redis(redis_url: str):
    from redis import Redis

    return Redis.from_url(redis_url)


def queue(redis_url: str):
    """The RQ queue of batch jobs at ``redis_url``."""
    from rq import Queue

    return Queue(QUEUE_NAME, connection=_redis(redis_url))


def _enqueue(redis_url: str, database_url: str, job_id: int, config: Mapping[str, Any]) -> Any:
    from rq import Callback

    timeout = int(config.get("BATCH_JOB_TIMEOUT_S") or JOB_TIMEOUT_S)
    try:
        return queue(redis_url).enqueue_call(
            run_job, args=(database_url, job_id), timeout=timeout, result_ttl=24 * 3600, failure_ttl=7 * 24 * 3600,
            job_id=f"jtcheck-batch-{job_id}-{uuid.uuid4().hex[:10]}", description=f"jtcheck batch {job_id}",
            on_failure=Callback(rq_failure_callback))
    except Exception as exc:       # Redis down or refusing: say so on the job instead of leaving it queued
        logger.exception("batch %s could not be queued", job_id)
        engine = make_engine(database_url)
        try:
            _Worker(engine, job_id).fail(f"the batch could not be queued ({type(exc).__name__}: {exc}); is Redis "
                                         "running?")
        finally:
            engine.dispose()
        return None


def work(redis_url: str, *, burst: bool = False, simple: bool = False) -> bool:
    """Run an RQ worker on the batch queue (``jtcheck worker``).

    Parameters
    ----------
    redis_url : str
        The Redis the web service queues batches on.
    burst : bool
        Stop when the queue is empty instead of waiting for more.
    simple : bool
        Run each job in this process (``rq.SimpleWorker``) instead of a forked work horse.

    Returns
    -------
    bool
        True if any job was processed.
    """
    from rq import SimpleWorker, Worker

    connection = _redis(redis_url)
    cls = SimpleWorker if simple else Worker
    worker = cls([QUEUE_NAME], connection=connection)
    return worker.work(burst=burst)


# -- reading a job's state ----------------------------------------------------------------------------------
def _orphan_message(attempts: int, stale_after_s: float) -> str:
    return (f"the worker stopped without finishing: no sign of life for {stale_after_s:.0f} s (the service or the "
            f"worker was probably restarted); the job was started {attempts} time{'s' if attempts != 1 else ''}. "
            "Restart it from its page, or upload the file again")


def recover_orphans(engine: Engine, config: Mapping[str, Any] | None = None, *,
                    stale_after_s: float | None = None, start: bool = True) -> dict[str, list[int]]:
    """Jobs of a dead runner: running (or queued for a thread) without a sign of life for ``stale_after_s``.

    Each is requeued and started again (``start``) if it was started fewer than :data:`MAX_ATTEMPTS` times,
    else marked failed with the reason (its page offers a restart).  Called when the web service starts and by
    every running worker's heartbeat, so that progress never freezes silently.  Safe with several processes:
    each job changes hands in one conditional UPDATE.

    Returns ``{"requeued": [ids], "failed": [ids]}``.
    """
    config = dict(config or {})
    stale = float(stale_after_s if stale_after_s is not None
                  else config.get("BATCH_STALE_AFTER_S") or STALE_AFTER_S)
    cutoff = utcnow() - timedelta(seconds=stale)
    out: dict[str, list[int]] = {"requeued": [], "failed": []}
    sessions = make_session_factory(engine)
    with sessions() as session:
        silent = (BatchJob.heartbeat_at.is_(None) | (BatchJob.heartbeat_at < cutoff))
        candidates = session.execute(
            select(BatchJob.id, BatchJob.status, BatchJob.attempts, BatchJob.heartbeat_at, BatchJob.runner)
            .where(silent, (BatchJob.status == BatchStatus.RUNNING.value)
                   | ((BatchJob.status == BatchStatus.QUEUED.value) & (BatchJob.runner == "thread")))).all()
        for job_id, status, attempts, beat, _runner in candidates:
            same = (BatchJob.heartbeat_at.is_(None) if beat is None else BatchJob.heartbeat_at == beat)
            where = (BatchJob.id == job_id, BatchJob.status == str(status), same)
            with _writing(session):
                if int(attempts or 0) < MAX_ATTEMPTS:
                    n = session.execute(update(BatchJob).where(*where).values(
                        status=BatchStatus.QUEUED, heartbeat_at=utcnow(),
                        message=f"requeued: the worker stopped (attempt {int(attempts or 0) + 1} of {MAX_ATTEMPTS})")
                        .execution_options(synchronize_session=False)).rowcount
                    kind = "requeued"
                else:
                    n = session.execute(update(BatchJob).where(*where).values(
                        status=BatchStatus.FAILED, finished_at=utcnow(),
                        message=_orphan_message(int(attempts or 0), stale))
                        .execution_options(synchronize_session=False)).rowcount
                    kind = "failed"
            if n:
                out[kind].append(int(job_id))
                logger.warning("batch %s: orphaned job %s", job_id, kind)
    if start:
        for job_id in out["requeued"]:
            start_job({**config, "DATABASE_URL": config.get("DATABASE_URL") or str(engine.url.render_as_string(
                hide_password=False))}, job_id)
    return out


def restart_job(session: Session, user: User, job_id: int) -> BatchJob:
    """Queue a failed job again (its creator, or an admin); the caller starts it with :func:`start_job`."""
    job = session.get(BatchJob, job_id, populate_existing=True)
    if job is None:
        raise InputError("job", f"there is no batch {job_id}")
    if Role(user.role) is not Role.ADMIN and job.created_by_id != user.id:
        raise PermissionDenied("restart batches", "only the one who uploaded it, or an admin, may restart it")
    if BatchStatus(job.status) is not BatchStatus.FAILED:
        raise InputError("job", f"batch {job.id} is {BatchStatus(job.status).value}; only a failed batch is restarted")
    with _writing(session):
        n = session.execute(update(BatchJob).where(BatchJob.id == job.id, BatchJob.status == BatchStatus.FAILED.value)
                            .values(status=BatchStatus.QUEUED, attempts=0, done=0, heartbeat_at=utcnow(),
                                    finished_at=None, message="restarted")
                            .execution_options(synchronize_session=False)).rowcount
        if n:
            session.add(AuditEntry(user=user, entity="batch_job", entity_id=job.id, action="restart"))
    session.refresh(job)
    return job


def expire_if_stale(session: Session, job: BatchJob, stale_after_s: float = STALE_AFTER_S) -> bool:
    """Mark ``job`` failed if its worker fell silent: running without a sign of life for ``stale_after_s``, or
    queued that long for a thread of a process that no longer runs it.  True if the job was marked."""
    status = BatchStatus(job.status)
    if status.finished:
        return False
    last = job.heartbeat_at or job.started_at or job.created_at
    if status is BatchStatus.QUEUED and job.runner != "thread":
        return False      # waiting for an rq worker: not stale, only waiting
    if last is None or utcnow() - last < timedelta(seconds=stale_after_s):
        return False
    message = _orphan_message(int(job.attempts or 0), stale_after_s)
    with _writing(session):
        same_beat = (BatchJob.heartbeat_at.is_(None) if job.heartbeat_at is None
                     else BatchJob.heartbeat_at == job.heartbeat_at)
        n = session.execute(update(BatchJob).where(BatchJob.id == job.id, BatchJob.status == status.value, same_beat)
                            .values(status=BatchStatus.FAILED, message=message, finished_at=utcnow())
                            .execution_options(synchronize_session=False)).rowcount
    if n:
        session.refresh(job)
    return bool(n)


def stored_screening(session: Session, job: BatchJob) -> tuple[BatchScreening, list[BatchCase], Any]:
    """A done job's results as the :class:`BatchScreening` they came from, with the cases read again from the
    stored file (for :func:`jtcheck.batch.writer.write_results`) and the reader's result.

    Only rows present in both are returned, in file order (the same rows, unless a fluid of the register was
    renamed or removed since the job ran).

    Raises
    ------
    jtcheck.errors.InputError
        ``job`` when the job is not done.
    """
    if BatchStatus(job.status) is not BatchStatus.DONE or job.results is None:
        raise InputError("job", f"batch {job.id} is {BatchStatus(job.status).value}: it has no results yet")
    opts = BatchOptions.from_mapping(job.options)
    data = job.input_file
    read = _read(data, job.filename, fluid_library(session), replace(opts, keep_going=True), curve_table(session))
    cases = {c.row: c for c in read.cases}
    kept = [r for r in job.results if r.get("row") in cases]
    rows = tuple(BatchRowResult(
        row=int(r["row"]), tag=str(r.get("tag") or ""), outcome=str(r.get("outcome") or Outcome.NOT_SCREENED.value),
        t_screen_k=r.get("t_screen_k"), coldest_condition=str(r.get("coldest_condition") or ""),
        governing_model=str(r.get("governing_model") or ""), t_out_by_model=dict(r.get("t_out_by_model") or {}),
        phase=str(r.get("phase") or ""), vapor_fraction=r.get("vapor_fraction"),
        margin_to_limit_k=r.get("margin_to_limit_k"), findings=tuple(r.get("findings") or ()),
        path=str(r.get("path") or ""), converged=bool(r.get("converged")), message=str(r.get("message") or ""))
        for r in kept)
    counts = dict((job.counts or {}).get("by_outcome") or {})
    screening = BatchScreening(rows=rows, counts=counts, n_scalar=int((job.counts or {}).get("n_scalar") or 0),
                               seconds=float((job.counts or {}).get("seconds") or 0.0),
                               notes=tuple((job.counts or {}).get("notes") or ()))
    return screening, [cases[r.row] for r in rows], read
