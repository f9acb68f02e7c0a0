"""Batch screening in a real browser: an engineer uploads the letdown-list template, watches the progress that the
page follows by itself, reads the counts and the results, filters them by outcome and downloads the summary.

The screening is held back (a gate around :func:`jtcheck.screening.batch.screen_batch` in the app's process) until
the page has shown the progress, so that the test sees the running state and the page's own switch to the
results.  The job runs in a thread of the app; the test waits for it before it ends.
"""
from __future__ import annotations

import re
import threading

import pytest
from playwright.sync_api import expect

from jtcheck.batch import jobs
from jtcheck.batch.template import write_template
from jtcheck.records.models import Role
from jtcheck.screening import batch as screening_batch

SCREENSHOT = "/tmp/jtcheck-batch-results.png"
N_ROWS = 6       # rows of the template (the invented Kestrel Ridge demo cases)


@pytest.fixture
def gated_screening(live_app, monkeypatch):
    """Batch jobs of the live app run in threads and wait at a gate (set it to let them screen)."""
    app = live_app.app
    gate = threading.Event()
    real = screening_batch.screen_batch

    def held(cases, *, compare_models=True, progress=None):
        progress(0, len(cases))
        assert gate.wait(60), "the test never opened the gate"
        return real(cases, compare_models=compare_models, progress=progress)

    monkeypatch.setattr(screening_batch, "screen_batch", held)
    monkeypatch.setitem(app.config, "BATCH_RUNNER", "thread")
    try:
        yield gate
    finally:
        gate.set()
        assert jobs.join_threads(app, 120), "a batch thread is still running"


def test_engineer_uploads_the_template_follows_the_progress_and_filters_the_results(page, live_app, sign_in,
                                                                                    gated_screening, tmp_path):
    upload = tmp_path / "kestrel-letdowns.xlsx"
    upload.write_bytes(write_template("xlsx"))
    sign_in(page, Role.ENGINEER)

    page.get_by_role("navigation", name="Main").get_by_role("link", name="Batches").click()
    expect(page.get_by_role("heading", level=1)).to_have_text("Batch screening")
    page.get_by_label(re.compile(r"^Letdown list")).set_input_files(str(upload))
    page.get_by_label(re.compile(r"^Margin")).fill("5 K")
    page.get_by_role("button", name="Upload and screen").click()

    # the job page, while the screening waits at the gate: a progress bar that the page follows by itself
    expect(page).to_have_url(re.compile(r"/batches/\d+$"))
    expect(page.get_by_role("heading", level=1)).to_have_text(re.compile(r"^Batch \d+: kestrel-letdowns\.xlsx$"))
    progress = page.locator("section.batch-progress")
    expect(progress.locator("progress")).to_be_visible()
    expect(progress.locator("[data-progress-text]")).to_have_text(re.compile(r"^Screening: 0 of 6 rows done"))
    url = page.url
    gated_screening.set()

    # no click: the page polls the status and shows the results when the job is done
    expect(page.get_by_role("heading", name="Rows by outcome")).to_be_visible(timeout=60_000)
    assert page.url == url
    expect(page.locator("#batch-status")).to_have_text("done")
    counts = {o: int(page.locator(f'table.batch-counts tr[data-outcome="{o}"] .count').inner_text())
              for o in jobs.OUTCOMES}
    assert sum(counts.values()) == N_ROWS
    rows = page.locator("table.batch-results tbody tr")
    expect(rows).to_have_count(N_ROWS)
    expect(page.locator("table.coldest tbody tr")).to_have_count(N_ROWS)
    expect(page.locator(".caution")).to_be_visible()
    page.screenshot(path=SCREENSHOT, full_page=True)

    # filter by outcome: only those rows, as many as the count says
    outcome = max(counts, key=lambda o: counts[o])
    page.get_by_label("Outcome", exact=True).select_option(outcome)
    page.get_by_role("button", name="Show").click()
    expect(page).to_have_url(re.compile("outcome=" + re.escape(outcome.replace(" ", "+"))))
    expect(rows).to_have_count(counts[outcome])
    for value in rows.evaluate_all("rows => rows.map(r => r.dataset.outcome)"):
        assert value == outcome
    expect(page.locator("#results-count")).to_have_text(re.compile(rf"^{counts[outcome]} of {N_ROWS} rows"))

    # the one-page summary downloads as a PDF
    with page.expect_download() as info:
        page.get_by_role("link", name="Summary (PDF)").click()
    assert info.value.suggested_filename.endswith("-summary.pdf")
    assert info.value.path().read_bytes().startswith(b"%PDF-")


def test_a_checker_sees_the_batches_but_no_upload_form(page, sign_in):
    sign_in(page, Role.CHECKER)
    page.get_by_role("navigation", name="Main").get_by_role("link", name="Batches").click()
    expect(page.get_by_role("heading", level=1)).to_have_text("Batch screening")
    expect(page.get_by_role("button", name="Upload and screen")).to_have_count(0)
    expect(page.get_by_role("link", name="Template (XLSX)")).to_be_visible()
