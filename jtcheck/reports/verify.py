"""Verification of a signed calculation record: who signed, in which role, when, and whether it still holds.

:func:`verify_record` checks every signature of the PDF with pyHanko against the given trust roots (the
instance CA's certificate, :meth:`jtcheck.reports.pki.InstancePKI.trust_root_pem`):

* **intact** - the digest over the signed byte ranges matches and the signature value verifies;
* **trusted** - the signer's certificate chains to one of the trust roots and has the key usage pyHanko wants
  for signatures (non-repudiation), valid at the validation time;
* **coverage** - the last signature covers the whole file, each earlier one its whole revision;
* **changes afterwards** - every incremental update after a signature must be a later signature (one per
  revision, ISO 32000-1 §7.5.6); pyHanko's difference analysis must not find more than form filling (which is
  what filling the next signature field is).  An unsigned update - an annotation, a new /Info, a replaced page
  content stream - or anything the analysis finds suspicious means the document was changed after signing.

``ok`` holds exactly when there is at least one signature and no problem was found.  Problems are plain
sentences; a signature's own problems are repeated in the overall list prefixed "signature 2 (checker): ",
except the changes that the document-level "the document was changed after the last signature (an unsigned
incremental update)" already explains (they stay in the signature's own list).

A file that cannot be parsed gives ``ok=False`` with a problem, never an exception (empty input is an
:class:`~jtcheck.errors.InputError`).
"""
from __future__ import annotations

import datetime as dt
import functools
import hashlib
import io
import logging
from dataclasses import dataclass

from asn1crypto import x509 as asn1_x509
from pyhanko.pdf_utils.reader import PdfFileReader
from pyhanko.sign.diff_analysis import ModificationLevel, SuspiciousModification
from pyhanko.sign.validation import SignatureCoverageLevel, validate_pdf_signature, validate_pdf_timestamp
from pyhanko_certvalidator import ValidationContext

from jtcheck.errors import InputError
from jtcheck.reports.loops import outside_event_loop

__all__ = ["ROLE_FROM_WORD", "RecordVerification", "SignatureCheck", "load_trust_roots", "verify_record"]

logger = logging.getLogger(__name__)

#: The word after the last colon of a signature's /Reason -> the role reported.
ROLE_FROM_WORD = {"prepared": "preparer", "checked": "checker", "approved": "approver"}
DOC_TIMESTAMP_ROLE = "document time-stamp"

_COVERAGE_WORDS = {
    SignatureCoverageLevel.ENTIRE_FILE: "the whole file",
    SignatureCoverageLevel.ENTIRE_REVISION: "its revision (later revisions follow)",
    SignatureCoverageLevel.CONTIGUOUS_BLOCK_FROM_START: "only part of its revision",
    SignatureCoverageLevel.UNCLEAR: "an unclear part of the file",
}


@dataclass(frozen=True)
class SignatureCheck:
    """The verdict on one signature (numbered in signing order in the problems of :class:`RecordVerification`).

    ``signer_name`` and ``signer_email`` are those of the signer's certificate (the name in the signature's
    /Name when the certificate's common name is a truncation of it); ``role`` is read from /Reason ("preparer",
    "checker", "approver"; else the reason's last part).  Times are timezone-aware UTC.  ``timestamp_at`` is
    the time of an intact RFC 3161 signature time-stamp (``timestamp_trusted`` says whether its TSA chains to
    a trust root; an untrusted time-stamp is reported, not counted as a problem).  A signature whose certificate
    has expired since counts as trusted when a trusted time-stamp shows it was made while the certificate was
    valid (``trusted_at_timestamp``); without a time-stamp an expired certificate is not trusted.
    """

    field: str
    signer_name: str
    signer_email: str
    role: str | None
    signed_at: dt.datetime | None
    timestamp_at: dt.datetime | None
    intact: bool
    trusted: bool
    covers_whole_file: bool
    modified_after: bool
    problems: tuple[str, ...] = ()
    # further detail
    revision: int = 0
    coverage: str = ""
    modification_level: str | None = None
    modification_detail: str = ""
    reason: str = ""
    name_in_signature: str = ""
    certificate_subject: str = ""
    timestamp_trusted: bool | None = None
    trusted_at_timestamp: bool = False


@dataclass(frozen=True)
class RecordVerification:
    """The verdict on a record: ``ok``, the signatures in signing order, plain-worded problems, the file's
    SHA-256 (hex) and its number of revisions (the original document counts as one)."""

    ok: bool
    signatures: tuple[SignatureCheck, ...]
    problems: tuple[str, ...]
    file_sha256: str
    revisions: int = 0


def load_trust_roots(trust_roots: list[bytes]) -> list[asn1_x509.Certificate]:
    """Certificates from PEM (one or more per item) or DER byte strings."""
    from pyhanko.keys import load_certs_from_pemder_data

    out: list[asn1_x509.Certificate] = []
    for k, item in enumerate(trust_roots or []):
        if isinstance(item, asn1_x509.Certificate):
            out.append(item)
            continue
        try:
            if b"-----BEGIN" in item:
                certs = list(load_certs_from_pemder_data(item))
            else:
                certs = [asn1_x509.Certificate.load(bytes(item))]
                _ = certs[0].subject   # parse now
        except Exception as exc:
            raise InputError(f"trust_roots[{k}]", f"not a PEM or DER X.509 certificate ({exc})") from exc
        if not certs:
            raise InputError(f"trust_roots[{k}]", "no certificate in it")
        out.extend(certs)
    return out


def _utc(value: dt.datetime | None) -> dt.datetime | None:
    if value is None:
        return None
    if value.tzinfo is None:
        return value.replace(tzinfo=dt.UTC)
    return value.astimezone(dt.UTC)


def _cert_identity(cert: asn1_x509.Certificate | None) -> tuple[str, str, str]:
    """(common name, e-mail, subject) of a certificate."""
    if cert is None:
        return "", "", ""
    try:
        subject = cert.subject.native
        cn = subject.get("common_name") or ""
        if isinstance(cn, list):
            cn = cn[0]
        email = ""
        san = cert.subject_alt_name_value
        if san is not None:
            for gn in san:
                if gn.name == "rfc822_name":
                    email = gn.native
                    break
        if not email:
            email = subject.get("email_address") or ""
            if isinstance(email, list):
                email = email[0]
        return str(cn), str(email), cert.subject.human_friendly
    except Exception:           # a malformed certificate still gets a verdict
        return "", "", ""


def _role_from_reason(reason: str) -> str | None:
    if not reason:
        return None
    word = reason.rsplit(":", 1)[-1].strip()
    return ROLE_FROM_WORD.get(word.lower(), word or None)


def _trust_problem(status) -> str:
    indic = getattr(status, "trust_problem_indic", None)
    name = getattr(indic, "name", "") or ""
    if name in ("", "NO_CERTIFICATE_CHAIN_FOUND", "CERTIFICATE_CHAIN_GENERAL_FAILURE"):
        return "not trusted: the signer's certificate does not chain to the given trust root"
    if name in ("EXPIRED", "OUT_OF_BOUNDS_NO_POE", "OUT_OF_BOUNDS_NOT_REVOKED", "NOT_YET_VALID"):
        return "not trusted: the signer's certificate was not valid (expired or not yet valid) at the validation time"
    if name.startswith("REVOKED"):
        return "not trusted: the signer's certificate (or its CA) was revoked"
    if name == "CHAIN_CONSTRAINTS_FAILURE":
        return ("not trusted: the signer's certificate is not fit for signing documents (key usage must include "
                "non-repudiation) or its chain breaks a constraint")
    if name.startswith("CRYPTO_CONSTRAINTS"):
        return "not trusted: the certificate chain uses an algorithm that is not allowed"
    return f"not trusted: the signer's certificate could not be validated ({name})"


_EXPIRY_INDICATIONS = {"EXPIRED", "OUT_OF_BOUNDS_NO_POE", "OUT_OF_BOUNDS_NOT_REVOKED"}


def _expired(status) -> bool:
    return getattr(getattr(status, "trust_problem_indic", None), "name", "") in _EXPIRY_INDICATIONS


def _trusted_at_timestamp(sig, status, context) -> bool:
    """Whether a signature whose certificate has expired since was trusted when a trusted RFC 3161 time-stamp
    proves it existed (the time-stamp is the proof of existence PAdES B-T relies on; the signer's own claimed
    time is not)."""
    tv = status.timestamp_validity
    if tv is None or not (tv.intact and tv.valid and tv.trusted):
        return False
    try:
        again = validate_pdf_signature(sig, context(moment=tv.timestamp), ts_validation_context=context(True),
                                       skip_diff=True)
    except Exception:
        logger.info("signature %s: validation at its time-stamp failed", sig.field_name, exc_info=True)
        return False
    return bool(again.intact and again.valid and again.trusted)


def _modification_problem(status) -> tuple[str | None, str]:
    """(A sentence on changes after the signature that pyHanko's difference analysis found, or None; the
    analysis's own technical account)."""
    diff = getattr(status, "diff_result", None)
    level = status.modification_level
    detail = str(diff).strip() if isinstance(diff, SuspiciousModification) else ""
    if isinstance(diff, SuspiciousModification) or (level is not None and level > ModificationLevel.ANNOTATIONS):
        return ("the document was changed after this signature: objects other than later signatures were added "
                "or replaced (page content, resources or document structure)"), detail
    if level == ModificationLevel.ANNOTATIONS:
        return "the document was changed after this signature: annotations were added or changed", detail
    if getattr(status, "docmdp_ok", None) is False:
        return "the document was changed after this signature beyond what the signature permits", detail
    return None, detail


def _unreadable(sha: str, what: str, exc: BaseException) -> RecordVerification:
    text = str(exc).strip() or type(exc).__name__
    return RecordVerification(False, (), (f"{what} ({text})",), sha)


def _verify_record(pdf: bytes, trust_roots: list[bytes], *, tsa_roots: list[bytes] | None = None,
                  at: dt.datetime | None = None) -> RecordVerification:
    """Check every signature of ``pdf`` against ``trust_roots`` (PEM or DER certificates).

    ``tsa_roots`` are further roots trusted for time-stamps only (RFC 3161 time-stamp authorities); the
    ``trust_roots`` are trusted for time-stamps too.  ``at`` is the validation time (default now).  Nothing is
    fetched from the network (no revocation checks: the instance CA publishes no revocation information).
    """
    if not isinstance(pdf, (bytes, bytearray)) or not pdf:
        raise InputError("pdf", "empty: a PDF document is required")
    pdf = bytes(pdf)
    sha = hashlib.sha256(pdf).hexdigest()
    roots = load_trust_roots(trust_roots)
    if not roots:
        raise InputError("trust_roots", "at least one trust root certificate is required")
    try:
        reader = PdfFileReader(io.BytesIO(pdf), strict=False)
        total = reader.xrefs.total_revisions
        embedded = sorted(reader.embedded_signatures, key=lambda s: s.signed_revision)
    except Exception as exc:
        return _unreadable(sha, "not a readable PDF document", exc)

    ts_roots = roots + load_trust_roots(tsa_roots or [])

    def context(for_timestamps: bool = False, moment: dt.datetime | None = None) -> ValidationContext:
        return ValidationContext(trust_roots=ts_roots if for_timestamps else roots, allow_fetching=False,
                                 moment=moment or at)

    signed_revisions = [s.signed_revision for s in embedded]
    checks: list[SignatureCheck] = []
    problems: list[str] = []
    if not embedded:
        problems.append("the document has no signatures")
    elif signed_revisions[-1] < total - 1:
        problems.append("the document was changed after the last signature (an unsigned incremental update)")
    summaries: list[tuple[str, tuple[str, ...]]] = []
    for k, sig in enumerate(embedded):
        check, summary = _check_one(sig, k, signed_revisions, total, context)
        checks.append(check)
        summaries.append((f"signature {k + 1} ({check.field or check.role or 'unnamed'})", summary))
    if checks and signed_revisions[-1] == total - 1 and checks[-1].intact and not checks[-1].covers_whole_file:
        problems.append("the last signature does not cover the whole file (data was appended after it)")
    problems += [f"{label}: {p}" for label, summary in summaries for p in summary]
    ok = bool(checks) and not problems
    return RecordVerification(ok, tuple(checks), tuple(problems), sha, total)


def _check_one(sig, index: int, signed_revisions: list[int], total: int,
               context) -> tuple[SignatureCheck, tuple[str, ...]]:
    """The check of one signature, and those of its problems that belong in the document's list (changes that
    only the document-level "changed after the last signature" explains are left out there)."""
    rev = signed_revisions[index]
    field_name = ""
    reason = name_in_sig = ""
    try:
        field_name = str(sig.field_name or "")
        sig_obj = sig.sig_object
        reason = str(sig_obj.get("/Reason", "") or "")
        name_in_sig = str(sig_obj.get("/Name", "") or "")
        is_doc_ts = sig.sig_object_type == "/DocTimeStamp"
    except Exception as exc:
        problem = f"could not be read ({exc})"
        return SignatureCheck(field_name, "", "", None, None, None, False, False, False, True, (problem,),
                              revision=rev + 1), (problem,)
    problems: list[str] = []
    try:
        if is_doc_ts:
            status = validate_pdf_timestamp(sig, validation_context=context(True))
        else:
            status = validate_pdf_signature(sig, context(), ts_validation_context=context(True))
    except Exception as exc:
        logger.info("signature %s could not be validated", field_name, exc_info=True)
        problem = f"could not be checked: {str(exc).strip() or type(exc).__name__}"
        cn, email, subject = _cert_identity(_safe_signer_cert(sig))
        return SignatureCheck(field_name, name_in_sig or cn, email, _role_from_reason(reason), None, None, False,
                              False, False, True, (problem,), revision=rev + 1, reason=reason,
                              name_in_signature=name_in_sig, certificate_subject=subject), (problem,)

    cn, email, subject = _cert_identity(status.signing_cert)
    signer_name = cn
    if name_in_sig and cn and len(cn) >= 64 and name_in_sig.startswith(cn):
        signer_name = name_in_sig
    signer_name = signer_name or name_in_sig

    intact = bool(status.intact and status.valid)
    if not status.intact:
        problems.append("digest does not match: the signed content was altered")
    elif not status.valid:
        problems.append("the cryptographic signature value does not verify")
    trusted = bool(status.trusted)
    trusted_at_timestamp = False
    if intact and not trusted and not is_doc_ts and _expired(status):
        trusted = trusted_at_timestamp = _trusted_at_timestamp(sig, status, context)
    if intact and not trusted:
        problems.append(_trust_problem(status))

    coverage = status.coverage
    covers_whole = coverage == SignatureCoverageLevel.ENTIRE_FILE
    if coverage not in (SignatureCoverageLevel.ENTIRE_FILE, SignatureCoverageLevel.ENTIRE_REVISION):
        problems.append(f"the signature covers {_COVERAGE_WORDS.get(coverage, 'an unclear part of the file')}")

    summary = list(problems)
    # changes after this signature: every later revision must be a later signature ...
    later_signed = set(signed_revisions[index + 1:])
    unsigned = [r for r in range(rev + 1, total) if r not in later_signed]
    between = [r for r in unsigned if r < signed_revisions[-1]]
    modified = bool(unsigned)
    if between:
        revs = ", ".join(str(r + 1) for r in between)
        problems.append(f"the document was changed after this signature: an unsigned incremental update (revision "
                        f"{revs} of {total}) came before a later signature")
        summary.append(problems[-1])
    if len(between) < len(unsigned):
        problems.append(f"the document was changed after this signature: an unsigned incremental update (revision "
                        f"{unsigned[-1] + 1} of {total}) at the end of the file")
    # ... and the difference analysis must find no more than filling in the later signature fields
    mod_problem, detail = _modification_problem(status) if intact else (None, "")
    if mod_problem is not None:
        modified = True
        problems.append(mod_problem)
        if between or len(between) == len(unsigned):     # not explained by an update after the last signature
            summary.append(mod_problem)
        if detail:
            logger.info("signature %s: difference analysis: %s", field_name, detail)

    if is_doc_ts:
        signed_at = _utc(status.timestamp)
        timestamp_at, ts_trusted, role = signed_at, trusted, DOC_TIMESTAMP_ROLE
    else:
        signed_at = _utc(status.signer_reported_dt)
        timestamp_at = ts_trusted = None
        tv = status.timestamp_validity
        if tv is not None:
            if tv.intact and tv.valid:
                timestamp_at, ts_trusted = _utc(tv.timestamp), bool(tv.trusted)
            else:
                problems.append("the signature time-stamp token is not intact: it does not belong to this "
                                "signature or was altered")
                summary.append(problems[-1])
        role = _role_from_reason(reason)
    level = status.modification_level
    check = SignatureCheck(
        field=field_name, signer_name=signer_name, signer_email=email, role=role, signed_at=signed_at,
        timestamp_at=timestamp_at, intact=intact, trusted=trusted, covers_whole_file=covers_whole,
        modified_after=modified, problems=tuple(problems), revision=rev + 1,
        coverage=_COVERAGE_WORDS.get(coverage, "") if coverage is not None else "",
        modification_level=level.name if level is not None else None, modification_detail=detail, reason=reason,
        name_in_signature=name_in_sig, certificate_subject=subject, timestamp_trusted=ts_trusted,
        trusted_at_timestamp=trusted_at_timestamp)
    return check, tuple(summary)


def _safe_signer_cert(sig):
    try:
        return sig.signer_cert
    except Exception:
        return None


@functools.wraps(_verify_record)
def verify_record(*args, **kwargs):
    # safe where an asyncio event loop runs in this thread (pyHanko calls asyncio.run): see jtcheck.reports.loops
    return outside_event_loop(_verify_record, *args, **kwargs)
