"""The one-page summary of a batch screening job, as a PDF (WeasyPrint, A4).

>>> pdf = render_batch_summary(summary_context(job))      # doctest: +SKIP
>>> pdf.page_count
1

What the page shows: the file name, when and by whom the batch was run, the settings (limits applied where
the file gave none, the models compared), the rows by outcome (the word in capitals beside a monochrome
shape of our own: pass an outlined circle with a tick, margin eroded an outlined triangle with "!", fail a
solid square with a cross, not screened a dashed rounded square with "?"), the ten coldest rows, how many
rows used the scalar screening, the caution, and a footer with the job number and "page 1 of 1".

Nothing is computed again: the numbers are those the job stored (:mod:`jtcheck.batch.jobs`), shown in the
temperature unit of the uploaded file.  User text (file name, tags, services) is escaped by Jinja2 and reaches
the page footer only through CSS ``string-set``, never through a CSS string.
"""
from __future__ import annotations

import datetime as dt
import logging
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from functools import cache
from typing import Any

import jinja2

from jtcheck import __version__
from jtcheck.errors import InputError
from jtcheck.notices import CAUTION
from jtcheck.reports.numbers import UNIT_LABELS, finite_or_none, temperature_text
from jtcheck.reports.record import templates_path
from jtcheck.reports.screening_display import OUTCOME_LABELS
from jtcheck.screening.findings import Outcome
from jtcheck.units import difference_label, temperature_difference_from_k

logging.getLogger("weasyprint.progress").setLevel(logging.WARNING)

#: The outcomes in the order the summary lists them (worst first), with their label.
OUTCOME_ORDER: tuple[str, ...] = (Outcome.FAIL.value, Outcome.MARGIN_ERODED.value, Outcome.NOT_SCREENED.value,
                                  Outcome.PASS.value)
#: How many of the coldest rows the page lists.
COLDEST_ROWS = 10
#: Longest text of a user-given cell on the page (longer ones end in "…"), so that the page stays one page.
_MAX_CELL = {"tag": 28, "service": 44, "filename": 90}


@dataclass(frozen=True)
class RenderedSummary:
    """The PDF of a batch summary and its number of pages (1 unless the layout overflowed)."""

    pdf: bytes
    page_count: int


def _clip(text: Any, key: str) -> str:
    s = " ".join(str(text or "").split())
    limit = _MAX_CELL[key]
    return s if len(s) <= limit else s[:limit - 1] + "…"


def _difference(value_k: Any, unit: str) -> str:
    v = finite_or_none(value_k)
    if v is None:
        return "–"
    d = temperature_difference_from_k(v, unit)
    text = f"{d:+.1f}"
    label = difference_label(unit)
    return f"{'0.0' if text in ('-0.0', '+0.0') else text} {label}"


def _date(value: dt.datetime | None) -> str:
    if value is None:
        return "–"
    return value.astimezone(dt.UTC).strftime("%Y-%m-%d %H:%M UTC")


def _settings(options: Mapping[str, Any]) -> list[tuple[str, str]]:
    def given(name: str) -> str:
        text = str(options.get(name) or "").strip()
        return text or "none (only the file's own cells)"

    models = ("Peng-Robinson and SRK compared; the colder outlet governs" if options.get("compare_models", True)
              else "each fluid's own equation of state only")
    return [("Cold limit where the file has none", given("limit")),
            ("MDMT where the file has none", given("mdmt")),
            ("Margin where the file has none", given("margin")),
            ("Models", models),
            ("Rows that could not be read", "skipped and listed in the bad-rows file" if options.get("keep_going")
             else "none allowed (the whole file is refused)")]


def summary_context(job: Any, *, temperature_unit: str = "degC", now: dt.datetime | None = None) -> dict[str, Any]:
    """What the summary page shows, from a finished :class:`jtcheck.records.models.BatchJob`.

    Parameters
    ----------
    job : BatchJob
        A job whose status is ``done`` (``results`` and ``counts`` stored).
    temperature_unit : str
        Unit of the temperatures on the page (K, degC, degF, degR).
    now : datetime, optional
        Time printed as "made" (default: now, UTC).

    Raises
    ------
    jtcheck.errors.InputError
        ``job`` when the job has no results yet.
    """
    if job.results is None or job.counts is None:
        raise InputError("job", f"batch {job.id} has no results yet (status {job.status}); the summary is made "
                                "when it is done")
    counts: Mapping[str, Any] = job.counts
    by_outcome = counts.get("by_outcome", {})
    rows: Sequence[Mapping[str, Any]] = job.results
    screened = [r for r in rows if finite_or_none(r.get("t_screen_k")) is not None]
    coldest = sorted(screened, key=lambda r: float(r["t_screen_k"]))[:COLDEST_ROWS]
    unit = temperature_unit
    return {
        "job_id": job.id,
        "filename": _clip(job.filename, "filename"),
        "run_at": _date(job.finished_at or job.created_at),
        "made_at": _date(now or dt.datetime.now(dt.UTC)),
        "run_by": job.created_by.name if job.created_by is not None else "–",
        "settings": _settings(job.options or {}),
        "total": int(counts.get("rows", len(rows))),
        "skipped": int(counts.get("skipped", 0)),
        "outcomes": [{"outcome": o, "label": OUTCOME_LABELS[o], "count": int(by_outcome.get(o, 0))}
                     for o in OUTCOME_ORDER],
        "hazard_rows": int(counts.get("hazard_rows", 0)),
        "n_scalar": int(counts.get("n_scalar", 0)),
        "seconds": finite_or_none(counts.get("seconds")),
        "coldest": [{"row": r.get("row"), "tag": _clip(r.get("tag"), "tag"),
                     "service": _clip(r.get("service"), "service"), "outcome": r.get("outcome") or "not screened",
                     "label": OUTCOME_LABELS.get(r.get("outcome") or "", "NOT SCREENED"),
                     "t_screen": temperature_text(r.get("t_screen_k"), unit),
                     "limit": temperature_text((r.get("inputs") or {}).get("limit_k"), unit),
                     "margin": _difference(r.get("margin_to_limit_k"), unit),
                     "condition": r.get("coldest_condition") or "–", "path": r.get("path") or "–"}
                    for r in coldest],
        "temperature_unit": UNIT_LABELS.get(unit.lower(), unit),
        "caution": CAUTION,
        "version": __version__,
    }


@cache
def _environment() -> jinja2.Environment:
    return jinja2.Environment(loader=jinja2.FileSystemLoader(str(templates_path())), autoescape=True,
                              undefined=jinja2.StrictUndefined, trim_blocks=True, lstrip_blocks=True)


def render_html(context: Mapping[str, Any]) -> str:
    """The summary page as HTML (the input of :func:`render_batch_summary`)."""
    return _environment().get_template("batch_summary.html").render(**context)


def render_batch_summary(context: Mapping[str, Any]) -> RenderedSummary:
    """Render the summary of :func:`summary_context` as a one-page A4 PDF."""
    from weasyprint import HTML

    document = HTML(string=render_html(context), base_url=str(templates_path())).render()
    return RenderedSummary(pdf=document.write_pdf(), page_count=len(document.pages))
