"""Issuing and verifying records: the glue between the review workflow, the PDF and the signatures.

The review workflow (:mod:`jtcheck.records.workflow`) decides who may sign what and stores the
result; it asks for each signature through a callback so that the register never imports this
package.  :func:`record_signer` makes that callback: for the preparer it renders the record from the
revision's frozen snapshot, adds the three empty signature fields and signs the first; the checker
and the approver each add their signature to the stored PDF as an incremental update.

:func:`verify_against_register` joins the signature check of :mod:`jtcheck.reports.verify` with the
register: the file's SHA-256 must be the stored hash of an issued revision.
"""
from __future__ import annotations

import datetime as dt
import hashlib
from dataclasses import dataclass, field
from typing import Any

from sqlalchemy import select
from sqlalchemy.orm import Session

from jtcheck.records.models import CaseRevision
from jtcheck.records.workflow import SignFn, SigningRequest
from jtcheck.reports.pki import InstancePKI
from jtcheck.reports.record import date_text, history_fields, issued_fields, render_record
from jtcheck.reports.record_fields import text_fields
from jtcheck.reports.signing import add_signature_fields, sign_record
from jtcheck.reports.verify import RecordVerification, verify_record

#: How each signing role is named on the stamp and in the signature's reason.
ROLE_WORDS = {"preparer": "prepared", "checker": "checked", "approver": "approved"}


def record_signer(pki: InstancePKI, *, paper: str = "A4", timestamper: Any = None, location: str = "") -> SignFn:
    """The signing callback the review workflow calls at submit, check and approve."""

    def sign(req: SigningRequest) -> bytes:
        now = date_text(dt.datetime.now(dt.UTC))
        fill: dict[str, str] = {}
        if req.pdf is None:
            rendered = render_record(req.snapshot, paper, issued_at=now)
            boxes = {role: (b.page_index, b.x1, b.y1, b.x2, b.y2) for role, b in rendered.signature_boxes.items()}
            pdf = add_signature_fields(rendered.pdf, boxes)
        else:
            pdf = req.pdf
            fields = text_fields(pdf)
            if req.role == "checker" and "history-check-at" in fields:
                fill = history_fields("check", req.label, "checked", now, f"checked {req.user_name}", req.comment)
            elif req.role == "approver" and "revision-cover" in fields:
                n_pages = sum(1 for name in fields if name.startswith("revision-page-"))
                fill = issued_fields(req.label, req.issued_label, now, req.user_name, req.comment, n_pages)
        word = ROLE_WORDS[req.role]
        signer = pki.signer_for(req.user_id, req.user_name, req.user_email, req.role)
        lines = [f"{word.capitalize()} by {req.user_name}", req.user_email]
        if req.role == "approver":
            lines.insert(0, f"APPROVED: issued as revision {req.issued_label}")
        return sign_record(pdf, req.role, signer, role_text=word, signer_name=req.user_name,
                           reason=f"jtcheck record {req.snapshot.get('record_number', '')} revision "
                                  f"{req.issued_label}: {word}", location=location, stamp_lines=lines,
                           timestamper=timestamper, fill=fill)

    return sign


@dataclass(frozen=True)
class RegisterMatch:
    """Where a file stands in the register."""

    found: bool
    record_number: str = ""
    revision: str = ""
    status: str = ""
    case_id: int | None = None
    snapshot_sha256: str = ""
    message: str = ""
    #: False when no register was there to ask (a file checked on its own): the verdict rests on the signatures.
    consulted: bool = True


@dataclass(frozen=True)
class FullVerification:
    """Signatures plus the register: ``ok`` only when every signature is intact and trusted, nothing changed
    after signing, and the file is the stored record (when a register was consulted; without one the verdict
    rests on the signatures alone, and :attr:`RegisterMatch.message` says so)."""

    signatures: RecordVerification
    register: RegisterMatch
    problems: tuple[str, ...] = field(default=())

    @property
    def ok(self) -> bool:
        return (self.signatures.ok and (self.register.found or not self.register.consulted)
                and not self.problems)


def register_match(session: Session, pdf: bytes) -> RegisterMatch:
    """Find the revision whose stored record is exactly this file (by SHA-256)."""
    digest = hashlib.sha256(pdf).hexdigest()
    rev = session.scalar(select(CaseRevision).where(CaseRevision.record_sha256 == digest))
    if rev is None:
        return RegisterMatch(False, message="the file does not match any record stored in the register "
                                            f"(SHA-256 {digest[:16]}...)")
    from jtcheck.records.snapshot import record_number

    return RegisterMatch(True, record_number(rev.case_id), rev.label, str(rev.status), rev.case_id,
                         rev.snapshot_sha256 or "",
                         f"matches the stored record {record_number(rev.case_id)} revision {rev.label} ({rev.status})")


def verify_against_register(session: Session | None, pdf: bytes, trust_roots: list[bytes],
                            no_register: str = "") -> FullVerification:
    """Check the signatures against ``trust_roots`` and the file against the register (when a session is given).

    Without a session the file is checked on its own: ``no_register`` (else a default sentence) says why no
    register was consulted, and the verdict rests on the signatures.
    """
    sigs = verify_record(pdf, trust_roots)
    if session is None:
        reg = RegisterMatch(False, consulted=False, message=no_register or (
            "no register was consulted: the signatures alone were checked, not that the file is a stored record"))
    else:
        reg = register_match(session, pdf)
    problems = () if reg.found or not reg.consulted else (reg.message,)
    return FullVerification(sigs, reg, problems)
