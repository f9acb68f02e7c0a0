"""An issued (approved) record reads its issued revision everywhere: the cover, every footer, the status line,
the revision history (issued for check, checked, approved, with real dates) and its end; and its three
signatures stay intact (filling the record's text fields is form filling, which an approval signature permits).

The record is the demo site's, prepared, checked and approved through the review workflow in a fresh register;
its text is read back with poppler's pdftotext (tests/tools/ensure_chromium.sh installs poppler-utils).
"""
from __future__ import annotations

import datetime as dt
import re
import shutil
import subprocess

import pytest

from jtcheck.records.db import make_engine, make_session_factory, upgrade_database
from jtcheck.records.demo import load_demo
from jtcheck.reports.demo import issue_demo_record
from jtcheck.reports.issue import record_signer
from jtcheck.reports.pki import InstancePKI
from jtcheck.reports.record_fields import text_fields
from jtcheck.reports.verify import verify_record

#: Opens a database (see tests/conftest.py): the PostgreSQL run of `make test` includes this module.
pytestmark = pytest.mark.database

PDFTOTEXT = shutil.which("pdftotext")
needs_poppler = pytest.mark.skipif(PDFTOTEXT is None, reason="poppler-utils not installed; run "
                                                             "tests/tools/ensure_chromium.sh")


@pytest.fixture(scope="module")
def issued(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("issued")
    url = f"sqlite:///{tmp / 'jtcheck.sqlite3'}"
    upgrade_database(url)
    engine = make_engine(url)
    pki = InstancePKI(tmp, b"test passphrase")
    try:
        with make_session_factory(engine)() as session:
            load_demo(session)
            revision = issue_demo_record(session, record_signer(pki))
            return {"pdf": revision.record_pdf, "letter": revision.letter, "label": revision.label,
                    "root": pki.trust_root_pem(), "tmp": tmp}
    finally:
        engine.dispose()


def _pages(pdf: bytes, tmp) -> list[str]:
    path = tmp / "record.pdf"
    path.write_bytes(pdf)
    out = subprocess.run([PDFTOTEXT, "-enc", "UTF-8", str(path), "-"], check=True, capture_output=True).stdout
    pages = [" ".join(p.split()) for p in out.decode("utf-8").split("\f")]
    return [p for p in pages if p]


def test_the_approved_revision_is_numbered_0(issued):
    assert issued["letter"] == "A" and issued["label"] == "0"


@needs_poppler
def test_every_footer_the_cover_and_the_end_read_the_issued_revision(issued):
    pages = _pages(issued["pdf"], issued["tmp"])
    assert len(pages) > 1
    for i, text in enumerate(pages, start=1):
        assert re.search(r"revision 0\b", text), (i, text[-200:])
        assert "revision A" not in text.replace("revision A was issued for check", ""), i
    first, last = pages[0], pages[-1]
    assert "Issued as revision 0, approved" in first
    assert "End of record" in last and re.search(r"End of record \S+ revision 0\.", last)
    assert "date of the preparer's signature" not in " ".join(pages)


@needs_poppler
def test_the_history_lists_issue_for_check_check_and_approval_with_real_dates(issued):
    text = " ".join(_pages(issued["pdf"], issued["tmp"]))
    history = text.split("Revision history")[1]
    today = dt.datetime.now(dt.UTC).strftime("%Y-%m-%d")
    assert re.search(rf"A issued for check {today} \d\d:\d\d UTC prepared ", history)
    assert re.search(rf"A checked {today} \d\d:\d\d UTC checked ", history)
    assert re.search(rf"0 approved {today} \d\d:\d\d UTC approved ", history)
    assert "awaiting" not in history
    assert re.search(rf"Prepared {today} \d\d:\d\d UTC", text.split("Revision history")[0])


def test_filling_the_fields_keeps_every_signature_intact(issued):
    fields = text_fields(issued["pdf"])
    assert fields["revision-cover"] == "0" and fields["history-approve-status"] == "approved"
    result = verify_record(issued["pdf"], [issued["root"]])
    assert result.ok, result.problems
    assert [s.role for s in result.signatures] == ["preparer", "checker", "approver"]
    assert all(s.modification_level in ("NONE", "FORM_FILLING") for s in result.signatures)


@pytest.mark.skipif(shutil.which("pdfinfo") is None, reason="poppler-utils not installed; run "
                                                           "tests/tools/ensure_chromium.sh")
def test_the_documents_metadata_carries_no_stale_revision_label(issued):
    """The title and subject a PDF reader shows (poppler's pdfinfo) name the record, never "revision A": the record
    is rendered for check as A and approved as 0 without being rendered again."""
    path = issued["tmp"] / "record-meta.pdf"
    path.write_bytes(issued["pdf"])
    info = subprocess.run([shutil.which("pdfinfo"), "-enc", "UTF-8", str(path)], check=True,
                          capture_output=True).stdout.decode("utf-8")
    fields = dict(line.split(":", 1) for line in info.splitlines() if ":" in line)
    title, subject = fields.get("Title", "").strip(), fields.get("Subject", "").strip()
    assert title.startswith("JTC-"), info      # the record number and the case title
    for text in (title, subject):
        assert not re.search(r"revision [A-Z0-9]\b", text, re.I), text
