"""PAdES signatures on calculation records (pyHanko).

A record gets its three empty, visible signature fields ("preparer", "checker", "approver") in one incremental
update before anyone signs (:func:`add_signature_fields`); each signature then fills its field in an incremental
update of its own (:func:`sign_record`), so earlier signatures stay valid (ISO 32000-1 §7.5.6, §12.8).  The
signatures are plain approval signatures (no certification / DocMDP, no field locks), PAdES baseline
(``/SubFilter /ETSI.CAdES.detached``, SHA-256), with an RFC 3161 signature time-stamp when a time-stamper is
given (B-T), B-B otherwise.

The visible appearance is a plain text stamp in our own wording with the signing time in UTC; the signature
dictionary carries the signer's name in ``/Name`` and the role in ``/Reason`` ("...: checked") so that
:mod:`jtcheck.reports.verify` can report it.
"""
from __future__ import annotations

import datetime as dt
import functools
import io
import math
import unicodedata
from collections.abc import Mapping
from dataclasses import dataclass

from pyhanko.pdf_utils.incremental_writer import IncrementalPdfFileWriter
from pyhanko.pdf_utils.misc import PdfError
from pyhanko.pdf_utils.text import TextBoxStyle
from pyhanko.sign import fields, signers
from pyhanko.sign.general import SigningError
from pyhanko.sign.timestamps import TimestampRequestError
from pyhanko.stamp import TextStampStyle

from jtcheck.errors import InputError, JtcheckError
from jtcheck.reports.loops import outside_event_loop
from jtcheck.reports.record_fields import fill_in

__all__ = [
    "REASON_PREFIX",
    "ROLE_PAST",
    "SIGNATURE_FIELDS",
    "SIGNED_AT",
    "TimestampError",
    "add_signature_fields",
    "reason_for",
    "sign_record",
    "signature_fields",
]

#: The signature fields of a record, in signing order.
SIGNATURE_FIELDS = ("preparer", "checker", "approver")
#: Role (field name) -> the word for what the signer did, used on the stamp and in ``/Reason``.
ROLE_PAST = {"preparer": "prepared", "checker": "checked", "approver": "approved"}
#: Default ``/Reason`` prefix; :mod:`jtcheck.reports.verify` reads the role from the text after the last colon.
REASON_PREFIX = "jtcheck record"

#: Placeholder in a stamp line for the signing time (UTC, e.g. "2025-03-01 14:02:11 UTC").
SIGNED_AT = "{signed_at}"
_TS_FORMAT = "%Y-%m-%dT%H:%M:%S%z"   # how pyHanko hands the signing time to the stamp (then shown in UTC)
_UTC_FORMAT = "%Y-%m-%d %H:%M:%S UTC"

Box = tuple[int, float, float, float, float]


class TimestampError(JtcheckError):
    """The RFC 3161 time-stamp server could not be reached or refused: nothing was signed (try again later)."""


def reason_for(field: str) -> str:
    """The default ``/Reason`` of a signature in ``field``: "jtcheck record: checked"."""
    return f"{REASON_PREFIX}: {ROLE_PAST.get(field, 'signed')}"


def _reader_writer(pdf: bytes) -> IncrementalPdfFileWriter:
    if not isinstance(pdf, (bytes, bytearray)) or not pdf:
        raise InputError("pdf", "empty: a PDF document is required")
    try:
        return IncrementalPdfFileWriter(io.BytesIO(bytes(pdf)), strict=False)
    except (PdfError, ValueError, KeyError, TypeError, IndexError) as exc:
        raise InputError("pdf", f"not a readable PDF document ({exc})") from exc


def signature_fields(pdf: bytes) -> dict[str, bool]:
    """The document's signature fields: name -> whether it is signed."""
    w = _reader_writer(pdf)
    return {name: value is not None for name, value, _ in fields.enumerate_sig_fields(w)}


def add_signature_fields(pdf: bytes, boxes: dict[str, Box]) -> bytes:
    """Add empty, visible signature fields as one incremental update.

    Parameters
    ----------
    pdf : bytes
        The unsigned record.
    boxes : dict
        Field name (normally "preparer", "checker", "approver") -> ``(page_index, x1, y1, x2, y2)``: the
        0-based page and the field's rectangle in PDF points, origin at the page's bottom left.

    Raises
    ------
    InputError
        Empty or unreadable PDF, a document that is already signed, a field that exists, a page that does not
        exist or a rectangle that is not one.
    """
    if not boxes:
        raise InputError("boxes", "at least one signature field is required")
    w = _reader_writer(pdf)
    existing = {name: value is not None for name, value, _ in fields.enumerate_sig_fields(w)}
    if any(existing.values()):
        raise InputError("pdf", "the document is already signed: signature fields must be added before the first "
                                "signature")
    n_pages = int(w.root["/Pages"]["/Count"])
    for name, box in boxes.items():
        if not isinstance(name, str) or not name or "." in name:
            raise InputError("boxes", f"{name!r} is not a field name (non-empty, without '.')")
        if name in existing:
            raise InputError("boxes", f"the document already has a signature field {name!r}")
        try:
            page, x1, y1, x2, y2 = box
            coords = [float(v) for v in (x1, y1, x2, y2)]
        except (TypeError, ValueError) as exc:
            raise InputError(f"boxes[{name}]", "must be (page_index, x1, y1, x2, y2)") from exc
        if not isinstance(page, int) or not 0 <= page < n_pages:
            raise InputError(f"boxes[{name}]", f"page index {page!r} is not a page of the document (0..{n_pages - 1})")
        if not all(math.isfinite(v) for v in coords) or coords[0] >= coords[2] or coords[1] >= coords[3]:
            raise InputError(f"boxes[{name}]", f"{tuple(coords)} is not a rectangle x1 < x2, y1 < y2 in points")
        fields.append_signature_field(w, fields.SigFieldSpec(sig_field_name=name, on_page=page,
                                                             box=tuple(coords)))  # type: ignore[arg-type]
    out = io.BytesIO()
    w.write(out)
    return out.getvalue()


# -- the visible stamp --------------------------------------------------------------------------------------

@dataclass(frozen=True)
class _UtcTextStampStyle(TextStampStyle):
    """A text stamp that shows pyHanko's signing time (the same instant as the signature's ``/M``) in UTC."""

    timestamp_format: str = _TS_FORMAT

    def create_stamp(self, writer, box, text_params):
        params = dict(text_params)
        raw = params.get("ts")
        if raw:
            try:
                params["ts"] = dt.datetime.strptime(raw, _TS_FORMAT).astimezone(dt.UTC).strftime(_UTC_FORMAT)
            except ValueError:
                pass
        return super().create_stamp(writer, box, params)


#: Characters outside Latin-1 that the stamp's standard font (Courier, WinAnsi) cannot show, and their
#: stand-ins.  The signature's ``/Name`` and ``/Reason`` keep the full text.
_FOLD = {"Ł": "L", "ł": "l", "Đ": "D", "đ": "d", "Œ": "OE", "œ": "oe", "Ŀ": "L", "ŀ": "l", "ı": "i", "‘": "'",
         "’": "'", "‚": ",", "“": '"', "”": '"', "„": '"', "–": "-", "—": "-", "‐": "-", "…": "...", "€": "EUR",
         "•": "*", "\u00a0": " ", "\u2009": " ", "\u202f": " "}


def _stamp_safe(text: str) -> str:
    """Text the stamp's standard font can show: printable ASCII and Latin-1 letters; others folded or '?'."""
    out = []
    for ch in text:
        o = ord(ch)
        if 0x20 <= o <= 0x7E or 0xA1 <= o <= 0xFF:
            out.append(ch)
        elif ch in _FOLD:
            out.append(_FOLD[ch])
        elif ch in "\t\r\n":
            out.append(" ")
        else:
            base = "".join(c for c in unicodedata.normalize("NFKD", ch) if not unicodedata.combining(c))
            out.append(base if base and all(0x20 <= ord(c) <= 0x7E or 0xA1 <= ord(c) <= 0xFF for c in base) else "?")
    return "".join(out)


def _stamp_text(field: str, role_text: str, signer_name: str, stamp_lines: list[str]) -> str:
    lines = [str(line) for line in (stamp_lines or [])]
    if not lines:
        verb = ROLE_PAST.get(field, "signed")
        lines = [f"{verb.capitalize()} by {signer_name}", SIGNED_AT]
        if role_text and role_text.strip().lower() != verb:
            lines.append(role_text)
    elif not any(SIGNED_AT in line for line in lines):
        lines.append(SIGNED_AT)
    parts = [_stamp_safe(line).replace("%", "%%") for line in lines]
    return "\n".join(p.replace(SIGNED_AT, "%(ts)s") for p in parts)


def _stamp_style(text: str) -> TextStampStyle:
    return _UtcTextStampStyle(stamp_text=text, background=None, border_width=1,
                              text_box_style=TextBoxStyle(font_size=9))


# -- signing ------------------------------------------------------------------------------------------------

def _sign_record(pdf: bytes, field: str, signer, *, role_text: str, signer_name: str, reason: str | None = None,
                location: str = "", stamp_lines: list[str] | None = None, timestamper=None,
                 fill: Mapping[str, str] | None = None) -> bytes:
    """Sign the empty signature field ``field`` (PAdES, SHA-256) as an incremental update.

    Parameters
    ----------
    pdf : bytes
        The record with its signature fields (and any earlier signatures, which stay valid).
    field : str
        Name of the empty signature field to fill ("preparer", "checker", "approver").
    signer : SignerHandle or pyhanko.sign.signers.Signer
        From :meth:`jtcheck.reports.pki.InstancePKI.signer_for` (or any pyHanko signer).
    role_text : str
        What the signer did ("checked"); shown on the default stamp when ``stamp_lines`` is empty and differs
        from the field's verb.
    signer_name : str
        The signer's name, written to the signature's ``/Name``.
    reason : str, optional
        The signature's ``/Reason``; its text after the last colon is read back as the role (default
        :func:`reason_for`, "jtcheck record: checked").
    location : str
        The signature's ``/Location`` (omitted when empty).
    stamp_lines : list of str
        The lines of the visible stamp.  A line may hold ``{signed_at}`` for the signing time in UTC; when no
        line does, a line with the signing time is appended.  Empty: "<Checked> by <name>", the time, and
        ``role_text`` when it says more.  Characters the stamp's standard font lacks are folded ("Ł" -> "L").
    timestamper : pyhanko.sign.timestamps.TimeStamper, optional
        RFC 3161 time-stamp client (:func:`jtcheck.reports.pki.timestamper_from_env`); the signature then
        carries a signature time-stamp token.
    fill : mapping, optional
        Text field name -> value: the record's text fields this signature fills in its own update
        (:mod:`jtcheck.reports.record_fields`: the issued revision, the dates of check and approval).

    Raises
    ------
    InputError
        Empty or unreadable PDF, no such field, or a field that is already signed.
    TimestampError
        A time-stamper was given and its server gave no time-stamp.
    """
    if not isinstance(field, str) or not field:
        raise InputError("field", "the signature field name must not be empty")
    if not signer_name or not signer_name.strip():
        raise InputError("signer_name", "must not be empty")
    pyhanko_signer = getattr(signer, "signer", signer)
    if not isinstance(pyhanko_signer, signers.Signer):
        raise InputError("signer", f"{type(signer).__name__} is not a SignerHandle or a pyHanko signer")
    w = _reader_writer(pdf)
    found = {name: value is not None for name, value, _ in fields.enumerate_sig_fields(w)}
    if field not in found:
        have = ", ".join(sorted(found)) or "none"
        raise InputError("field", f"the document has no signature field {field!r} (fields: {have})")
    if found[field]:
        raise InputError("field", f"the signature field {field!r} is already signed")
    if fill:
        fill_in(w, fill)
    meta = signers.PdfSignatureMetadata(
        field_name=field,
        md_algorithm="sha256",
        subfilter=fields.SigSeedSubFilter.PADES,
        reason=reason or reason_for(field),
        location=location or None,
        name=signer_name.strip(),
        certify=False,
    )
    pdf_signer = signers.PdfSigner(meta, signer=pyhanko_signer, timestamper=timestamper,
                                   stamp_style=_stamp_style(_stamp_text(field, role_text, signer_name, stamp_lines)))
    out = io.BytesIO()
    try:
        pdf_signer.sign_pdf(w, existing_fields_only=True, output=out)
    except TimestampRequestError as exc:
        raise TimestampError(f"the time-stamp server did not give a time-stamp: {exc}") from exc
    except SigningError as exc:
        raise InputError("field", f"cannot sign {field!r}: {exc}") from exc
    return out.getvalue()


@functools.wraps(_sign_record)
def sign_record(*args, **kwargs):
    # safe where an asyncio event loop runs in this thread (pyHanko calls asyncio.run): see jtcheck.reports.loops
    return outside_event_loop(_sign_record, *args, **kwargs)
