"""A calculation record as three people make it, in a real browser: the engineer computes the case and submits
it, a checker checks it and sends it for approval, an approver approves it; the downloaded record then carries
three intact, trusted signatures, and the verify page says so too."""
from __future__ import annotations

import re
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

from playwright.sync_api import expect

from jtcheck.records.models import Role
from jtcheck.records.snapshot import record_number
from jtcheck.reports.verify import verify_record

from .conftest import EMAILS, NAMES

SCREENSHOT_CASE = "/tmp/jtcheck-record-review.png"
SCREENSHOT_VERIFY = "/tmp/jtcheck-record-verify.png"


def _sign_out(page) -> None:
    page.get_by_role("button", name="Sign out").click()
    expect(page).to_have_url(re.compile(r"/login"))


def _verify_off_the_loop(pdf: bytes, root: bytes):
    """:func:`verify_record` in a thread of its own: pyHanko's synchronous API calls ``asyncio.run``, which refuses
    to run while Playwright's event loop may count as running in the test's thread."""
    with ThreadPoolExecutor(max_workers=1) as pool:
        return pool.submit(verify_record, pdf, [root]).result()


def _take_step(page, button: str, comment: str, flash: str) -> None:
    review = page.locator("#review")
    review.get_by_label(re.compile(f"^Comment for “{re.escape(button)}”")).fill(comment)
    review.get_by_role("button", name=button, exact=True).click()
    expect(page).to_have_url(re.compile(r"/cases/\d+#review$"))
    expect(page.locator(".flash")).to_contain_text(flash)


def test_three_people_issue_a_record_and_the_downloaded_pdf_verifies(page, live_app, sign_in, tmp_path):
    case_id = live_app.record_case_id
    number = record_number(case_id)
    current = page.locator("dl.current-revision")

    # the engineer computes the case and submits revision A, signing it as preparer
    sign_in(page, Role.ENGINEER)
    page.goto(f"/cases/{case_id}")
    expect(page.locator("#review")).to_contain_text("compute the case first")
    expect(page.get_by_role("button", name="Submit for check and sign")).to_have_count(0)
    page.get_by_role("button", name="Compute now").click()
    expect(page).to_have_url(re.compile(r"/cases/\d+/results/\d+$"))
    _take_step(page, "Submit for check and sign", "ready for check (e2e)", "submitted for check")
    expect(current).to_contain_text("for check")
    expect(current).to_contain_text(NAMES[Role.ENGINEER])
    expect(page.get_by_role("button", name="Check and sign")).to_have_count(0)   # not their own
    expect(page.get_by_role("link", name="Edit inputs")).to_have_count(0)         # frozen in review
    _sign_out(page)

    # the checker checks it and sends it for approval
    sign_in(page, Role.CHECKER)
    page.goto(f"/cases/{case_id}")
    expect(page.get_by_role("button", name="Approve and sign")).to_have_count(0)
    _take_step(page, "Check and sign", "basis and inputs checked (e2e)", "checked and signed by you")
    _take_step(page, "Send for approval", "", "sent for approval")
    expect(current).to_contain_text("for approval")
    _sign_out(page)

    # the approver approves it: revision 0 is issued
    sign_in(page, Role.APPROVER)
    page.goto(f"/cases/{case_id}")
    _take_step(page, "Approve and sign", "approved for issue (e2e)", "issued as revision 0")
    expect(current).to_contain_text("approved")
    for role in (Role.ENGINEER, Role.CHECKER, Role.APPROVER):
        expect(current).to_contain_text(NAMES[role])
    page.screenshot(path=SCREENSHOT_CASE, full_page=True)

    # the record PDF, downloaded as a person would
    with page.expect_download() as info:
        page.get_by_role("link", name=f"{number}-rev0.pdf").click()
    download = info.value
    assert download.suggested_filename == f"{number}-rev0.pdf"
    pdf_path = tmp_path / download.suggested_filename
    download.save_as(pdf_path)
    pdf = pdf_path.read_bytes()
    assert pdf.startswith(b"%PDF-")

    # the instance's trust root, from the verify page
    page.get_by_role("navigation", name="Main").get_by_role("link", name="Verify a record").click()
    with page.expect_download() as info:
        page.get_by_role("link", name=re.compile("trust root")).click()
    root = Path(info.value.path()).read_bytes()
    assert root.startswith(b"-----BEGIN CERTIFICATE-----")

    check = _verify_off_the_loop(pdf, root)
    assert check.ok, check.problems
    assert len(check.signatures) == 3
    assert [s.role for s in check.signatures] == ["preparer", "checker", "approver"]
    assert [s.signer_email for s in check.signatures] == [EMAILS[r] for r in (Role.ENGINEER, Role.CHECKER,
                                                                              Role.APPROVER)]
    assert all(s.intact and s.trusted for s in check.signatures)

    # the verify page agrees (an upload through the real form, with its CSRF token)
    page.get_by_label(re.compile(r"^Record PDF")).set_input_files(str(pdf_path))
    page.get_by_role("button", name="Check the record").click()
    badge = page.locator("#verdict .verdict-badge")
    expect(badge).to_have_attribute("data-verdict", "valid")
    expect(badge.locator(".verdict-label")).to_have_text("VALID")
    expect(badge.locator("svg.verdict-icon")).to_be_visible()
    expect(page.locator("#verdict")).to_contain_text(f"{number}, revision 0")
    expect(page.locator("table.signatures tbody tr")).to_have_count(3)
    page.screenshot(path=SCREENSHOT_VERIFY, full_page=True)
