"""Verification of signed records: three intact, trusted PAdES signatures; tampering inside the signed bytes,
unsigned incremental updates (ISO 32000-1 §7.5.6) after or between signatures, replaced page content, foreign
trust roots, expired certificates, RFC 3161 time-stamps (pyHanko's DummyTimeStamper) and unreadable files."""
from __future__ import annotations

import datetime as dt
import io

import pytest
from cryptography import x509
from cryptography.hazmat.primitives import hashes, serialization
from cryptography.hazmat.primitives.asymmetric import rsa
from cryptography.x509.oid import ExtendedKeyUsageOID, NameOID
from pyhanko.pdf_utils import generic
from pyhanko.pdf_utils.incremental_writer import IncrementalPdfFileWriter
from pyhanko.pdf_utils.reader import PdfFileReader

from jtcheck.errors import InputError
from jtcheck.reports.pki import InstancePKI
from jtcheck.reports.signing import add_signature_fields, reason_for, sign_record
from jtcheck.reports.verify import verify_record

BOXES = {"preparer": (1, 40.0, 40.0, 200.0, 95.0), "checker": (1, 210.0, 40.0, 370.0, 95.0),
         "approver": (1, 380.0, 40.0, 540.0, 95.0)}
USERS = {"preparer": (11, "Ann Preparer", "ann@example.com"), "checker": (12, "Bob Checker", "bob@example.com"),
         "approver": (13, "Cay Approver", "cay@example.com")}


def _render() -> bytes:
    """A two-page record, uncompressed so that a test can change one number of the page content."""
    import weasyprint

    pages = "".join(f"<section style='break-after: page'><h1>Page {k}</h1><p>Outlet temperature 12.5 &deg;C, "
                    f"hydrate margin 4.0 K. {'Joule-Thomson letdown. ' * 40}</p></section>" for k in (1, 2))
    return weasyprint.HTML(string=f"<html><body>{pages}</body></html>").write_pdf(uncompressed_pdf=True)


@pytest.fixture(scope="module")
def pki(tmp_path_factory) -> InstancePKI:
    return InstancePKI(tmp_path_factory.mktemp("instance"), b"pw", ca_name="verify-test")


@pytest.fixture(scope="module")
def root(pki) -> bytes:
    return pki.trust_root_pem()


@pytest.fixture(scope="module")
def fielded() -> bytes:
    return add_signature_fields(_render(), BOXES)


def _sign(pdf: bytes, pki: InstancePKI, role: str, *, timestamper=None) -> bytes:
    uid, name, email = USERS[role]
    return sign_record(pdf, role, pki.signer_for(uid, name, email, role), role_text=role, signer_name=name,
                       reason=reason_for(role), stamp_lines=[], timestamper=timestamper)


@pytest.fixture(scope="module")
def signed(fielded, pki) -> bytes:
    pdf = fielded
    for role in USERS:
        pdf = _sign(pdf, pki, role)
    return pdf


def _incremental(pdf: bytes, change) -> bytes:
    w = IncrementalPdfFileWriter(io.BytesIO(pdf), strict=False)
    change(w)
    out = io.BytesIO()
    w.write(out)
    return out.getvalue()


def _content_stream_offset(pdf: bytes, page: int = 0) -> int:
    """Offset of the first byte of a page's (uncompressed) content stream data."""
    r = PdfFileReader(io.BytesIO(pdf), strict=False)
    page_obj = r.root["/Pages"]["/Kids"][page].get_object()
    ref = page_obj.raw_get("/Contents")
    ref = ref.reference if hasattr(ref, "reference") else ref
    start = pdf.index(f"\n{ref.idnum} {ref.generation} obj".encode())
    return pdf.index(b"stream", start) + len(b"stream\n")


def _flip_digit(pdf: bytes, start: int) -> bytes:
    """Change the first digit at or after ``start`` (same length, so every offset stays right)."""
    k = start
    while not pdf[k:k + 1].isdigit():
        k += 1
    new = b"7" if pdf[k:k + 1] != b"7" else b"3"
    return pdf[:k] + new + pdf[k + 1:]


# -- the good case -----------------------------------------------------------------------------------------------

def test_three_signatures_are_intact_trusted_and_unchanged(signed, root):
    result = verify_record(signed, [root])
    assert result.ok, result.problems
    assert result.problems == ()
    assert len(result.signatures) == 3 and result.revisions == 5     # render, fields, three signatures
    import hashlib

    assert result.file_sha256 == hashlib.sha256(signed).hexdigest()
    now = dt.datetime.now(dt.UTC)
    for check, (role, (_, name, email)) in zip(result.signatures, USERS.items(), strict=True):
        assert (check.field, check.role, check.signer_name, check.signer_email) == (role, role, name, email)
        assert check.intact and check.trusted and not check.modified_after and check.problems == ()
        assert check.signed_at is not None and abs(now - check.signed_at) < dt.timedelta(minutes=10)
        assert check.signed_at.tzinfo == dt.UTC and check.timestamp_at is None
    first, second, last = result.signatures
    # the first two are covered by later revisions (their own revision only), but not modified
    assert not first.covers_whole_file and not second.covers_whole_file and last.covers_whole_file
    assert (first.revision, second.revision, last.revision) == (3, 4, 5)
    assert first.modification_level == second.modification_level == "FORM_FILLING"
    assert last.modification_level == "NONE"


def test_der_trust_root_and_partly_signed_records(signed, fielded, pki, root):
    der = x509.load_pem_x509_certificate(root).public_bytes(serialization.Encoding.DER)
    assert verify_record(signed, [der]).ok
    one = _sign(fielded, pki, "preparer")
    result = verify_record(one, [root])
    assert result.ok and [c.role for c in result.signatures] == ["preparer"]
    assert result.signatures[0].covers_whole_file


# -- tampering ---------------------------------------------------------------------------------------------------

def test_a_changed_byte_in_the_page_content_breaks_every_signature(signed, root):
    tampered = _flip_digit(signed, _content_stream_offset(signed))
    assert len(tampered) == len(signed) and tampered != signed
    result = verify_record(tampered, [root])
    assert not result.ok
    assert [c.intact for c in result.signatures] == [False, False, False]
    assert "signature 2 (checker): digest does not match: the signed content was altered" in result.problems


def test_a_backdated_approval_breaks_only_the_last_signature(signed, root):
    """Changing the approver's signing time (/M, inside its own revision and its byte range) breaks that
    signature alone; the earlier two only cover their revisions and stay intact."""
    r = PdfFileReader(io.BytesIO(signed), strict=False)
    approver = [s for s in r.embedded_signatures if s.field_name == "approver"][0]
    byte_range = [int(v) for v in approver.sig_object["/ByteRange"]]
    start_of_revision = signed.rindex(b"%%EOF", 0, byte_range[1]) + len(b"%%EOF")
    m_at = signed.index(b"/M (D\\072", start_of_revision)
    assert m_at >= byte_range[2]           # signed (second byte range), not inside the /Contents hex
    tampered = _flip_digit(signed, m_at + len(b"/M (D\\072") + 3)       # the last digit of the year
    assert tampered[:start_of_revision] == signed[:start_of_revision] and len(tampered) == len(signed)
    result = verify_record(tampered, [root])
    assert not result.ok
    assert [c.intact for c in result.signatures] == [True, True, False]
    assert result.problems == ("signature 3 (approver): digest does not match: the signed content was altered",)


def test_an_unsigned_update_after_the_last_signature_is_reported(signed, root):
    def retitle(w):
        info = w.trailer["/Info"].get_object() if "/Info" in w.trailer else generic.DictionaryObject()
        info[generic.NameObject("/Title")] = generic.TextStringObject("A different title")
        w.set_info(w.add_object(info))

    result = verify_record(_incremental(signed, retitle), [root])
    assert not result.ok
    assert "the document was changed after the last signature (an unsigned incremental update)" in result.problems
    assert all(c.intact and c.trusted for c in result.signatures)       # the signed revisions are intact ...
    assert all(c.modified_after for c in result.signatures)             # ... but something came after them
    assert not result.signatures[-1].covers_whole_file


def test_an_added_annotation_is_reported(signed, root):
    def annotate(w):
        page_ref, _ = w.find_page_for_modification(0)
        annot = w.add_object(generic.DictionaryObject({
            generic.NameObject("/Type"): generic.NameObject("/Annot"),
            generic.NameObject("/Subtype"): generic.NameObject("/Text"),
            generic.NameObject("/Rect"): generic.ArrayObject([generic.FloatObject(v) for v in (100, 100, 120, 120)]),
            generic.NameObject("/Contents"): generic.TextStringObject("actually 13.5 degC"),
        }))
        w.register_annotation(page_ref, annot)

    result = verify_record(_incremental(signed, annotate), [root])
    assert not result.ok
    assert "the document was changed after the last signature (an unsigned incremental update)" in result.problems
    last = result.signatures[-1]
    assert last.modified_after and last.modification_level in ("ANNOTATIONS", "OTHER")
    assert last.problems[0] == ("the document was changed after this signature: an unsigned incremental update "
                                "(revision 6 of 6) at the end of the file")
    assert last.problems[1].startswith("the document was changed after this signature: ")


def _swap_first_page_content(w):
    kids = w.root["/Pages"]["/Kids"]
    page1, page2 = kids[0].get_object(), kids[1].get_object()
    page1[generic.NameObject("/Contents")] = page2.raw_get("/Contents")
    w.update_container(page1)


def test_replacing_a_page_content_stream_after_signing_is_reported(signed, root):
    result = verify_record(_incremental(signed, _swap_first_page_content), [root])
    assert not result.ok
    assert "the document was changed after the last signature (an unsigned incremental update)" in result.problems
    # said once for the document; pyHanko's difference analysis sees more than form filling, too
    assert result.problems == ("the document was changed after the last signature (an unsigned incremental update)",)
    for c in result.signatures:
        assert c.modification_level == "OTHER" and c.modified_after and c.intact and c.trusted
        assert ("the document was changed after this signature: objects other than later signatures were added or "
                "replaced (page content, resources or document structure)") in c.problems
        assert "unexplained" in c.modification_detail           # pyHanko's own account, for the log


def test_a_change_between_two_signatures_is_blamed_on_the_earlier_one(fielded, pki, root):
    pdf = _sign(fielded, pki, "preparer")
    pdf = _incremental(pdf, _swap_first_page_content)      # someone swaps page 1 before the checker signs
    pdf = _sign(pdf, pki, "checker")
    pdf = _sign(pdf, pki, "approver")
    result = verify_record(pdf, [root])
    assert not result.ok
    first, second, third = result.signatures
    assert first.intact and first.modified_after
    assert not second.modified_after and not third.modified_after and third.covers_whole_file
    assert result.problems == (
        "signature 1 (preparer): the document was changed after this signature: an unsigned incremental update "
        "(revision 4 of 6) came before a later signature",
        "signature 1 (preparer): the document was changed after this signature: objects other than later "
        "signatures were added or replaced (page content, resources or document structure)")


def test_appended_bytes_are_reported(signed, root):
    result = verify_record(signed + b"\n% appended\n", [root])
    assert not result.ok and not result.signatures[-1].covers_whole_file
    assert any("does not cover the whole file" in p for p in result.problems)


# -- trust ---------------------------------------------------------------------------------------------------------

def test_another_instance_root_is_not_trusted(signed, tmp_path):
    other = InstancePKI(tmp_path / "other", b"pw", ca_name="other").trust_root_pem()
    result = verify_record(signed, [other])
    assert not result.ok
    assert all(c.intact and not c.trusted for c in result.signatures)
    assert ("signature 1 (preparer): not trusted: the signer's certificate does not chain to the given trust root"
            in result.problems)


def test_validation_after_the_certificates_expired(signed, root):
    result = verify_record(signed, [root], at=dt.datetime.now(dt.UTC) + dt.timedelta(days=6 * 365))
    assert not result.ok and not any(c.trusted for c in result.signatures)
    assert any("expired" in p for p in result.problems)


# -- time-stamps ------------------------------------------------------------------------------------------------

def _tsa():
    """A test TSA (RSA: pyHanko's DummyTimeStamper signs with RSA only) under a root of its own."""
    from pyhanko.keys.internal import translate_pyca_cryptography_cert_to_asn1, translate_pyca_cryptography_key_to_asn1

    now = dt.datetime.now(dt.UTC)
    root_key = rsa.generate_private_key(public_exponent=65537, key_size=2048)
    root_name = x509.Name([x509.NameAttribute(NameOID.COMMON_NAME, "Test TSA Root")])
    root = (x509.CertificateBuilder().subject_name(root_name).issuer_name(root_name)
            .public_key(root_key.public_key()).serial_number(x509.random_serial_number())
            .not_valid_before(now - dt.timedelta(days=1)).not_valid_after(now + dt.timedelta(days=3650))
            .add_extension(x509.BasicConstraints(ca=True, path_length=None), critical=True)
            .add_extension(x509.KeyUsage(False, False, False, False, False, True, True, False, False), critical=True)
            .sign(root_key, hashes.SHA256()))
    tsa_key = rsa.generate_private_key(public_exponent=65537, key_size=2048)
    tsa = (x509.CertificateBuilder().subject_name(x509.Name([x509.NameAttribute(NameOID.COMMON_NAME, "Test TSA")]))
           .issuer_name(root_name).public_key(tsa_key.public_key()).serial_number(x509.random_serial_number())
           .not_valid_before(now - dt.timedelta(days=1)).not_valid_after(now + dt.timedelta(days=3650))
           .add_extension(x509.KeyUsage(True, True, False, False, False, False, False, False, False), critical=True)
           .add_extension(x509.ExtendedKeyUsage([ExtendedKeyUsageOID.TIME_STAMPING]), critical=True)
           .sign(root_key, hashes.SHA256()))
    from pyhanko.sign.timestamps import DummyTimeStamper

    stamper = DummyTimeStamper(tsa_cert=translate_pyca_cryptography_cert_to_asn1(tsa),
                               tsa_key=translate_pyca_cryptography_key_to_asn1(tsa_key),
                               certs_to_embed=[translate_pyca_cryptography_cert_to_asn1(root)])
    return stamper, root.public_bytes(serialization.Encoding.PEM)


def test_signature_time_stamps_are_reported(fielded, pki, root):
    stamper, tsa_root = _tsa()
    pdf = fielded
    for role in USERS:
        pdf = _sign(pdf, pki, role, timestamper=stamper)
    result = verify_record(pdf, [root], tsa_roots=[tsa_root])
    assert result.ok, result.problems
    for c in result.signatures:
        assert c.timestamp_at is not None and c.timestamp_trusted is True
        assert c.timestamp_at.tzinfo == dt.UTC and abs(c.timestamp_at - c.signed_at) < dt.timedelta(minutes=1)
    # a time-stamp from a TSA nobody trusts is reported, but does not make the signatures invalid
    untrusted = verify_record(pdf, [root])
    assert untrusted.ok and all(c.timestamp_at is not None and c.timestamp_trusted is False
                                for c in untrusted.signatures)


def test_a_time_stamp_keeps_a_signature_trusted_after_its_certificate_expired(fielded, pki, root):
    stamper, tsa_root = _tsa()
    pdf = _sign(fielded, pki, "preparer", timestamper=stamper)
    later = dt.datetime.now(dt.UTC) + dt.timedelta(days=6 * 365)       # the user certificate ran out after 5 years
    result = verify_record(pdf, [root], tsa_roots=[tsa_root], at=later)
    assert result.ok, result.problems
    assert result.signatures[0].trusted and result.signatures[0].trusted_at_timestamp
    # the same signature without a time-stamp: the signer's own claimed time proves nothing
    plain = verify_record(_sign(fielded, pki, "preparer"), [root], at=later)
    assert not plain.ok and not plain.signatures[0].trusted_at_timestamp


def test_a_failing_time_stamp_server_signs_nothing(fielded, pki):
    from pyhanko.sign.timestamps import TimeStamper, TimestampRequestError

    from jtcheck.reports.signing import TimestampError

    class Down(TimeStamper):
        async def async_request_tsa_response(self, req):
            raise TimestampRequestError("connection refused")

    with pytest.raises(TimestampError, match="connection refused"):
        _sign(fielded, pki, "preparer", timestamper=Down())


# -- unreadable input ------------------------------------------------------------------------------------------

@pytest.mark.parametrize("damage", ["garbage", "cut-in-first-revision", "no-eof"])
def test_unreadable_files_give_a_verdict_not_an_exception(signed, root, damage):
    data = {"garbage": b"this is not a PDF at all", "cut-in-first-revision": signed[:3000],
            "no-eof": signed[:-7]}[damage]
    result = verify_record(data, [root])
    assert not result.ok and result.signatures == ()
    assert len(result.problems) == 1 and result.problems[0].startswith("not a readable PDF document (")


def test_a_file_cut_back_to_an_earlier_revision_is_that_revision(signed, root):
    """Cut in the middle of the signatures, the file ends at an earlier revision's %%EOF: a readable document
    with fewer (or no) signatures - never an exception."""
    cut = signed[: len(signed) // 2]
    result = verify_record(cut, [root])
    assert not result.ok
    assert len(result.signatures) < 3


def test_unsigned_document_and_bad_arguments(fielded, root):
    result = verify_record(fielded, [root])
    assert not result.ok and result.problems == ("the document has no signatures",)
    with pytest.raises(InputError, match="empty"):
        verify_record(b"", [root])
    with pytest.raises(InputError, match="trust_roots"):
        verify_record(fielded, [b"not a certificate"])
    with pytest.raises(InputError, match="trust_roots"):
        verify_record(fielded, [])
