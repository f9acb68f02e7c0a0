"""Text fields of a record that later signatures fill: the issued revision label, the status line and the
history lines of check and approval.

A record is rendered once, at submission for check, and each later signature is an incremental update of it
(:mod:`jtcheck.reports.signing`), so the page content cannot change after the preparer signs.  What becomes
known only later (the revision's number on approval, the check and approval dates) is kept in read-only text
fields (ISO 32000-1 §12.7.4.3) placed over empty slots of the layout; the signer's incremental update sets
their values and appearances before it signs.  Filling form fields is a change that an approval signature
permits (form filling, ISO 32000-1 §12.8.2.3), so the earlier signatures stay intact and the record's text,
as any PDF reader extracts it, reads the issued revision everywhere.
"""
from __future__ import annotations

import hashlib
import io
from collections.abc import Mapping

from pyhanko.pdf_utils import generic
from pyhanko.pdf_utils.incremental_writer import IncrementalPdfFileWriter

from jtcheck.errors import InputError

#: Field flag "read only" (ISO 32000-1 Table 221, bit 1).
_READ_ONLY = 1
#: Font size of the field text [pt] when the field does not give one.
DEFAULT_SIZE_PT = 8.0

Box = tuple[int, float, float, float, float]


def _safe(text: str) -> str:
    """Text the standard Helvetica (WinAnsi) can show; other characters as '?'."""
    return "".join(ch if ch.encode("cp1252", errors="ignore") else "?" for ch in str(text))


def _font(writer) -> generic.IndirectObject:
    return writer.add_object(generic.DictionaryObject({
        generic.NameObject("/Type"): generic.NameObject("/Font"),
        generic.NameObject("/Subtype"): generic.NameObject("/Type1"),
        generic.NameObject("/BaseFont"): generic.NameObject("/Helvetica"),
        generic.NameObject("/Encoding"): generic.NameObject("/WinAnsiEncoding")}))


def _font_resources(font) -> generic.DictionaryObject:
    return generic.DictionaryObject({generic.NameObject("/Font"): generic.DictionaryObject(
        {generic.NameObject("/Helv"): font})})


def _escape(text: str) -> bytes:
    raw = _safe(text).encode("cp1252", errors="replace")
    return raw.replace(b"\\", b"\\\\").replace(b"(", b"\\(").replace(b")", b"\\)")


def _appearance(writer, font, text: str, width: float, height: float, size: float, bold: bool = False):
    """The normal appearance of a field: ``text`` in Helvetica, left-aligned, vertically centred; a text too long
    for the field at ``size`` is set smaller (down to 4.5 pt; Helvetica's mean width taken as 0.52 em)."""
    size = max(4.5, min(size, (width - 2.0) / (0.52 * max(1, len(text)))))
    y = max(0.0, (height - size * 0.72) / 2)
    data = (b"/Tx BMC q BT /Helv " + f"{size:g}".encode() + b" Tf 0 g "
            + f"1 {y:.2f} Td ".encode() + b"(" + _escape(text) + b") Tj ET Q EMC")
    stream = generic.StreamObject({
        generic.NameObject("/Type"): generic.NameObject("/XObject"),
        generic.NameObject("/Subtype"): generic.NameObject("/Form"),
        generic.NameObject("/BBox"): generic.ArrayObject([generic.FloatObject(0), generic.FloatObject(0),
                                                          generic.FloatObject(width), generic.FloatObject(height)]),
        generic.NameObject("/Resources"): _font_resources(font)}, stream_data=data)
    return writer.add_object(stream)


class _SameFileWriter(IncrementalPdfFileWriter):
    """An incremental writer that leaves the document information as it is (pyHanko would stamp the time as
    ``/ModDate``): the same record and fields give the same file, so a record can be rendered again and compared
    byte for byte."""

    def _update_meta(self) -> None:
        return None


def _writer(pdf: bytes, same_file: bool = False) -> IncrementalPdfFileWriter:
    if not pdf:
        raise InputError("pdf", "empty document")
    return (_SameFileWriter if same_file else IncrementalPdfFileWriter)(io.BytesIO(pdf), strict=False)


def _write(writer) -> bytes:
    out = io.BytesIO()
    writer.write(out)
    return out.getvalue()


def add_text_fields(pdf: bytes, fields: Mapping[str, tuple[Box, str, float]]) -> bytes:
    """Add read-only text fields as one incremental update (before anyone signs).

    Parameters
    ----------
    pdf : bytes
        The record (its signature fields may be there already; it must not be signed yet).
    fields : mapping
        Field name -> ``((page_index, x1, y1, x2, y2), initial text, font size [pt])``: rectangle in PDF points
        from the page's bottom-left corner.
    """
    w = _writer(pdf, same_file=True)
    # the same record and fields give the same file (a record can be rendered again and compared byte for byte):
    # the update's second document id is a digest of both rather than pyHanko's random one
    digest = hashlib.sha256(pdf + repr(sorted(fields.items())).encode()).digest()
    first = w.prev.trailer["/ID"][0] if "/ID" in w.prev.trailer else generic.ByteStringObject(digest[16:])
    w._document_id = generic.ArrayObject([first, generic.ByteStringObject(digest[:16])])
    root = w.root
    if "/AcroForm" not in root:
        root[generic.NameObject("/AcroForm")] = generic.DictionaryObject(
            {generic.NameObject("/Fields"): generic.ArrayObject()})
        w.update_root()
    form = root["/AcroForm"]
    form = form.get_object() if isinstance(form, generic.IndirectObject) else form
    font = _font(w)
    form[generic.NameObject("/DA")] = generic.TextStringObject(f"/Helv {DEFAULT_SIZE_PT:g} Tf 0 g")
    form[generic.NameObject("/DR")] = _font_resources(font)
    pages = w.root["/Pages"]
    n_pages = int(pages["/Count"])
    field_list = form["/Fields"]
    field_list = field_list.get_object() if isinstance(field_list, generic.IndirectObject) else field_list
    for name, ((page_index, x1, y1, x2, y2), text, size) in fields.items():
        if not 0 <= page_index < n_pages:
            raise InputError("fields", f"page index {page_index} of field {name!r} is not a page of the record")
        page_ref = w.find_page_for_modification(page_index)[0]
        page = page_ref.get_object()
        width, height = x2 - x1, y2 - y1
        widget = generic.DictionaryObject({
            generic.NameObject("/Type"): generic.NameObject("/Annot"),
            generic.NameObject("/Subtype"): generic.NameObject("/Widget"),
            generic.NameObject("/FT"): generic.NameObject("/Tx"),
            generic.NameObject("/T"): generic.TextStringObject(name),
            generic.NameObject("/Ff"): generic.NumberObject(_READ_ONLY),
            generic.NameObject("/F"): generic.NumberObject(4),   # print
            generic.NameObject("/V"): generic.TextStringObject(_safe(text)),
            generic.NameObject("/DA"): generic.TextStringObject(f"/Helv {size:g} Tf 0 g"),
            generic.NameObject("/Rect"): generic.ArrayObject([generic.FloatObject(v) for v in (x1, y1, x2, y2)]),
            generic.NameObject("/P"): page_ref,
            generic.NameObject("/AP"): generic.DictionaryObject({
                generic.NameObject("/N"): _appearance(w, font, text, width, height, size)}),
        })
        ref = w.add_object(widget)
        annots = page.get("/Annots")
        if annots is None:
            page[generic.NameObject("/Annots")] = generic.ArrayObject([ref])
        else:
            annots.get_object().append(ref)
            if isinstance(annots, generic.IndirectObject):
                w.update_container(annots.get_object())
        w.update_container(page)
        field_list.append(ref)
    w.update_container(form)
    if isinstance(form.raw_get("/Fields"), generic.IndirectObject):
        w.update_container(field_list)
    return _write(w)


def text_fields(pdf: bytes) -> dict[str, str]:
    """Name -> value of the record's text fields."""
    from pyhanko.pdf_utils.reader import PdfFileReader

    r = PdfFileReader(io.BytesIO(pdf), strict=False)
    form = r.root.get("/AcroForm")
    form = form.get_object() if isinstance(form, generic.IndirectObject) else form
    out: dict[str, str] = {}
    for ref in (form or {}).get("/Fields", ()):
        f = ref.get_object()
        if f.get("/FT") == "/Tx":
            out[str(f["/T"])] = str(f.get("/V", ""))
    return out


def fill_in(w: IncrementalPdfFileWriter, values: Mapping[str, str]) -> None:
    """Set the values (and appearances) of existing text fields in the update that ``w`` writes (the signer's
    own update: :func:`jtcheck.reports.signing.sign_record` with ``fill``).

    Raises
    ------
    InputError
        A field that the record does not have.
    """
    form = w.root.get("/AcroForm")
    form = form.get_object() if isinstance(form, generic.IndirectObject) else form
    found = {}
    for ref in (form or {}).get("/Fields", ()):
        f = ref.get_object()
        if f.get("/FT") == "/Tx":
            found[str(f["/T"])] = f
    missing = [n for n in values if n not in found]
    if missing:
        raise InputError("fields", f"the record has no text field {', '.join(missing)}")
    font = form["/DR"].get_object()["/Font"].get_object().raw_get("/Helv")
    for name, text in values.items():
        f = found[name]
        x1, y1, x2, y2 = (float(v) for v in f["/Rect"])
        da = str(f.get("/DA", "")).split()
        size = float(da[1]) if len(da) > 1 else DEFAULT_SIZE_PT
        f[generic.NameObject("/V")] = generic.TextStringObject(_safe(text))
        f[generic.NameObject("/AP")] = generic.DictionaryObject({
            generic.NameObject("/N"): _appearance(w, font, text, x2 - x1, y2 - y1, size)})
        w.update_container(f)
