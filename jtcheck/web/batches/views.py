"""Pages of batch screening: upload a letdown list, follow the job, see and download its results.

Routes (blueprint ``batches``; every one needs a signed-in user; engineers and admins upload, everyone views):

=======================================  ===================================================================
``GET /batches``                         the batches, newest first (status, progress, counts), and the upload
                                         form for engineers and admins
``POST /batches``                        upload (fields ``file``; ``limit``, ``mdmt``, ``margin`` applied where
                                         the file's cells are empty; ``compare_models``, ``keep_going``): a
                                         file with bad rows shows the form again with every row error (row,
                                         column, value, reason) and stores nothing (422); else the job is
                                         stored and started, and the answer redirects to its page
``GET /batches/<id>``                    progress while queued or running (the page polls the status; without
                                         JavaScript it reloads itself), then the counts, the ten coldest rows
                                         and the results table, filtered by the query parameters ``outcome``,
                                         ``q`` (text in tag or service), ``hazards=1`` and sorted by ``sort``
                                         (``row``, ``coldest``, ``warmest``), ``page`` (of :data:`PAGE_SIZE`)
``GET /batches/<id>/status``             JSON: ``status``, ``done``, ``total``, ``fraction``, ``finished``,
                                         ``message``, ``text``
``GET /batches/<id>/results.csv|.xlsx``  the results file (:func:`jtcheck.batch.writer.write_results`)
``GET /batches/<id>/bad-rows.csv``       the rows skipped with keep-going, with a ``problems`` column
``GET /batches/<id>/summary.pdf``        the one-page summary (:mod:`jtcheck.reports.batch_summary`)
``GET /batches/template.csv|.xlsx``      an empty letdown list with the layout's headers and example rows
``GET /batches/progress.js``             the few lines of script that poll the status (served here: the pages'
                                         Content-Security-Policy allows scripts from this site only)
=======================================  ===================================================================

Uploads may be up to ``BATCH_UPLOAD_MAX_BYTES`` (default 50 MB, the layout's limit); the request size limit is
raised for ``POST /batches`` only, before the CSRF check reads the form (:func:`init_app`, called before
``CSRFProtect``), as for the record verify page.  The job runs in a thread of this process, or on the RQ queue
when Redis is configured (:mod:`jtcheck.batch.jobs`).
"""
from __future__ import annotations

import math
from typing import Any

from flask import (
    Blueprint,
    Flask,
    Response,
    current_app,
    flash,
    jsonify,
    redirect,
    render_template,
    request,
    url_for,
)
from sqlalchemy import select
from sqlalchemy.orm import defer, joinedload

from jtcheck.batch import jobs
from jtcheck.batch.layout import MAX_BYTES
from jtcheck.errors import InputError
from jtcheck.records.errors import NotFound, PermissionDenied
from jtcheck.records.models import BatchJob, BatchStatus, Role
from jtcheck.reports.numbers import UNIT_LABELS, finite_or_none, temperature_text
from jtcheck.units import TextUnits, difference_label, temperature_difference_from_k
from jtcheck.web.database import db_session
from jtcheck.web.downloads import attachment
from jtcheck.web.errors import ApiError
from jtcheck.web.forms import FormState
from jtcheck.web.security import current_user, require_viewer

bp = Blueprint("batches", __name__)

#: Largest upload (config ``BATCH_UPLOAD_MAX_BYTES`` overrides it).
UPLOAD_MAX_BYTES = MAX_BYTES
#: Room for the form fields around the file in the request [bytes].
FORM_OVERHEAD_BYTES = 64 * 1024
#: Result rows per page of the results table.
PAGE_SIZE = 200
#: Batches on the list page.
LIST_SIZE = 100
#: Most row errors listed on the upload page (the count of all is shown; keep-going gives the file of every bad row).
MAX_ERRORS_SHOWN = 5000
#: Seconds a batch may wait for an rq worker before the page asks whether one runs.
WORKER_HINT_AFTER_S = 15
FORM_FIELDS = ("limit", "mdmt", "margin", "compare_models", "keep_going")
FIELD_LABELS = {"file": "Letdown list", "limit": "Cold limit", "mdmt": "MDMT", "margin": "Margin"}
SORTS = {"row": "file order", "coldest": "coldest first", "warmest": "warmest first"}

PROGRESS_JS = """\
// jtcheck: follow a batch job's progress (polls its status once a second, reloads the page when it is finished)
(function () {
  "use strict";
  var box = document.querySelector("[data-status-url]");
  if (!box || !window.fetch) { return; }
  var url = box.getAttribute("data-status-url");
  var bar = box.querySelector("progress");
  var text = box.querySelector("[data-progress-text]");
  function tick() {
    fetch(url, {headers: {"Accept": "application/json"}, credentials: "same-origin", cache: "no-store"})
      .then(function (r) { return r.ok ? r.json() : null; })
      .then(function (s) {
        if (!s) { window.setTimeout(tick, 3000); return; }
        if (bar && s.total > 0) { bar.max = s.total; bar.value = s.done; }
        if (text) { text.textContent = s.text; }
        if (s.finished) { window.location.reload(); } else { window.setTimeout(tick, 1000); }
      })
      .catch(function () { window.setTimeout(tick, 3000); });
  }
  window.setTimeout(tick, 1000);
}());
"""


# -- set-up ------------------------------------------------------------------------------------------------
def upload_limit() -> int:
    return int(current_app.config.get("BATCH_UPLOAD_MAX_BYTES") or UPLOAD_MAX_BYTES)


def _upload_request_limit() -> None:
    if request.endpoint == "batches.create":
        request.max_content_length = upload_limit() + FORM_OVERHEAD_BYTES


def init_app(app: Flask) -> None:
    """Raise the request size limit for the upload.  Call before ``CSRFProtect(app)``: its check reads the form,
    which is parsed with the limit in force at that moment."""
    app.before_request(_upload_request_limit)


def recover_at_start(app: Flask) -> None:
    """Jobs a dead runner left behind are requeued (or marked failed) when the service starts."""
    try:
        found = jobs.recover_orphans(app.extensions["jtcheck_db"].engine, app.config)
    except Exception:     # the schema is not there yet (migrated by someone else): the pages' check will do it
        app.logger.warning("batch jobs not checked for orphans at start", exc_info=True)
        return
    if found["requeued"] or found["failed"]:
        app.logger.warning("orphaned batch jobs at start: requeued %s, failed %s", found["requeued"], found["failed"])


# -- helpers -----------------------------------------------------------------------------------------------
def _may_create() -> bool:
    return jobs.may_create(current_user())


def _require_creator(action: str):
    user = current_user()
    if not jobs.may_create(user):
        role = Role(user.role).value if user is not None else "anonymous"
        raise PermissionDenied(action, f"the role {role!r} may not; allowed roles: engineer, admin")
    return user


def _job(job_id: int, *, light: bool = False) -> BatchJob:
    """The job (404 if there is none); ``light`` leaves the file and the results unloaded."""
    session = db_session()
    stmt = select(BatchJob).where(BatchJob.id == job_id).options(joinedload(BatchJob.created_by),
                                                                 defer(BatchJob.input_file), defer(BatchJob.bad_rows))
    if light:
        stmt = stmt.options(defer(BatchJob.results), defer(BatchJob.reading))
    job = session.scalars(stmt).first()
    if job is None:
        raise NotFound("batch", job_id)
    jobs.expire_if_stale(session, job, float(current_app.config.get("BATCH_STALE_AFTER_S") or jobs.STALE_AFTER_S))
    return job


def _stem(job: BatchJob) -> str:
    base = job.filename.rsplit(".", 1)[0]
    safe = "".join(ch if ch.isalnum() or ch in "-_" else "-" for ch in base).strip("-")[:60]
    return f"batch{job.id}-{safe or 'letdowns'}"


class _Display:
    """Temperatures of a job's results in the unit of its file's inlet temperature column."""

    def __init__(self, job: BatchJob):
        units = (job.reading or {}).get("units") or {}
        self.temperature = str(units.get("inlet_temperature") or "degC")
        self.difference = "degF" if self.temperature.lower() == "degf" else "K"
        self.t_label = UNIT_LABELS.get(self.temperature.lower(), self.temperature)
        self.dt_label = difference_label(self.temperature)
        self.words = TextUnits.typed({str(k): str(v) for k, v in units.items() if v})

    def t(self, k: Any) -> str:
        return temperature_text(k, self.temperature)

    def dt(self, dk: Any) -> str:
        v = finite_or_none(dk)
        if v is None:
            return "–"
        text = f"{temperature_difference_from_k(v, self.difference):+.1f}"
        return f"{'0.0' if text in ('-0.0', '+0.0') else text} {self.dt_label}"


def _row_view(r: dict[str, Any], show: _Display) -> dict[str, Any]:
    inputs = r.get("inputs") or {}
    hazards = [f for f in r.get("findings") or [] if f.get("severity") == "hazard"]
    return {"row": r.get("row"), "tag": r.get("tag") or "", "service": r.get("service") or "",
            "fluid": inputs.get("fluid") or "", "outcome": r.get("outcome") or "not screened",
            "t_screen": show.t(r.get("t_screen_k")), "limit": show.t(inputs.get("limit_k")),
            "to_limit": show.dt(r.get("margin_to_limit_k")), "margin": show.dt(inputs.get("margin_k")),
            "condition": r.get("coldest_condition") or "–", "model": r.get("governing_model") or "–",
            "phase": r.get("phase") or "–", "path": r.get("path") or "–", "hazard": bool(r.get("hazard")),
            "hazards": [show.words.text(f.get("message", "")) for f in hazards],
            "message": show.words.text(r.get("message") or ""),
            "hazard_topics": list(dict.fromkeys(str(f.get("topic") or "hazard") for f in hazards)),
            "cold": (finite_or_none(r.get("margin_to_limit_k")) or 0.0) < 0}


def _status_text(job: BatchJob) -> str:
    status = BatchStatus(job.status)
    if status is BatchStatus.QUEUED:
        return f"Queued: {job.total} row{'s' if job.total != 1 else ''} waiting for a worker."
    if status is BatchStatus.RUNNING:
        return f"Screening: {job.done} of {job.total} rows done ({100 * job.fraction:.0f} %)."
    if status is BatchStatus.DONE:
        return f"Done: {job.total} rows screened."
    return f"Failed: {job.message}"


def _filters() -> dict[str, Any]:
    outcome = request.args.get("outcome", "")
    sort = request.args.get("sort", "row")
    try:
        page = max(1, int(request.args.get("page", "1")))
    except ValueError:
        page = 1
    return {"outcome": outcome if outcome in jobs.OUTCOMES else "", "q": request.args.get("q", "").strip()[:100],
            "hazards": request.args.get("hazards", "") in ("1", "on", "yes", "true"),
            "sort": sort if sort in SORTS else "row", "page": page}


def _filtered(rows: list[dict[str, Any]], f: dict[str, Any]) -> list[dict[str, Any]]:
    out = rows
    if f["outcome"]:
        out = [r for r in out if (r.get("outcome") or "not screened") == f["outcome"]]
    if f["q"]:
        needle = f["q"].casefold()
        out = [r for r in out if needle in str(r.get("tag") or "").casefold()
               or needle in str(r.get("service") or "").casefold()]
    if f["hazards"]:
        out = [r for r in out if r.get("hazard")]
    if f["sort"] in ("coldest", "warmest"):
        with_t = [r for r in out if finite_or_none(r.get("t_screen_k")) is not None]
        without = [r for r in out if finite_or_none(r.get("t_screen_k")) is None]
        with_t.sort(key=lambda r: float(r["t_screen_k"]), reverse=f["sort"] == "warmest")
        out = with_t + without
    return out


def _form_options(form: FormState) -> dict[str, Any]:
    return {"limit": form.get("limit"), "mdmt": form.get("mdmt"), "margin": form.get("margin"),
            "compare_models": form.get("compare_models") in ("1", "on", "yes"),
            "keep_going": form.get("keep_going") in ("1", "on", "yes")}


def _list_page(form: FormState | None = None, file_error: jobs.BatchFileError | None = None, status: int = 200):
    session = db_session()
    recent = list(session.scalars(
        select(BatchJob).options(defer(BatchJob.input_file), defer(BatchJob.bad_rows), defer(BatchJob.results),
                                 defer(BatchJob.reading), joinedload(BatchJob.created_by))
        .order_by(BatchJob.id.desc()).limit(LIST_SIZE)))
    if form is None:
        form = FormState(values={"compare_models": "on"})
    return render_template("batches/list.html", jobs=recent, form=form, file_error=file_error,
                           max_errors=MAX_ERRORS_SHOWN,
                           may_create=_may_create(), limit_mb=upload_limit() / (1024 * 1024),
                           labels=FIELD_LABELS, status_text=_status_text, outcomes=jobs.OUTCOMES), status


# -- pages ---------------------------------------------------------------------------------------------------
@bp.get("/batches")
def index():
    require_viewer("view batch screenings")
    return _list_page()


@bp.post("/batches")
def create():
    user = _require_creator("screen batches")
    form = FormState.from_request(FORM_FIELDS)
    limit = upload_limit()
    upload = request.files.get("file")
    data, filename = b"", ""
    if upload is not None:
        filename = (upload.filename or "")[:255]
        data = upload.stream.read(limit + 1)
    if len(data) > limit:
        form.add("file", f"the file is larger than {limit / (1024 * 1024):.0f} MB; split the list")
    elif not filename and not data:
        form.add("file", "choose a letdown list (CSV or XLSX) to screen")
    elif not data:
        form.add("file", f"{filename} is empty: choose a CSV or XLSX letdown list")
    if not form.ok:
        return _list_page(form, status=422)
    session = db_session()
    try:
        job = jobs.create_job(session, user, filename, data, _form_options(form),
                              runner=jobs.runner_for(current_app.config))
    except jobs.BatchFileError as exc:
        return _list_page(form, file_error=exc, status=422)
    except InputError as exc:
        form.add(exc.field if exc.field in FIELD_LABELS else "file", exc.message)
        return _list_page(form, status=422)
    jobs.start_job(current_app._get_current_object(), job.id)  # type: ignore[attr-defined]
    return redirect(url_for("batches.view", job_id=job.id))


@bp.get("/batches/<int:job_id>")
def view(job_id: int):
    require_viewer("view batch screenings")
    job = _job(job_id)
    context: dict[str, Any] = {"job": job, "status_text": _status_text(job), "may_create": _may_create(),
                               "outcomes": jobs.OUTCOMES, "sorts": SORTS, "filters": _filters(),
                               "reading": job.reading or {}, "options": job.options or {},
                               "waiting_long": False, "may_restart": _may_restart(job),
                               "has_bad_rows": db_session().scalar(
                                   select(BatchJob.bad_rows.is_not(None)).where(BatchJob.id == job.id))}
    status = BatchStatus(job.status)
    if status is BatchStatus.QUEUED and job.runner == "rq" and job.created_at is not None:
        from jtcheck.records.models import utcnow

        context["waiting_long"] = (utcnow() - job.created_at).total_seconds() > WORKER_HINT_AFTER_S
    if status is BatchStatus.DONE and job.results is not None:
        show = _Display(job)
        rows = list(job.results)
        f = context["filters"]
        chosen = _filtered(rows, f)
        pages = max(1, math.ceil(len(chosen) / PAGE_SIZE))
        f["page"] = min(f["page"], pages)
        start = (f["page"] - 1) * PAGE_SIZE
        coldest = sorted((r for r in rows if finite_or_none(r.get("t_screen_k")) is not None),
                         key=lambda r: float(r["t_screen_k"]))[:10]
        counts = job.counts or {}
        context.update(show=show, rows=[_row_view(r, show) for r in chosen[start:start + PAGE_SIZE]],
                       n_chosen=len(chosen), n_rows=len(rows), pages=pages, first=start + 1,
                       coldest=[_row_view(r, show) for r in coldest], counts=counts,
                       by_outcome=counts.get("by_outcome") or {})
    return render_template("batches/view.html", **context)


def _may_restart(job: BatchJob) -> bool:
    user = current_user()
    return (BatchStatus(job.status) is BatchStatus.FAILED and user is not None and _may_create()
            and (Role(user.role) is Role.ADMIN or job.created_by_id == user.id))


@bp.post("/batches/<int:job_id>/restart")
def restart(job_id: int):
    """Queue a failed screening again (its uploader or an admin) and start it."""
    user = _require_creator("restart batch screenings")
    jobs.restart_job(db_session(), user, _job(job_id, light=True).id)
    jobs.start_job(current_app._get_current_object(), job_id)  # type: ignore[attr-defined]
    flash("The screening was restarted.")
    return redirect(url_for("batches.view", job_id=job_id))


@bp.get("/batches/<int:job_id>/status")
def status(job_id: int):
    require_viewer("view batch screenings")
    job = _job(job_id, light=True)
    return jsonify({"id": job.id, "status": BatchStatus(job.status).value, "done": job.done, "total": job.total,
                    "fraction": round(job.fraction, 4), "finished": job.finished, "message": job.message,
                    "text": _status_text(job), "counts": job.counts if job.finished else None})


@bp.get("/batches/progress.js")
def progress_script():
    resp = Response(PROGRESS_JS, mimetype="text/javascript")
    resp.headers["Cache-Control"] = "private, max-age=3600"
    return resp


# -- files -----------------------------------------------------------------------------------------------
def _results_file(job: BatchJob, fmt: str) -> bytes:
    from jtcheck.batch.writer import write_results

    screening, _cases, read = jobs.stored_screening(db_session(), job)
    data = write_results(screening, read, fmt, filename=job.filename)
    assert data is not None
    return data


def _done_job(job_id: int) -> BatchJob:
    job = _job(job_id)
    if BatchStatus(job.status) is not BatchStatus.DONE or job.results is None:
        raise ApiError(409, f"batch {job.id} is {BatchStatus(job.status).value}: its results are offered once it is "
                            "done")
    return job


@bp.get("/batches/<int:job_id>/results.<fmt>")
def results_file(job_id: int, fmt: str):
    require_viewer("download batch results")
    if fmt not in ("csv", "xlsx"):
        raise ApiError(404, f"results come as .csv or .xlsx, not .{fmt}")
    job = _done_job(job_id)
    data = _results_file(job, fmt)
    mimetype = ("text/csv; charset=utf-8" if fmt == "csv"
                else "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet")
    return attachment(data, mimetype, f"{_stem(job)}-results.{fmt}")


@bp.get("/batches/<int:job_id>/bad-rows.csv")
def bad_rows(job_id: int):
    require_viewer("download batch results")
    job = _job(job_id, light=True)
    data = db_session().scalar(select(BatchJob.bad_rows).where(BatchJob.id == job.id))
    if not data:
        raise ApiError(404, f"batch {job.id} has no bad rows: every row of {job.filename} was read")
    return attachment(data, "text/csv; charset=utf-8", f"{_stem(job)}-bad-rows.csv")


@bp.get("/batches/<int:job_id>/summary.pdf")
def summary_pdf(job_id: int):
    require_viewer("download batch results")
    from jtcheck.reports.batch_summary import render_batch_summary, summary_context

    job = _done_job(job_id)
    rendered = render_batch_summary(summary_context(job, temperature_unit=_Display(job).temperature))
    return attachment(rendered.pdf, "application/pdf", f"{_stem(job)}-summary.pdf")


@bp.get("/batches/template.<fmt>")
def template_file(fmt: str):
    require_viewer("download the letdown list template")
    if fmt not in ("csv", "xlsx"):
        raise ApiError(404, f"the template comes as .csv or .xlsx, not .{fmt}")
    from jtcheck.batch.template import write_template

    mimetype = ("text/csv; charset=utf-8" if fmt == "csv"
                else "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet")
    return attachment(write_template(fmt), mimetype, f"jtcheck-letdown-list.{fmt}")
