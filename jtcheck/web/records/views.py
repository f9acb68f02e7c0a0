"""Pages of the calculation records: the review steps of a case's revisions, the signed record PDFs, and a page
that checks a record file (its signatures and whether it is the record stored in the register).

Routes (blueprint ``records``; every one needs a signed-in user):

==============================================  ========================================================
``POST /cases/<id>/review/<step>``              a review step of the case's record: ``submit``, ``check``,
                                                ``send-for-approval``, ``approve``, ``reject``, ``void``,
                                                ``new-revision`` (form field ``comment``, or ``reason``
                                                for reject and void)
``GET /cases/<id>/revisions/<label>/record.pdf``  the record PDF as signed so far (attachment
                                                ``<record number>-rev<label>.pdf``)
``GET, POST /records/verify``                   upload a record PDF (field ``file``, at most
                                                :data:`UPLOAD_MAX_BYTES`) and optionally a trust root
                                                (field ``trust_root``, PEM or DER); shows the verdict
``GET /records/trust-root.pem``                 the instance's CA certificate (the default trust root)
==============================================  ========================================================

The case page (:mod:`jtcheck.web.case_page`) shows the review section from
:func:`jtcheck.web.records.review.review_context`: the buttons offered are those the user may use now, but
:mod:`jtcheck.records.workflow` decides; a refused step (forged or stale) shows the case page again with the
service's message (403 for a refusal, 409 for a step the revision's status does not allow or a record changed
meanwhile, 422 for bad input).

The signing code (WeasyPrint, pyHanko) is imported on the first signature or verification, not with the app.
"""
from __future__ import annotations

import hashlib
from collections.abc import Callable
from typing import Any

from flask import Blueprint, Flask, current_app, flash, redirect, render_template, request, url_for
from sqlalchemy import select
from sqlalchemy.orm import defer

from jtcheck.errors import InputError
from jtcheck.records import service, workflow
from jtcheck.records.errors import (
    ConcurrentEditError,
    PermissionDenied,
    RecordSigningError,
    RevisionStateError,
)
from jtcheck.records.models import CaseRevision, RevisionStatus
from jtcheck.records.snapshot import record_number
from jtcheck.reports.pki import PKIError
from jtcheck.web.case_page import render_case_page
from jtcheck.web.database import db_session
from jtcheck.web.downloads import attachment
from jtcheck.web.errors import UPLOAD_ENDPOINTS, ApiError, is_timestamp_error
from jtcheck.web.forms import FormState
from jtcheck.web.records.review import STATUS_WORDS, STEPS
from jtcheck.web.security import require_viewer

bp = Blueprint("records", __name__)

#: Largest record file the verify page accepts (config ``RECORD_UPLOAD_MAX_BYTES`` overrides it).
UPLOAD_MAX_BYTES = 20 * 1024 * 1024
#: Largest trust-root file accepted on the verify page.
TRUST_ROOT_MAX_BYTES = 256 * 1024


# -- set-up ------------------------------------------------------------------------------------------------
def _upload_limit() -> None:
    if request.endpoint in UPLOAD_ENDPOINTS:
        request.max_content_length = current_app.config.get("RECORD_UPLOAD_MAX_BYTES") or UPLOAD_MAX_BYTES


def init_app(app: Flask) -> None:
    """Raise the request size limit for the upload pages.  Call before ``CSRFProtect(app)``: its check reads
    the form, and the form is parsed with the limit in force at that moment."""
    app.before_request(_upload_limit)


# -- the review steps ------------------------------------------------------------------------------------
def _signer() -> workflow.SignFn:
    """The app's signing callback; failures other than the known ones become :class:`RecordSigningError`."""
    from jtcheck.web.records.signer import app_signer

    sign = app_signer()

    def signed(req: workflow.SigningRequest) -> bytes:
        try:
            return sign(req)
        except (RecordSigningError, PKIError):
            raise
        except Exception as exc:
            if is_timestamp_error(exc):
                raise
            current_app.logger.exception("making or signing the record of case %s failed", req.case_id)
            raise RecordSigningError(f"making or signing the PDF failed ({type(exc).__name__}); the error has "
                                     "been logged") from exc

    return signed


_RUN: dict[str, Callable[..., CaseRevision]] = {
    "submit": lambda s, u, c, text: workflow.submit_for_check(s, u, c, _signer(), comment=text),
    "check": lambda s, u, c, text: workflow.check(s, u, c, _signer(), comment=text),
    "send-for-approval": lambda s, u, c, text: workflow.send_for_approval(s, u, c, comment=text),
    "approve": lambda s, u, c, text: workflow.approve(s, u, c, _signer(), comment=text),
    "reject": lambda s, u, c, text: workflow.reject(s, u, c, text),
    "void": lambda s, u, c, text: workflow.void(s, u, c, text),
    "new-revision": lambda s, u, c, text: workflow.new_revision(s, u, c, comment=text),
}


def _done_message(step: str, before: str, rev: CaseRevision) -> str:
    return {
        "submit": f"Revision {rev.label} submitted for check, signed by you as its preparer.",
        "check": f"Revision {rev.label} checked and signed by you.",
        "send-for-approval": f"Revision {rev.label} sent for approval.",
        "approve": f"Revision {before} approved and signed by you: issued as revision {rev.label}.",
        "reject": f"Revision {rev.label} sent back to draft.",
        "void": f"Revision {rev.label} voided.",
        "new-revision": f"Revision {rev.label} opened as a draft.",
    }[step]


def _stale(session, case_id: int, step: str) -> str | None:
    """A message if the page the form came from showed another state of the revision than the stored one
    (hidden fields ``revision_id``/``revision_version``; a form without them is not checked here)."""
    rid, version = request.form.get("revision_id", ""), request.form.get("revision_version", "")
    if not (rid.isdigit() and version.isdigit()):
        return None
    rev = session.scalars(select(CaseRevision).where(CaseRevision.id == int(rid), CaseRevision.case_id == case_id)
                          .options(defer(CaseRevision.record_pdf), defer(CaseRevision.snapshot))
                          .execution_options(populate_existing=True)).first()
    if rev is None or rev.version != int(version):
        what = f"revision {rev.label} is now {rev.status}" if rev is not None else "the revision no longer exists"
        return (f"the record changed since you opened the page ({what}); nothing was done. Look at it again, "
                f"then choose the step anew")
    return None


@bp.route("/cases/<int:case_id>/review/<step>", methods=["POST"])
def review_step(case_id: int, step: str):
    spec = STEPS.get(step)
    if spec is None:
        raise ApiError(404, f"there is no review step {step!r}; the steps are: {', '.join(STEPS)}")
    user = require_viewer("review calculation records")
    session = db_session()
    service.get_case(session, user, case_id)     # 404 for a missing case, before anything else
    form = FormState.from_request((spec.field,))
    before = workflow.current_revision(session, case_id)
    before_label = before.label if before is not None else ""
    status = 200
    stale = _stale(session, case_id, step)
    if stale is not None:
        form.general.append(stale)
        status = 409
    else:
        try:
            rev = _RUN[step](session, user, case_id, form.get(spec.field))
        except InputError as exc:
            if exc.field == spec.field:
                form.add(spec.field, exc.message)
            else:
                form.general.append(exc.message)
            status = 422
        except PermissionDenied as exc:          # also the four-eyes rule and a case under review
            form.general.append(str(exc))
            status = 403
        except (RevisionStateError, ConcurrentEditError) as exc:
            form.general.append(str(exc))
            status = 409
        else:
            flash(_done_message(step, before_label, rev))
            return redirect(url_for("cases.view", case_id=case_id, _anchor="review"))
    return render_case_page(service.get_case(session, user, case_id), status=status, review_form=form,
                            review_step=step)


# -- the record files --------------------------------------------------------------------------------------
@bp.route("/cases/<int:case_id>/revisions/<label>/record.pdf")
def record_pdf(case_id: int, label: str):
    user = require_viewer("download calculation records")
    rev = workflow.get_revision(db_session(), user, case_id, label)
    if rev.record_pdf is None:
        raise ApiError(404, f"revision {rev.label} is a draft: it has no record yet (the record is made when the "
                            "revision is submitted for check)")
    resp = attachment(rev.record_pdf, "application/pdf", f"{record_number(case_id)}-rev{rev.label}.pdf")
    resp.headers["X-Record-SHA256"] = rev.record_sha256 or hashlib.sha256(rev.record_pdf).hexdigest()
    return resp


def _trust_root_pem() -> bytes:
    from jtcheck.web.records.signer import trust_root_pem

    return trust_root_pem()


def _certificate_facts(pem: bytes) -> dict[str, str]:
    """Subject and SHA-256 fingerprint of the first certificate in ``pem`` (empty if it cannot be read)."""
    from cryptography import x509
    from cryptography.hazmat.primitives import hashes

    try:
        cert = x509.load_pem_x509_certificate(pem)
    except ValueError:
        return {}
    digest = cert.fingerprint(hashes.SHA256()).hex().upper()
    return {"subject": cert.subject.rfc4514_string(),
            "fingerprint": ":".join(digest[k:k + 2] for k in range(0, len(digest), 2)),
            "valid_until": cert.not_valid_after_utc.strftime("%Y-%m-%d")}


@bp.route("/records/trust-root.pem")
def trust_root():
    require_viewer("download the trust root")
    return attachment(_trust_root_pem(), "application/x-pem-file", "jtcheck-trust-root.pem")


# -- checking a record file ----------------------------------------------------------------------------------
def _read_upload(form: FormState, name: str, limit: int) -> tuple[bytes, str]:
    """The bytes and file name of upload ``name`` (empty if none was chosen)."""
    upload = request.files.get(name)
    if upload is None:
        return b"", ""
    data = upload.stream.read(limit + 1)
    filename = (upload.filename or "")[:200]
    if len(data) > limit:
        form.add(name, f"the file is larger than {limit // 1024} KiB")
        return b"", filename
    return data, filename


@bp.route("/records/verify", methods=["GET", "POST"])
def verify():
    require_viewer("verify calculation records")
    limit = request.max_content_length or UPLOAD_MAX_BYTES
    try:
        root_pem: bytes | None = _trust_root_pem()
    except PKIError as exc:      # e.g. pre-issued signer files and no JTCHECK_CA_CERT: nothing to publish
        current_app.logger.warning("no trust root to offer on the verify page: %s", exc)
        root_pem = None
    context: dict[str, Any] = {"form": FormState(), "outcome": None, "limit_mb": limit / (1024 * 1024),
                               "instance_root": _certificate_facts(root_pem) if root_pem else {}, "filename": "",
                               "root_name": ""}
    if request.method == "GET":
        return render_template("records/verify.html", **context)
    form = context["form"]
    pdf, filename = _read_upload(form, "file", limit)
    context["filename"] = filename
    if not form.error("file"):
        if not pdf and not filename:
            form.add("file", "choose the PDF file of a record to check")
        elif not pdf:
            form.add("file", f"{filename or 'the file'} is empty: choose the PDF file of a record")
        elif b"%PDF-" not in pdf[:1024]:
            form.add("file", f"{filename or 'the file'} is not a PDF document (it does not start with %PDF-)")
    root, root_name = _read_upload(form, "trust_root", TRUST_ROOT_MAX_BYTES)
    if root_name and not root and not form.error("trust_root"):
        form.add("trust_root", f"{root_name} is empty: choose a certificate file (PEM or DER), or none to use this "
                               "instance's certificate authority")
    context["root_name"] = root_name if root else ""
    if not root and root_pem is None and not form.error("trust_root"):
        form.add("trust_root", "this instance publishes no trust root: upload the certificate of the authority that "
                               "issued the signers' certificates")
    if form.ok:
        from jtcheck.reports.issue import verify_against_register

        try:
            roots = [root] if root else [root_pem or b""]
            context["outcome"] = verify_against_register(db_session(), pdf, roots)
        except InputError as exc:
            form.add("trust_root" if exc.field.startswith("trust_root") else "file", exc.message)
    if not form.ok:
        return render_template("records/verify.html", **context), 422
    outcome = context["outcome"]
    reasons = list(dict.fromkeys([*outcome.signatures.problems, *outcome.problems]))
    context.update(reasons=reasons, status_words=STATUS_WORDS,
                   matched_status=RevisionStatus(outcome.register.status) if outcome.register.found else None)
    return render_template("records/verify.html", **context)
