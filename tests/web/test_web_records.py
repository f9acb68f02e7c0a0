"""Calculation records through the pages: the four-eyes review of a case by three people, the signed PDF, the
verify page, and what the review forbids (checking one's own work, approving as a checker, editing or deleting
a case whose record is in review or issued)."""
from __future__ import annotations

import html
import re
from dataclasses import dataclass

import pytest
from sqlalchemy import select
from web_helpers import case_form, created_id, field_error, sign_in
from werkzeug.datastructures import FileStorage, MultiDict
from werkzeug.test import encode_multipart

from jtcheck.records.models import Case, CaseRevision, RevisionStatus, Role
from jtcheck.records.snapshot import record_number
from jtcheck.reports.issue import verify_against_register
from jtcheck.reports.pki import InstancePKI
from jtcheck.reports.verify import verify_record
from jtcheck.web.database import db_session


# -- helpers ------------------------------------------------------------------------------------------------
def _client(app, world, role: Role):
    c = app.test_client()
    assert sign_in(c, world.emails[role]).status_code == 302
    return c


def _computed_case(engineer, world, **overrides) -> int:
    case_id = created_id(engineer.post("/cases/new", data=case_form(world, **overrides)))
    assert engineer.post(f"/cases/{case_id}/compute").status_code == 302
    return case_id


def _step(client, case_id: int, step: str, **data):
    return client.post(f"/cases/{case_id}/review/{step}", data=data)


def _done(resp, case_id: int) -> None:
    assert resp.status_code == 302, resp.data.decode()[:3000]
    assert resp.headers["Location"].endswith(f"/cases/{case_id}#review")


def _page(client, case_id: int) -> str:
    resp = client.get(f"/cases/{case_id}")
    assert resp.status_code == 200
    return resp.data.decode()


def _alert(page: str) -> str:
    m = re.search(r'<div class="alert" role="alert">(.*?)</div>', page, re.S)
    return html.unescape(m.group(1)) if m else ""


def _revisions(app, case_id: int) -> list[tuple[str, str]]:
    with app.app_context():
        revs = db_session().scalars(select(CaseRevision).where(CaseRevision.case_id == case_id)
                                    .order_by(CaseRevision.id)).all()
        return [(r.label, str(r.status)) for r in revs]


def _buttons(page: str) -> list[str]:
    return [html.unescape(b).strip() for b in re.findall(r'<button type="submit"[^>]*>([^<]*)</button>', page)]


def _trust_root(client) -> bytes:
    resp = client.get("/records/trust-root.pem")
    assert resp.status_code == 200
    return resp.data


@dataclass
class Issued:
    case_id: int
    tag: str
    pdf: bytes
    pages: dict[str, str]
    flashes: dict[str, str]


@pytest.fixture(scope="module")
def issued(app, world) -> Issued:
    """A case taken through the whole review in the browser's way: the engineer prepares and submits it, the
    checker checks it and sends it for approval, the approver approves it; then the PDF is downloaded."""
    eng, chk, apr = (_client(app, world, r) for r in (Role.ENGINEER, Role.CHECKER, Role.APPROVER))
    tag = "PCV-REC-1"
    case_id = _computed_case(eng, world, tag=tag)
    pages: dict[str, str] = {"draft": _page(eng, case_id)}
    flashes: dict[str, str] = {}
    for client, step, data in ((eng, "submit", {"comment": "ready for check"}),
                               (chk, "check", {"comment": "inputs agree with the datasheet"}),
                               (chk, "send-for-approval", {}),
                               (apr, "approve", {"comment": "issue for construction"})):
        pages[f"before {step}"] = _page(client, case_id)
        _done(_step(client, case_id, step, **data), case_id)
        flashes[step] = _page(client, case_id)
    pages["approved"] = _page(eng, case_id)
    resp = eng.get(f"/cases/{case_id}/revisions/0/record.pdf")
    assert resp.status_code == 200
    pages["download headers"] = str(dict(resp.headers))
    return Issued(case_id, tag, resp.data, pages, flashes)


# -- the whole review -----------------------------------------------------------------------------------
def test_three_people_review_a_case_and_the_downloaded_record_carries_their_three_signatures(app, world, issued,
                                                                                           engineer):
    case_id, pages = issued.case_id, issued.pages
    number = record_number(case_id)

    # each person was offered exactly their step, and told what happened
    assert "Review and records" in pages["draft"] and "Submit for check and sign" in _buttons(pages["draft"])
    assert "Check and sign" in _buttons(pages["before check"])
    assert "Send for approval" in _buttons(pages["before send-for-approval"])
    assert "Approve and sign" in _buttons(pages["before approve"])
    assert "Approve and sign" not in _buttons(pages["before check"])
    assert "submitted for check, signed by you as its preparer" in issued.flashes["submit"]
    assert "Revision A checked and signed by you." in issued.flashes["check"]
    assert "Revision A approved and signed by you: issued as revision 0." in issued.flashes["approve"]

    # the case page: the current revision with its three people, the revisions table, the review steps
    page = pages["approved"]
    current = page[page.index('<dl class="facts current-revision">'):]
    current = current[:current.index("</dl>")]
    assert 'data-status="approved"' in current and "Approved: issued" in current
    for name in ("Engineer User", "Checker User", "Approver User"):
        assert name in current
    assert f"{number}-rev0.pdf" in page and f"/cases/{case_id}/revisions/0/record.pdf" in page
    with app.app_context():
        rev = db_session().scalars(select(CaseRevision).where(CaseRevision.case_id == case_id)).one()
        sha = rev.record_sha256
        assert rev.record_pdf == issued.pdf
    assert sha[:16] in page
    for words in ("inputs agree with the datasheet", "issue for construction", "ready for check",
                  "approved (signed as approver)", "sent for approval"):
        assert words in page, words

    # the download: a PDF attachment named after the record
    headers = pages["download headers"]
    assert "'Content-Type': 'application/pdf'" in headers
    assert f'attachment; filename="{number}-rev0.pdf"' in headers
    assert issued.pdf.startswith(b"%PDF-")

    # three signatures, intact and trusted by the app's trust root, in the order of the review
    root = _trust_root(engineer)
    assert root.startswith(b"-----BEGIN CERTIFICATE-----")
    check = verify_record(issued.pdf, [root])
    assert check.ok, check.problems
    assert [s.role for s in check.signatures] == ["preparer", "checker", "approver"]
    assert [s.signer_email for s in check.signatures] == [world.emails[r] for r in (Role.ENGINEER, Role.CHECKER,
                                                                                   Role.APPROVER)]
    assert all(s.intact and s.trusted and not s.modified_after for s in check.signatures)
    with app.app_context():
        full = verify_against_register(db_session(), issued.pdf, [root])
    assert full.ok
    assert (full.register.found, full.register.status, full.register.revision) == (True, "approved", "0")
    assert full.register.record_number == number

    # the case list shows the record status in words
    listing = engineer.get("/cases?status=approved").data.decode()
    row = listing[listing.index(f">{issued.tag}<"):]
    row = row[:row.index("</tr>")]
    assert 'data-status="approved"' in row and ">approved<" in row


def test_the_case_list_and_the_case_page_follow_the_status(app, engineer, checker, world):
    case_id = _computed_case(engineer, world)
    tag = html.escape(str(_tag(app, case_id)))
    _done(_step(engineer, case_id, "submit"), case_id)
    listing = engineer.get("/cases?status=for+check").data.decode()
    assert f">{tag}<" in listing and 'data-status="for check"' in listing
    assert f">{tag}<" not in engineer.get("/cases?status=draft").data.decode()
    page = _page(checker, case_id)
    assert "Submitted for check: signed by the preparer and frozen, waiting for a checker." in page
    assert "the inputs are frozen while it is in review" in page


def _tag(app, case_id: int) -> str:
    with app.app_context():
        return db_session().get(Case, case_id).tag


# -- what the review forbids ---------------------------------------------------------------------------------
def test_submit_needs_a_current_result(app, engineer, world):
    case_id = created_id(engineer.post("/cases/new", data=case_form(world)))
    page = _page(engineer, case_id)
    assert "Submit for check and sign" not in _buttons(page)
    assert "compute the case first" in page
    resp = _step(engineer, case_id, "submit")
    assert resp.status_code == 422
    assert "the case has no result computed from its inputs as they are now" in _alert(resp.data.decode())
    assert _revisions(app, case_id) == [("A", "draft")]


def test_four_eyes_through_the_pages(app, world, engineer, checker, approver, admin):
    case_id = _computed_case(engineer, world)
    _done(_step(engineer, case_id, "submit"), case_id)

    # the engineer may not check (their own, or anyone's): no button, and a forged form is refused
    assert "Check and sign" not in _buttons(_page(engineer, case_id))
    resp = _step(engineer, case_id, "check", comment="looks fine to me")
    assert resp.status_code == 403
    assert "not allowed to check a calculation record" in _alert(resp.data.decode())
    # the checker may not approve, nor approve a revision that is not yet for approval
    resp = _step(checker, case_id, "approve")
    assert resp.status_code == 403
    assert "not allowed to approve a calculation record" in _alert(resp.data.decode())
    resp = _step(approver, case_id, "approve")
    assert resp.status_code == 409
    assert "revision A is 'for check'" in _alert(resp.data.decode())
    assert _revisions(app, case_id) == [("A", "for check")]

    # an approver who checked may not approve it too
    _done(_step(approver, case_id, "check"), case_id)
    _done(_step(approver, case_id, "send-for-approval"), case_id)
    page = _page(approver, case_id)
    assert "Approve and sign" not in _buttons(page)
    assert "you may not approve it (four-eyes rule)" in page
    resp = _step(approver, case_id, "approve")
    assert resp.status_code == 403
    assert "four-eyes rule: the approver must not be the checker of revision A" in _alert(resp.data.decode())
    assert _revisions(app, case_id) == [("A", "for approval")]

    # an admin who prepared a revision may not check it
    own = _computed_case(admin, world)
    _done(_step(admin, own, "submit"), own)
    page = _page(admin, own)
    assert "Check and sign" not in _buttons(page) and "you may not check it (four-eyes rule)" in page
    resp = _step(admin, own, "check")
    assert resp.status_code == 403
    assert "four-eyes rule: the checker must not be the preparer of revision A" in _alert(resp.data.decode())


def test_reject_needs_a_reason_and_sends_the_revision_back_to_draft(app, world, engineer, checker):
    case_id = _computed_case(engineer, world)
    _done(_step(engineer, case_id, "submit"), case_id)
    assert engineer.get(f"/cases/{case_id}/revisions/A/record.pdf").status_code == 200

    resp = _step(checker, case_id, "reject", reason="   ")
    assert resp.status_code == 422
    page = resp.data.decode()
    assert "reason is required" in field_error(page, "reason")
    assert _revisions(app, case_id) == [("A", "for check")]

    _done(_step(checker, case_id, "reject", reason="wrong fluid: use the winter composition"), case_id)
    assert _revisions(app, case_id) == [("A", "draft")]
    assert "Revision A sent back to draft." in _page(checker, case_id)
    page = _page(engineer, case_id)
    assert "wrong fluid: use the winter composition" in page and "rejected, back to draft" in page
    resp = engineer.get(f"/cases/{case_id}/revisions/A/record.pdf")      # the rejected PDF is not kept
    assert resp.status_code == 404 and "has no record yet" in resp.data.decode()
    # back in draft, the preparer may submit again
    assert "Submit for check and sign" in _buttons(page)


def test_the_preparer_may_withdraw_a_revision(app, world, engineer):
    case_id = _computed_case(engineer, world)
    _done(_step(engineer, case_id, "submit"), case_id)
    assert "Withdraw (back to draft)" in _buttons(_page(engineer, case_id))
    _done(_step(engineer, case_id, "reject", reason="forgot the minimum inlet temperature"), case_id)
    assert _revisions(app, case_id) == [("A", "draft")]


def test_a_form_from_a_stale_page_is_refused(app, world, engineer, checker):
    case_id = _computed_case(engineer, world)
    _done(_step(engineer, case_id, "submit"), case_id)
    page = _page(checker, case_id)
    rid = re.search(r'name="revision_id" value="(\d+)"', page).group(1)
    version = re.search(r'name="revision_version" value="(\d+)"', page).group(1)
    _done(_step(engineer, case_id, "reject", reason="withdrawn"), case_id)
    _done(_step(engineer, case_id, "submit"), case_id)
    resp = _step(checker, case_id, "check", revision_id=rid, revision_version=version)   # the page before
    assert resp.status_code == 409
    assert "the record changed since you opened the page" in _alert(resp.data.decode())
    assert _revisions(app, case_id) == [("A", "for check")]


def test_unknown_steps_missing_cases_and_draft_records_are_404(engineer, world):
    case_id = created_id(engineer.post("/cases/new", data=case_form(world)))
    assert engineer.post(f"/cases/{case_id}/review/sign-everything").status_code == 404
    assert engineer.post("/cases/999999/review/submit").status_code == 404
    assert engineer.get("/cases/999999/revisions/0/record.pdf").status_code == 404
    assert engineer.get(f"/cases/{case_id}/revisions/B/record.pdf").status_code == 404
    assert engineer.get(f"/cases/{case_id}/revisions/0/record.pdf").status_code == 404
    resp = engineer.get(f"/cases/{case_id}/revisions/A/record.pdf")
    assert resp.status_code == 404 and "revision A is a draft" in resp.data.decode()


def test_a_case_under_review_cannot_be_edited_or_deleted(app, world, engineer, admin):
    case_id = _computed_case(engineer, world)
    _done(_step(engineer, case_id, "submit"), case_id)
    assert "Edit inputs" not in _page(engineer, case_id)

    resp = engineer.get(f"/cases/{case_id}/edit")
    page = resp.data.decode()
    assert "The inputs of this case cannot be edited now." in page
    assert "revision A of this case is &#39;for check&#39;; its inputs are frozen while it is in review" in page
    assert 'name="inlet_pressure"' not in page
    resp = engineer.post(f"/cases/{case_id}/edit", data=case_form(world, tag=_tag(app, case_id), version="1",
                                                                  inlet_pressure="60"))
    assert resp.status_code == 403
    assert "its inputs are frozen while it is in review" in html.unescape(resp.data.decode())
    with app.app_context():
        assert db_session().get(Case, case_id).version == 1

    resp = admin.post(f"/cases/{case_id}/delete")
    assert resp.status_code == 409
    assert "in review cannot be deleted; reject the revision first" in html.unescape(resp.data.decode())
    assert _revisions(app, case_id) == [("A", "for check")]


def test_an_approved_case_cannot_be_deleted(app, issued, engineer, admin):
    assert "Delete case" not in _page(admin, issued.case_id)
    for client in (engineer, admin):
        resp = client.post(f"/cases/{issued.case_id}/delete")
        assert resp.status_code == 409
        message = html.unescape(resp.data.decode())
        assert f"case {issued.tag!r} cannot be deleted: it has an issued calculation record" in message
    with app.app_context():
        assert db_session().get(Case, issued.case_id) is not None


def test_an_approved_record_is_voided_and_an_edit_opens_revision_b(app, world, engineer, checker, approver):
    case_id = _computed_case(engineer, world)
    for client, step in ((engineer, "submit"), (checker, "check"), (engineer, "send-for-approval"),
                         (approver, "approve")):
        _done(_step(client, case_id, step), case_id)
    page = engineer.get(f"/cases/{case_id}/edit").data.decode()
    assert "Revision 0 of this case is approved. Saving a change opens the next revision" in page
    assert "Void the approved record (revision 0)" not in _buttons(_page(engineer, case_id))
    assert "Void the approved record (revision 0)" in _buttons(_page(approver, case_id))

    resp = _step(approver, case_id, "void", reason="")
    assert resp.status_code == 422 and field_error(resp.data.decode(), "reason")
    _done(_step(approver, case_id, "void", reason="superseded by the new station design"), case_id)
    assert _revisions(app, case_id) == [("0", "voided")]
    assert "Open a new revision" in _buttons(_page(engineer, case_id))
    _done(_step(engineer, case_id, "new-revision", comment="re-issue after the redesign"), case_id)
    assert _revisions(app, case_id) == [("0", "voided"), ("B", "draft")]
    assert engineer.get(f"/cases/{case_id}/revisions/0/record.pdf").status_code == 200   # kept unchanged


# -- the verify page ---------------------------------------------------------------------------------------
def _verify(client, pdf: bytes | None, name: str = "record.pdf", root: bytes | None = None):
    data: dict = {}
    if pdf is not None:
        data["file"] = (_bytes_io(pdf), name)
    if root is not None:
        data["trust_root"] = (_bytes_io(root), "root.pem")
    return client.post("/records/verify", data=data, content_type="multipart/form-data")


def _bytes_io(data: bytes):
    import io

    return io.BytesIO(data)


def _verdict(page: str) -> str:
    m = re.search(r'data-verdict="([^"]+)"', page)
    assert m, page[:2000]
    return m.group(1)


def test_verify_page_says_valid_for_the_issued_record(checker, issued, world):
    page = checker.get("/records/verify").data.decode()
    assert 'enctype="multipart/form-data"' in page and "/records/trust-root.pem" in page
    assert "SHA-256" in page and "fingerprint" in page

    resp = _verify(checker, issued.pdf, f"{record_number(issued.case_id)}-rev0.pdf")
    assert resp.status_code == 200
    page = resp.data.decode()
    assert _verdict(page) == "valid"
    assert "VALID." in page and "NOT VALID" not in page
    assert f"{record_number(issued.case_id)}, revision 0" in page
    for name in ("Engineer User", "Checker User", "Approver User"):
        assert name in page
    table = page[page.index('<table class="signatures">'):]
    table = table[:table.index("</table>")]
    assert table.count("&#10003; yes") == 6         # intact and trusted, three times
    assert table.count("&#10003; no") == 3          # not changed afterwards, three times
    assert "&#10007;" not in table
    assert "Why it is not valid" not in page


def test_verify_page_says_not_valid_for_a_tampered_copy(checker, issued):
    tampered = bytearray(issued.pdf)
    k = len(tampered) // 3
    tampered[k] ^= 0x01
    resp = _verify(checker, bytes(tampered))
    assert resp.status_code == 200
    page = html.unescape(resp.data.decode())
    assert _verdict(page) == "not valid" and "NOT VALID." in page
    reasons = page[page.index("Why it is not valid"):]
    reasons = reasons[:reasons.index("</ul>")]
    assert "the file does not match any record stored in the register" in reasons
    assert "signature 1 (preparer): digest does not match: the signed content was altered" in reasons


def test_verify_page_with_a_foreign_trust_root_says_not_trusted(checker, issued, tmp_path):
    foreign = InstancePKI(tmp_path / "other", passphrase=b"another instance").trust_root_pem()
    resp = _verify(checker, issued.pdf, root=foreign)
    page = resp.data.decode()
    assert _verdict(page) == "not valid"
    assert page.count("&#10007; NO") == 3             # trusted: no, for each signature
    assert "root.pem" in page


@pytest.mark.parametrize(("pdf", "name", "words"), [
    (None, "", "choose the PDF file of a record to check"),
    (b"", "empty.pdf", "empty.pdf is empty"),
    (b"name,value\nmethane,0.9\n", "fluid.csv", "fluid.csv is not a PDF document"),
])
def test_verify_page_refuses_what_is_not_a_pdf_naming_the_field(checker, pdf, name, words):
    resp = _verify(checker, pdf, name)
    assert resp.status_code == 422
    assert words in html.unescape(field_error(resp.data.decode(), "file") or "")
    assert "data-verdict" not in resp.data.decode()


def test_verify_page_refuses_a_bad_trust_root_and_a_too_large_upload(app, checker, issued, monkeypatch):
    resp = _verify(checker, issued.pdf, root=b"-----BEGIN CERTIFICATE-----\nnot base64\n-----END CERTIFICATE-----\n")
    assert resp.status_code == 422
    assert field_error(resp.data.decode(), "trust_root")

    monkeypatch.setitem(app.config, "RECORD_UPLOAD_MAX_BYTES", 4096)
    resp = _verify(checker, issued.pdf)
    assert resp.status_code == 413
    assert "the upload is too large" in resp.data.decode()


def test_the_verify_page_takes_uploads_larger_than_the_general_limit_with_csrf_on(app, db_url, world,
                                                                                   tmp_path):
    """The CSRF check reads the form before the view runs: the upload limit must be raised before it."""
    from web_helpers import PASSWORD, app_config

    from jtcheck.web import create_app

    strict = create_app(app_config(db_url, str(tmp_path / "instance"), WTF_CSRF_ENABLED=True))
    try:
        c = strict.test_client()

        def token(path: str) -> str:
            return re.search(r'name="csrf_token" value="([^"]+)"', c.get(path).data.decode()).group(1)

        resp = c.post("/login", data={"email": world.emails[Role.CHECKER], "password": PASSWORD,
                                      "csrf_token": token("/login")})
        assert resp.status_code == 302
        big = b"%PDF-1.7\n" + b"0" * (2 * strict.config["MAX_CONTENT_LENGTH"])
        # the body is encoded here, in memory (the test client would spool it to a file it does not close)
        boundary, body = encode_multipart(MultiDict({"csrf_token": token("/records/verify"),
                                                     "file": FileStorage(_bytes_io(big), "big.pdf")}))
        resp = c.post("/records/verify", data=body, content_type=f"multipart/form-data; boundary={boundary}")
        assert resp.status_code == 200, resp.data.decode()[:2000]
        assert _verdict(resp.data.decode()) == "not valid"
        # elsewhere the general limit holds
        resp = c.post("/cases/new", data=body, content_type=f"multipart/form-data; boundary={boundary}")
        assert resp.status_code == 413
    finally:
        strict.extensions["jtcheck_db"].engine.dispose()


def test_trust_root_download(engineer):
    resp = engineer.get("/records/trust-root.pem")
    assert resp.status_code == 200
    assert resp.headers["Content-Type"].startswith("application/x-pem-file")
    assert resp.headers["Content-Disposition"] == 'attachment; filename="jtcheck-trust-root.pem"'
    assert resp.data.startswith(b"-----BEGIN CERTIFICATE-----")


def test_a_signing_failure_stores_nothing_and_says_so(app, world, engineer, monkeypatch):
    from jtcheck.web.records import signer as records_pki

    def broken_signer():
        def sign(req):
            raise RuntimeError("/srv/secret/path exploded")
        return sign

    monkeypatch.setattr(records_pki, "app_signer", broken_signer)
    case_id = _computed_case(engineer, world)
    resp = _step(engineer, case_id, "submit")
    assert resp.status_code == 500
    page = html.unescape(resp.data.decode())
    assert "the record could not be signed: making or signing the PDF failed (RuntimeError)" in page
    assert "/srv/secret" not in page
    assert _revisions(app, case_id) == [("A", str(RevisionStatus.DRAFT))]
