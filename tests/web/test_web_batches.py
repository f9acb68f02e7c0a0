"""Batch screening in the web app: upload a letdown list, follow the job, see, filter and download the results.

Jobs run in a thread of the app (no Redis here); every test waits for its jobs (status poll with a time-out,
then the thread is joined), so no thread outlives the app.
"""
from __future__ import annotations

import csv
import io
import re
import shutil
import subprocess
import threading
import time

import pytest
from openpyxl import load_workbook
from sqlalchemy import func, select
from web_helpers import count
from werkzeug.datastructures import FileStorage
from werkzeug.test import encode_multipart

from jtcheck.batch import jobs
from jtcheck.batch.template import write_template
from jtcheck.records.models import AuditEntry, BatchJob, Role, User
from jtcheck.screening import batch as screening_batch
from jtcheck.web.database import db_session

#: Longest wait for a job [s]: the first screening of a process loads the compiled kernels.
TIMEOUT_S = 180
#: Tags of the template's rows (the invented Kestrel Ridge demo cases).
TEMPLATE_TAGS = ("PCV-1101", "PSV-2101", "PSV-4101", "PCV-5101", "BDV-5102", "PCV-3101")
TEMPLATE_CSV = write_template("csv").decode("utf-8-sig")
HEADER = TEMPLATE_CSV.splitlines()[0]
#: Two bad rows: an outlet above the inlet (row 8), and a unit that is not a temperature plus no tag (row 9).
BAD_LINES = ('PCV-BAD1,bad row,control_valve,"methane=0.9,ethane=0.1",PR,10,20,50,,,-29,,5,no,1.01325',
             ',bad row,control_valve,"methane=0.9,ethane=0.1",PR,70,20 barg,10,,,-29,,5,no,1.01325')


@pytest.fixture(autouse=True)
def thread_runner(app):
    """Run jobs in threads of the app whatever REDIS_URL says; wait for every thread at the end of a test."""
    app.config["BATCH_RUNNER"] = "thread"
    yield
    assert jobs.join_threads(app, TIMEOUT_S), "a batch thread is still running"


def _upload(client, data: bytes, filename: str, **fields):
    """Post the upload form.  The body is encoded here, in memory: werkzeug's test client would spool a large body
    to a temporary file that it never closes."""
    form = {"file": FileStorage(io.BytesIO(data), filename), "compare_models": "on", **fields}
    boundary, body = encode_multipart(form)
    return client.post("/batches", data=body, content_type=f'multipart/form-data; boundary="{boundary}"')


def _job_id(resp) -> int:
    assert resp.status_code == 302, resp.get_data(as_text=True)[:2000]
    m = re.search(r"/batches/(\d+)$", resp.headers["Location"])
    assert m, resp.headers["Location"]
    return int(m.group(1))


def _wait(client, job_id: int) -> dict:
    deadline = time.monotonic() + TIMEOUT_S
    while time.monotonic() < deadline:
        state = client.get(f"/batches/{job_id}/status").get_json()
        if state["finished"]:
            return state
        time.sleep(0.1)
    pytest.fail(f"batch {job_id} did not finish within {TIMEOUT_S} s")


def _run(client, data: bytes, filename: str, **fields) -> tuple[int, dict]:
    job_id = _job_id(_upload(client, data, filename, **fields))
    return job_id, _wait(client, job_id)


def _stored(app, job_id: int) -> BatchJob:
    with app.app_context():
        job = db_session().get(BatchJob, job_id)
        job.results, job.counts, job.bad_rows   # noqa: B018 - load before the session ends
        return job


def _csv_rows(data: bytes) -> list[dict[str, str]]:
    return list(csv.DictReader(io.StringIO(data.decode("utf-8-sig"))))


@pytest.fixture(scope="module")
def template_job(app, world):
    """The CSV template screened once for the module (by the engineer): (job id, its stored results)."""
    from web_helpers import sign_in

    client = app.test_client()
    sign_in(client, world.emails[Role.ENGINEER])
    app.config["BATCH_RUNNER"] = "thread"
    job_id, state = _run(client, write_template("csv"), "kestrel-letdowns.csv")
    assert jobs.join_threads(app, TIMEOUT_S)
    assert state["status"] == "done", state
    return job_id, _stored(app, job_id)


# -- the template and the upload --------------------------------------------------------------------------
@pytest.mark.parametrize("fmt", ["csv", "xlsx"])
def test_the_template_can_be_downloaded(checker, fmt):
    resp = checker.get(f"/batches/template.{fmt}")
    assert resp.status_code == 200
    assert resp.headers["Content-Disposition"] == f'attachment; filename="jtcheck-letdown-list.{fmt}"'
    assert resp.data == write_template(fmt)


@pytest.mark.parametrize("fmt", ["csv", "xlsx"])
def test_the_uploaded_template_is_screened_in_the_background_and_shown(app, engineer, fmt):
    before = count(app, AuditEntry)
    job_id, state = _run(engineer, write_template(fmt), f"letdowns.{fmt}")
    assert state["status"] == "done", state
    assert state["done"] == state["total"] == len(TEMPLATE_TAGS)
    assert state["fraction"] == 1.0
    job = _stored(app, job_id)
    assert [r["tag"] for r in job.results] == list(TEMPLATE_TAGS)
    assert sum(job.counts["by_outcome"].values()) == len(TEMPLATE_TAGS)
    assert job.runner == "thread" and job.started_at is not None and job.finished_at >= job.started_at
    assert count(app, AuditEntry) == before + 1            # "batch_job create"

    html = engineer.get(f"/batches/{job_id}").get_data(as_text=True)
    for outcome, n in job.counts["by_outcome"].items():
        assert re.search(rf'<tr data-outcome="{outcome}">.*?<td class="num count">{n}</td>', html, re.S), outcome
    for tag in TEMPLATE_TAGS:
        assert tag in html
    assert "The 6 coldest rows" in html
    assert "data-status-url" not in html                   # finished: no polling
    listing = engineer.get("/batches").get_data(as_text=True)
    assert f'href="/batches/{job_id}"' in listing


def test_results_are_the_screening_of_each_row(template_job):
    _, job = template_job
    fail = [r for r in job.results if r["outcome"] == "fail"]
    assert fail, "the demo list has letdowns colder than their MDMT"
    for r in job.results:
        assert r["inputs"]["limit_k"] is not None
        if r["t_screen_k"] is not None:
            assert r["margin_to_limit_k"] == pytest.approx(r["t_screen_k"] - r["inputs"]["limit_k"])
            assert (r["outcome"] == "fail") == (r["t_screen_k"] < r["inputs"]["limit_k"])


def test_the_ten_coldest_are_sorted_and_the_table_sorts_by_outlet_temperature(engineer, template_job):
    job_id, job = template_job
    by_t = sorted((r for r in job.results if r["t_screen_k"] is not None), key=lambda r: r["t_screen_k"])
    html = engineer.get(f"/batches/{job_id}?sort=coldest").get_data(as_text=True)
    table = html.split('class="batch-results"', 1)[1]
    tags = re.findall(r'<td class="tag">([^<]+)</td>', table)
    assert tags == [r["tag"] for r in by_t] + [r["tag"] for r in job.results if r["t_screen_k"] is None]
    html = engineer.get(f"/batches/{job_id}?sort=warmest").get_data(as_text=True)
    table = html.split('class="batch-results"', 1)[1]
    assert re.findall(r'<td class="tag">([^<]+)</td>', table)[0] == by_t[-1]["tag"]
    coldest = html.split('class="coldest"', 1)[1].split("</table>", 1)[0]
    assert re.findall(r'<td class="tag">([^<]+)</td>', coldest) == [r["tag"] for r in by_t][:10]


def test_the_results_filter_by_outcome_text_and_hazards(engineer, template_job):
    job_id, job = template_job

    def shown(query: str) -> list[str]:
        html = engineer.get(f"/batches/{job_id}?{query}").get_data(as_text=True)
        table = html.split('class="batch-results"', 1)[1] if 'class="batch-results"' in html else ""
        return re.findall(r'<td class="tag">([^<]+)</td>', table)

    for outcome in {r["outcome"] for r in job.results}:
        assert shown(f"outcome={outcome.replace(' ', '+')}") == [r["tag"] for r in job.results
                                                                  if r["outcome"] == outcome]
    assert shown("q=co2+export") == ["PCV-5101", "BDV-5102"]          # the service text, any letter case
    assert shown("q=psv-") == ["PSV-2101", "PSV-4101"]                # the tag
    assert shown("hazards=1") == [r["tag"] for r in job.results if r["hazard"]]
    assert shown("outcome=fail&q=nothing-like-this") == []
    assert shown("outcome=bogus") == list(TEMPLATE_TAGS)             # an unknown outcome filters nothing


# -- downloads -------------------------------------------------------------------------------------------
def test_results_csv_has_one_row_per_case(checker, template_job):
    job_id, job = template_job
    resp = checker.get(f"/batches/{job_id}/results.csv")
    assert resp.status_code == 200
    assert resp.mimetype == "text/csv"
    assert re.match(rf'attachment; filename="batch{job_id}-kestrel-letdowns-results.csv"',
                    resp.headers["Content-Disposition"])
    rows = _csv_rows(resp.data)
    assert len(rows) == len(job.results) == len(TEMPLATE_TAGS)
    assert [r["tag"] for r in rows] == list(TEMPLATE_TAGS)


def test_results_xlsx_opens(checker, template_job):
    job_id, _ = template_job
    resp = checker.get(f"/batches/{job_id}/results.xlsx")
    assert resp.status_code == 200
    wb = load_workbook(io.BytesIO(resp.data), read_only=True)
    try:
        rows = list(wb.worksheets[0].iter_rows(values_only=True))
    finally:
        wb.close()
    assert len(rows) == 1 + len(TEMPLATE_TAGS)
    assert {"PCV-1101", "BDV-5102"} <= {c for row in rows for c in row if isinstance(c, str)}


def test_summary_pdf_is_one_page_with_the_counts(checker, template_job):
    job_id, job = template_job
    resp = checker.get(f"/batches/{job_id}/summary.pdf")
    assert resp.status_code == 200
    assert resp.mimetype == "application/pdf"
    assert resp.data.startswith(b"%PDF-")
    from pyhanko.pdf_utils.reader import PdfFileReader

    assert int(PdfFileReader(io.BytesIO(resp.data)).root["/Pages"]["/Count"]) == 1
    if shutil.which("pdftotext") is None:
        pytest.skip("pdftotext (poppler-utils) is needed to read the page's text")
    text = subprocess.run(["pdftotext", "-layout", "-", "-"], input=resp.data, capture_output=True,
                          check=True).stdout.decode()
    assert "kestrel-letdowns.csv" in text and "CAUTION" in text
    counts = job.counts["by_outcome"]
    words = {"pass": "PASS", "margin eroded": "MARGIN ERODED", "fail": "FAIL", "not screened": "NOT SCREENED"}
    numbers = re.search(r"Rows by outcome(.*?)Rows with at least one hazard", text, re.S).group(1)
    labels = re.findall(r"MARGIN ERODED|NOT SCREENED|FAIL|PASS", numbers)
    assert labels == [words[o] for o in ("fail", "margin eroded", "not screened", "pass")]
    assert [int(n) for n in re.findall(r"\b\d+\b", numbers)] == [counts[o] for o in ("fail", "margin eroded",
                                                                                      "not screened", "pass")]
    assert f"one by one (the full one-case screening, used where the vectorised screening did not converge or does " \
           f"not apply): {job.counts['n_scalar']} of {len(TEMPLATE_TAGS)}" in " ".join(text.split())


def test_unfinished_jobs_offer_no_downloads(app, engineer, world):
    with app.app_context():
        s = db_session()
        user = s.scalar(select(User).where(User.email == world.emails[Role.ENGINEER]))
        job = jobs.create_job(s, user, "waiting.csv", write_template("csv"), {})   # stored, never started
        job_id = job.id
    assert engineer.get(f"/batches/{job_id}/results.csv").status_code == 409
    assert engineer.get(f"/batches/{job_id}/summary.pdf").status_code == 409
    assert engineer.get(f"/batches/{job_id}/bad-rows.csv").status_code == 404
    html = engineer.get(f"/batches/{job_id}").get_data(as_text=True)
    assert "<progress" in html and "Queued" in html
    assert engineer.get("/batches/999999").status_code == 404
    assert engineer.get("/batches/999999/status").status_code == 404


# -- bad files ---------------------------------------------------------------------------------------------
def _mixed_file() -> bytes:
    lines = TEMPLATE_CSV.splitlines()
    return "\r\n".join([*lines, *BAD_LINES]).encode()


def test_a_file_with_bad_rows_shows_every_error_and_stores_nothing(app, engineer):
    before = count(app, BatchJob)
    resp = _upload(engineer, _mixed_file(), "mixed.csv")
    assert resp.status_code == 422
    html = resp.get_data(as_text=True)
    assert "nothing was stored" in html
    table = html.split('class="row-errors"', 1)[1].split("</table>", 1)[0]
    found = re.findall(r'<tr><td class="num">(\d+)</td><td>([^<]*)</td><td><code>([^<]*)</code></td><td>([^<]*)</td>',
                       table)
    from jtcheck.batch.reader import read_cases

    expected = read_cases(_mixed_file(), filename="mixed.csv").errors
    assert len(expected) >= 3
    assert [(int(r), c) for r, c, _, _ in found] == [(e.row, e.column) for e in expected]
    assert {r for r, _, _, _ in found} == {"8", "9"}
    assert count(app, BatchJob) == before
    # the form keeps what was typed
    resp = _upload(engineer, _mixed_file(), "mixed.csv", limit="-29 degC")
    assert 'value="-29 degC"' in resp.get_data(as_text=True)


def test_a_file_with_very_many_errors_lists_the_first_and_says_how_many(engineer, monkeypatch):
    from jtcheck.web.batches import views as batches

    monkeypatch.setattr(batches, "MAX_ERRORS_SHOWN", 2)
    resp = _upload(engineer, _mixed_file(), "mixed.csv")
    html = resp.get_data(as_text=True)
    table = html.split('class="row-errors"', 1)[1].split("</table>", 1)[0]
    assert table.count('<tr><td class="num">') == 2
    assert re.search(r"The first 2 of \d+ problems are listed", html)


def test_keep_going_screens_the_good_rows_and_offers_the_bad_ones(app, engineer):
    job_id, state = _run(engineer, _mixed_file(), "mixed.csv", keep_going="on")
    assert state["status"] == "done"
    job = _stored(app, job_id)
    assert [r["tag"] for r in job.results] == list(TEMPLATE_TAGS)
    assert job.counts["skipped"] == len(job.reading["errors"]) >= 3
    html = engineer.get(f"/batches/{job_id}").get_data(as_text=True)
    assert f'href="/batches/{job_id}/bad-rows.csv"' in html
    resp = engineer.get(f"/batches/{job_id}/bad-rows.csv")
    assert resp.status_code == 200
    bad = _csv_rows(resp.data)
    assert [r["tag"] for r in bad] == ["PCV-BAD1", ""]
    assert bad[0]["problems"].startswith("was row 8:") and "outlet" in bad[0]["problems"]


def test_an_empty_or_missing_file_is_refused(app, engineer):
    before = count(app, BatchJob)
    resp = engineer.post("/batches", data={"compare_models": "on"}, content_type="multipart/form-data")
    assert resp.status_code == 422
    assert "choose a letdown list" in resp.get_data(as_text=True)
    resp = _upload(engineer, b"", "empty.csv")
    assert resp.status_code == 422 and "is empty" in resp.get_data(as_text=True)
    resp = _upload(engineer, b"%PDF-1.7 not a list", "list.pdf")
    assert resp.status_code == 422 and "give a .csv or .xlsx file" in resp.get_data(as_text=True)
    assert count(app, BatchJob) == before


def test_a_bad_limit_names_its_field(app, engineer):
    before = count(app, BatchJob)
    resp = _upload(engineer, write_template("csv"), "letdowns.csv", limit="cold")
    assert resp.status_code == 422
    assert re.search(r'id="err-limit" data-field="limit">Cold limit: ', resp.get_data(as_text=True))
    assert count(app, BatchJob) == before


def test_the_upload_size_limit_is_enforced(app, engineer):
    app.config["BATCH_UPLOAD_MAX_BYTES"] = 1000
    try:
        resp = _upload(engineer, write_template("csv"), "letdowns.csv")           # over the limit, in the slack
        assert resp.status_code == 422
        assert "larger than" in resp.get_data(as_text=True)
        resp = _upload(engineer, b"x" * (200 * 1024), "huge.csv")                 # beyond the request limit
        assert resp.status_code == 413
    finally:
        del app.config["BATCH_UPLOAD_MAX_BYTES"]


def test_uploads_may_be_larger_than_the_apps_request_limit(app, engineer):
    """The app refuses requests over MAX_CONTENT_LENGTH (1 MiB); the batch upload may carry up to 50 MB."""
    from jtcheck.web.batches import views as batches

    assert batches.UPLOAD_MAX_BYTES == 50 * 1024 * 1024 > app.config["MAX_CONTENT_LENGTH"]
    big = b"tag,notes\r\n" + b"PCV-1,xxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxx\r\n" * 40_000    # 2.2 MB
    assert len(big) > app.config["MAX_CONTENT_LENGTH"]
    resp = _upload(engineer, big, "big.csv")
    assert resp.status_code == 422                       # read and refused for its columns, not for its size
    assert "the required column" in resp.get_data(as_text=True)


# -- options ---------------------------------------------------------------------------------------------
def test_form_limits_fill_empty_cells_only(app, engineer):
    lines = TEMPLATE_CSV.splitlines()
    # row 2 without its MDMT (column 11) and margin (column 13); the other rows keep theirs
    cells = next(csv.reader([lines[1]]))
    cells[10], cells[12] = "", ""
    out = io.StringIO()
    csv.writer(out, lineterminator="\r\n").writerows([next(csv.reader([lines[0]])), cells,
                                                      next(csv.reader([lines[2]]))])
    job_id, state = _run(engineer, out.getvalue().encode(), "partial.csv", limit="-10 degC", margin="3 K")
    assert state["status"] == "done", state
    first, second = _stored(app, job_id).results
    assert first["inputs"]["mdmt_k"] is None
    assert first["inputs"]["user_limit_k"] == pytest.approx(263.15)
    assert first["inputs"]["margin_k"] == pytest.approx(3.0)
    assert second["inputs"]["mdmt_k"] == pytest.approx(227.15)       # -46 degC from the file
    assert second["inputs"]["user_limit_k"] == pytest.approx(263.15)  # no cold limit cell: the form's
    assert second["inputs"]["margin_k"] == pytest.approx(5.0)         # the file's own margin wins
    assert second["inputs"]["limit_k"] == pytest.approx(263.15)       # the warmer limit governs


def test_compare_models_off_screens_one_model(app, engineer):
    job_id, _ = _run(engineer, write_template("csv"), "one-model.csv", compare_models="")
    job = _stored(app, job_id)
    assert job.options["compare_models"] is False
    # each row on its own model only: PR, or GERG2008 for the demo's fuel-gas row (PCV-3101)
    assert all(len(r["t_out_by_model"]) == 1 for r in job.results)
    assert {m for r in job.results for m in r["t_out_by_model"]} == {"PR", "GERG2008"}


# -- progress ---------------------------------------------------------------------------------------------
def test_the_page_shows_progress_while_running_and_polls_the_status(app, engineer, monkeypatch):
    release = threading.Event()
    real = screening_batch.screen_batch

    def slow(cases, *, compare_models=True, progress=None):
        progress(2, len(cases))
        assert release.wait(TIMEOUT_S)
        return real(cases, compare_models=compare_models, progress=progress)

    monkeypatch.setattr(screening_batch, "screen_batch", slow)
    monkeypatch.setattr(jobs, "PROGRESS_INTERVAL_S", 0.0)
    job_id = _job_id(_upload(engineer, write_template("csv"), "slow.csv"))
    try:
        deadline = time.monotonic() + TIMEOUT_S
        state = engineer.get(f"/batches/{job_id}/status").get_json()
        while state["done"] < 2 and time.monotonic() < deadline:
            time.sleep(0.05)
            state = engineer.get(f"/batches/{job_id}/status").get_json()
        assert state == {**state, "status": "running", "done": 2, "total": 6, "finished": False}
        assert state["fraction"] == pytest.approx(2 / 6, abs=1e-3)
        html = engineer.get(f"/batches/{job_id}").get_data(as_text=True)
        assert f'data-status-url="/batches/{job_id}/status"' in html
        assert '<progress max="6" value="2">' in html
        assert '<noscript><meta http-equiv="refresh"' in html               # works without JavaScript
        assert '<script src="/batches/progress.js" defer></script>' in html
        listing = engineer.get("/batches").get_data(as_text=True)
        assert re.search(rf'<tr data-status="running">\s*<td class="num"><a href="/batches/{job_id}"', listing)
    finally:
        release.set()
    assert _wait(engineer, job_id)["status"] == "done"


def test_the_progress_script_is_served_from_the_site(engineer):
    resp = engineer.get("/batches/progress.js")
    assert resp.status_code == 200
    assert resp.mimetype == "text/javascript"
    assert "fetch(url" in resp.get_data(as_text=True)


def test_a_job_whose_screening_raises_ends_failed_with_the_message(app, engineer, monkeypatch):
    def broken(cases, *, compare_models=True, progress=None):
        raise RuntimeError("kernel exploded on row 3")

    monkeypatch.setattr(screening_batch, "screen_batch", broken)
    job_id, state = _run(engineer, write_template("csv"), "broken.csv")
    assert state["status"] == "failed"
    assert "kernel exploded on row 3" in state["message"]
    html = engineer.get(f"/batches/{job_id}").get_data(as_text=True)
    assert 'id="batch-failed"' in html and "kernel exploded on row 3" in html
    assert engineer.get(f"/batches/{job_id}/results.csv").status_code == 409


def test_a_running_job_whose_worker_fell_silent_is_marked_failed(app, engineer, world):
    from datetime import timedelta

    from sqlalchemy import update

    with app.app_context():
        s = db_session()
        user = s.scalar(select(User).where(User.email == world.emails[Role.ENGINEER]))
        job = jobs.create_job(s, user, "lost.csv", write_template("csv"), {})
        old = jobs.utcnow() - timedelta(hours=2)
        s.execute(update(BatchJob).where(BatchJob.id == job.id).values(status="running", heartbeat_at=old,
                                                                      started_at=old))
        s.commit()
        job_id = job.id
    state = engineer.get(f"/batches/{job_id}/status").get_json()
    assert state["status"] == "failed" and "no sign of life" in state["message"]


# -- who may do what ---------------------------------------------------------------------------------------
def test_a_checker_cannot_upload_but_can_view(app, checker, template_job):
    job_id, _ = template_job
    before = count(app, BatchJob)
    resp = _upload(checker, write_template("csv"), "letdowns.csv")
    assert resp.status_code == 403
    assert count(app, BatchJob) == before
    page = checker.get("/batches")
    assert page.status_code == 200
    assert 'action="/batches"' not in page.get_data(as_text=True)          # no upload form offered
    assert f'href="/batches/{job_id}"' in page.get_data(as_text=True)
    assert checker.get(f"/batches/{job_id}").status_code == 200
    assert checker.get(f"/batches/{job_id}/status").get_json()["status"] == "done"


def test_approvers_view_and_admins_upload(app, approver, admin):
    assert approver.get("/batches").status_code == 200
    assert _upload(approver, write_template("csv"), "x.csv").status_code == 403
    job_id, state = _run(admin, write_template("csv"), "admin.csv")
    assert state["status"] == "done"
    with app.app_context():
        job = db_session().get(BatchJob, job_id)
        assert job.created_by.role.value == "admin"
        assert db_session().scalar(select(func.count()).select_from(BatchJob)) >= 1


def test_the_nav_links_to_batches(engineer):
    html = engineer.get("/batches").get_data(as_text=True)
    assert '<a href="/batches" class="here">Batches</a>' in html
