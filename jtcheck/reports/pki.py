"""The instance's certificate authority and the users' signing keys.

A jtcheck instance signs its calculation records with keys of its own: on first use it makes a root CA
("jtcheck instance CA (<host>)", EC P-256, self-signed, 10 years) and, for each user who signs, a
certificate issued by that CA (EC P-256, 5 years, key usage digitalSignature + nonRepudiation, extended key
usage emailProtection) kept with its key in an encrypted PKCS#12 file.  The CA certificate is the trust root
a reader of a record needs (``GET /api/v1/trust-root.pem``).

Key material lives under ``<instance>/pki/`` (directory mode 0700, files 0600)::

    pki/ca-cert.pem            CA certificate (public)
    pki/ca-key.pem             CA private key, PKCS#8 PEM, encrypted with the PKI passphrase
    pki/passphrase             generated passphrase (only when none is configured)
    pki/users/<user_id>.p12    user certificate + key + CA certificate, encrypted with the PKI passphrase

The PKI passphrase is, in this order, the ``passphrase`` argument, ``$JTCHECK_PKI_PASSPHRASE``, or a random
secret generated once into ``pki/passphrase``.  It is never stored in the database or the repository.  A
generated passphrase kept next to the key only protects copies of the key file alone (backups that miss the
passphrase file); production instances should set ``JTCHECK_PKI_PASSPHRASE`` from a secret store.

Organisations with a PKI of their own configure it instead (environment of :func:`pki_from_env`):

``JTCHECK_CA_CERT``, ``JTCHECK_CA_KEY``, ``JTCHECK_CA_KEY_PASSPHRASE``
    The organisation's (issuing) CA certificate (PEM or DER; a PEM file may carry the chain up to the root)
    and its private key: user certificates are issued from it instead of from an instance CA.
``JTCHECK_SIGNER_P12_DIR``, ``JTCHECK_SIGNER_P12_PASSPHRASE``
    Pre-issued per-user PKCS#12 files ``<dir>/<email>.p12`` (all with the same passphrase); nothing is
    issued.  Give ``JTCHECK_CA_CERT`` too so that the instance can publish the trust root.
``JTCHECK_TSA_URL``
    An RFC 3161 time-stamp server: signatures then carry a signature time-stamp token
    (:func:`timestamper_from_env`).

Signing objects are cached per process (per :class:`InstancePKI` object, and :func:`pki_from_env` keeps one
object per configuration), so a signature costs only the signing itself after the first use.
"""
from __future__ import annotations

import contextlib
import datetime as dt
import os
import secrets
import socket
import tempfile
import threading
from collections.abc import Iterator
from dataclasses import dataclass
from pathlib import Path

from asn1crypto import x509 as asn1_x509
from cryptography import x509
from cryptography.exceptions import InvalidSignature
from cryptography.hazmat.primitives import hashes, serialization
from cryptography.hazmat.primitives.asymmetric import ec, rsa
from cryptography.hazmat.primitives.serialization import pkcs12
from cryptography.x509.oid import ExtendedKeyUsageOID, NameOID

from jtcheck.errors import InputError, JtcheckError

__all__ = [
    "CA_VALIDITY",
    "ENV_CA_CERT",
    "ENV_CA_KEY",
    "ENV_CA_KEY_PASSPHRASE",
    "ENV_PKI_PASSPHRASE",
    "ENV_SIGNER_P12_DIR",
    "ENV_SIGNER_P12_PASSPHRASE",
    "ENV_TSA_URL",
    "USER_VALIDITY",
    "InstancePKI",
    "PKIError",
    "SignerHandle",
    "pki_from_env",
    "timestamper_from_env",
]

ENV_PKI_PASSPHRASE = "JTCHECK_PKI_PASSPHRASE"
ENV_CA_CERT = "JTCHECK_CA_CERT"
ENV_CA_KEY = "JTCHECK_CA_KEY"
ENV_CA_KEY_PASSPHRASE = "JTCHECK_CA_KEY_PASSPHRASE"
ENV_SIGNER_P12_DIR = "JTCHECK_SIGNER_P12_DIR"
ENV_SIGNER_P12_PASSPHRASE = "JTCHECK_SIGNER_P12_PASSPHRASE"
ENV_TSA_URL = "JTCHECK_TSA_URL"

#: Lifetime of the instance CA and of user certificates.
CA_VALIDITY = dt.timedelta(days=3653)
USER_VALIDITY = dt.timedelta(days=1826)
#: A user certificate closer than this to its end is replaced by a new one before signing.
RENEW_BEFORE = dt.timedelta(days=30)
#: Certificates start a little in the past so that a slightly slow clock elsewhere accepts them.
BACKDATE = dt.timedelta(minutes=5)

PKI_DIRNAME = "pki"
CA_CERT_FILENAME = "ca-cert.pem"
CA_KEY_FILENAME = "ca-key.pem"
PASSPHRASE_FILENAME = "passphrase"
USERS_DIRNAME = "users"
LOCK_FILENAME = ".lock"

_CN_MAX = 64          # ub-common-name (RFC 5280)


class PKIError(JtcheckError):
    """The key material is missing, unreadable or misconfigured; the message says which file or setting."""


@dataclass(frozen=True, eq=False)
class SignerHandle:
    """A user's signing identity: the pyHanko signer plus what it stands for.

    ``signer`` is a :class:`pyhanko.sign.signers.SimpleSigner` whose certificate store holds the chain
    ``[certificate, *chain]`` (user certificate first, CA certificate(s) after), so the chain is embedded in
    each signature.
    """

    user_id: int
    name: str
    email: str
    role: str
    signer: object          # pyhanko.sign.signers.SimpleSigner (typed loosely: pyHanko is imported lazily)
    certificate: asn1_x509.Certificate
    chain: tuple[asn1_x509.Certificate, ...]

    @property
    def certificate_pem(self) -> bytes:
        """The user certificate in PEM."""
        return _asn1_to_pem(self.certificate)


def _asn1_to_pem(cert: asn1_x509.Certificate) -> bytes:
    return x509.load_der_x509_certificate(cert.dump()).public_bytes(serialization.Encoding.PEM)


def _to_asn1(cert: x509.Certificate) -> asn1_x509.Certificate:
    return asn1_x509.Certificate.load(cert.public_bytes(serialization.Encoding.DER))


def _load_certs(data: bytes, what: str) -> list[x509.Certificate]:
    """All certificates of a PEM bundle, or the one certificate of a DER file."""
    try:
        if b"-----BEGIN" in data:
            certs = x509.load_pem_x509_certificates(data)
        else:
            certs = [x509.load_der_x509_certificate(data)]
    except ValueError as exc:
        raise PKIError(f"{what}: not a PEM or DER X.509 certificate ({exc})") from exc
    if not certs:
        raise PKIError(f"{what}: no certificate in the file")
    return certs


def _write_private(path: Path, data: bytes) -> None:
    """Write ``data`` atomically to ``path`` with mode 0600 (the file never exists with wider permissions)."""
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", dir=path.parent)
    try:
        os.fchmod(fd, 0o600)
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, path)
    except BaseException:
        with contextlib.suppress(FileNotFoundError):
            os.unlink(tmp)
        raise


def _private_dir(path: Path) -> None:
    path.mkdir(mode=0o700, parents=True, exist_ok=True)
    os.chmod(path, 0o700)


def _now() -> dt.datetime:
    return dt.datetime.now(dt.UTC)


def _cert_email(cert: x509.Certificate) -> str:
    try:
        san = cert.extensions.get_extension_for_class(x509.SubjectAlternativeName).value
        emails = san.get_values_for_type(x509.RFC822Name)
        if emails:
            return emails[0]
    except x509.ExtensionNotFound:
        pass
    attrs = cert.subject.get_attributes_for_oid(NameOID.EMAIL_ADDRESS)
    return str(attrs[0].value) if attrs else ""


def _cert_cn(cert: x509.Certificate) -> str:
    attrs = cert.subject.get_attributes_for_oid(NameOID.COMMON_NAME)
    return str(attrs[0].value) if attrs else ""


def _issued_by(cert: x509.Certificate, issuer: x509.Certificate) -> bool:
    try:
        cert.verify_directly_issued_by(issuer)
    except (ValueError, TypeError, InvalidSignature):
        return False
    return True


def _signing_hash(key) -> hashes.HashAlgorithm | None:
    return None if not isinstance(key, (rsa.RSAPrivateKey, ec.EllipticCurvePrivateKey)) else hashes.SHA256()


class InstancePKI:
    """The instance's certificate authority and per-user signing keys (see the module documentation).

    Parameters
    ----------
    folder : Path
        The instance folder; key material goes to ``<folder>/pki/``.
    passphrase : bytes, optional
        Passphrase protecting the CA key and the users' PKCS#12 files; default ``$JTCHECK_PKI_PASSPHRASE``,
        else a random secret generated once into ``<folder>/pki/passphrase``.
    ca_name : str, optional
        Name in the CA's common name "jtcheck instance CA (<ca_name>)"; default the host name.

    Nothing is written until :meth:`ensure_ca` or :meth:`signer_for` is called.
    """

    def __init__(self, folder: Path, passphrase: bytes | None = None, *, ca_name: str | None = None):
        self.folder = Path(folder)
        self.pki_dir = self.folder / PKI_DIRNAME
        self.users_dir = self.pki_dir / USERS_DIRNAME
        if passphrase is not None and not isinstance(passphrase, bytes):
            raise InputError("passphrase", "must be bytes")
        if passphrase == b"":
            raise InputError("passphrase", "must not be empty")
        self._passphrase_arg = passphrase
        self._passphrase: bytes | None = None
        self.ca_name = ca_name or socket.gethostname() or "localhost"
        # organisation configuration (from_config)
        self._org_ca_cert_path: Path | None = None
        self._org_ca_key_path: Path | None = None
        self._org_ca_key_passphrase: bytes | None = None
        self._p12_dir: Path | None = None
        self._p12_passphrase: bytes | None = None
        # caches
        self._lock = threading.RLock()
        self._lock_depth = 0
        self._ca: tuple[x509.Certificate, object, list[x509.Certificate]] | None = None
        self._signers: dict[int, SignerHandle] = {}

    # -- configuration -------------------------------------------------------------------------------------

    @classmethod
    def from_config(cls, folder: Path, ca_cert_path: Path | str | None = None, ca_key_path: Path | str | None = None,
                    ca_key_passphrase: bytes | str | None = None, p12_dir: Path | str | None = None,
                    p12_passphrase: bytes | str | None = None, *, passphrase: bytes | None = None,
                    ca_name: str | None = None) -> InstancePKI:
        """A PKI that uses an organisation's key material instead of an instance CA.

        ``ca_cert_path`` + ``ca_key_path`` (+ ``ca_key_passphrase``): issue user certificates from the
        organisation's CA (they are still kept in ``<folder>/pki/users``, encrypted with the PKI passphrase).
        ``p12_dir`` (+ ``p12_passphrase``): sign with pre-issued ``<p12_dir>/<email>.p12`` files; nothing is
        issued, and ``ca_cert_path`` (certificate only) names the trust root to publish.  With none of them
        this is the plain instance PKI.
        """
        pki = cls(folder, passphrase, ca_name=ca_name)
        if ca_key_path is not None and ca_cert_path is None:
            raise InputError("ca_cert_path", f"the CA key is configured ({ENV_CA_KEY}) but not its certificate "
                                             f"({ENV_CA_CERT})")
        if ca_cert_path is not None and ca_key_path is None and p12_dir is None:
            raise InputError("ca_key_path", f"the CA certificate is configured ({ENV_CA_CERT}) but neither its key "
                                            f"({ENV_CA_KEY}) nor pre-issued PKCS#12 files ({ENV_SIGNER_P12_DIR})")
        for name, value in (("ca_cert_path", ca_cert_path), ("ca_key_path", ca_key_path)):
            if value is not None and not Path(value).is_file():
                raise InputError(name, f"no such file: {value}")
        if p12_dir is not None and not Path(p12_dir).is_dir():
            raise InputError("p12_dir", f"no such directory: {p12_dir}")
        pki._org_ca_cert_path = Path(ca_cert_path) if ca_cert_path is not None else None
        pki._org_ca_key_path = Path(ca_key_path) if ca_key_path is not None else None
        pki._org_ca_key_passphrase = _as_bytes(ca_key_passphrase)
        pki._p12_dir = Path(p12_dir) if p12_dir is not None else None
        pki._p12_passphrase = _as_bytes(p12_passphrase)
        return pki

    @property
    def mode(self) -> str:
        """``"instance"`` (own CA), ``"org-ca"`` (organisation's CA issues) or ``"p12"`` (pre-issued files)."""
        if self._p12_dir is not None:
            return "p12"
        if self._org_ca_cert_path is not None:
            return "org-ca"
        return "instance"

    # -- paths, locking, passphrase ------------------------------------------------------------------------

    @property
    def ca_cert_path(self) -> Path:
        return self._org_ca_cert_path or self.pki_dir / CA_CERT_FILENAME

    @property
    def ca_key_path(self) -> Path:
        return self._org_ca_key_path or self.pki_dir / CA_KEY_FILENAME

    def user_p12_path(self, user_id: int) -> Path:
        """Where the user's issued PKCS#12 file is kept (instance and org-ca modes)."""
        return self.users_dir / f"{int(user_id)}.p12"

    @contextlib.contextmanager
    def _file_lock(self) -> Iterator[None]:
        """Serialise key generation across threads and processes (several web workers share the folder)."""
        import fcntl

        with self._lock:
            if self._lock_depth:            # re-entered by the thread that holds it
                self._lock_depth += 1
                try:
                    yield
                finally:
                    self._lock_depth -= 1
                return
            _private_dir(self.pki_dir)
            fd = os.open(self.pki_dir / LOCK_FILENAME, os.O_RDWR | os.O_CREAT, 0o600)
            try:
                fcntl.flock(fd, fcntl.LOCK_EX)
                self._lock_depth = 1
                try:
                    yield
                finally:
                    self._lock_depth = 0
                    fcntl.flock(fd, fcntl.LOCK_UN)
            finally:
                os.close(fd)

    def _pki_passphrase(self) -> bytes:
        """The PKI passphrase (argument, environment, or generated file); generating it needs the file lock."""
        if self._passphrase is not None:
            return self._passphrase
        pw = self._passphrase_arg
        if pw is None:
            env = os.environ.get(ENV_PKI_PASSPHRASE, "")
            pw = env.encode() if env else None
        if pw is None:
            path = self.pki_dir / PASSPHRASE_FILENAME
            if not path.exists():
                with self._file_lock():
                    if not path.exists():
                        _write_private(path, secrets.token_urlsafe(32).encode())
            pw = path.read_bytes().strip()
            if not pw:
                raise PKIError(f"{path}: the passphrase file is empty")
        self._passphrase = pw
        return pw

    # -- the CA --------------------------------------------------------------------------------------------

    def has_ca(self) -> bool:
        """Whether a CA (instance or organisation) exists, without creating one."""
        return self.ca_cert_path.is_file()

    def ensure_ca(self) -> x509.Certificate:
        """The CA certificate; the instance CA is created on first use (organisation CAs are only loaded)."""
        return self._load_ca()[0]

    def trust_root_pem(self) -> bytes:
        """The trust root in PEM: the instance CA (created if needed) or the organisation's root certificate.

        From an organisation's bundle this is its self-signed certificate if there is one, else its last one.
        Only the certificate file is read: no passphrase is needed once the CA exists.
        """
        if self.mode == "p12":
            if self._org_ca_cert_path is None:
                raise PKIError(f"no trust root configured for the pre-issued signing certificates: set {ENV_CA_CERT} "
                               "to the organisation's root CA certificate")
            certs = _load_certs(self._org_ca_cert_path.read_bytes(), str(self._org_ca_cert_path))
        else:
            self._ensure_instance_ca()
            certs = _load_certs(self.ca_cert_path.read_bytes(), str(self.ca_cert_path))
        roots = [c for c in certs if c.issuer == c.subject and _issued_by(c, c)]
        root = roots[0] if roots else certs[-1]
        return root.public_bytes(serialization.Encoding.PEM)

    def _load_ca(self) -> tuple[x509.Certificate, object, list[x509.Certificate]]:
        """(CA certificate, CA private key, further chain certificates), cached."""
        with self._lock:
            if self._ca is not None:
                return self._ca
            if self.mode == "p12":
                raise PKIError("this PKI signs with pre-issued PKCS#12 files and has no CA key to issue with")
            self._ensure_instance_ca()
            cert_path, key_path = self.ca_cert_path, self.ca_key_path
            certs = _load_certs(cert_path.read_bytes(), str(cert_path))
            if self.mode == "instance":
                key_pw = self._pki_passphrase()
                hint = f"set {ENV_PKI_PASSPHRASE} to the passphrase the CA was made with"
            else:
                key_pw = self._org_ca_key_passphrase
                hint = f"check {ENV_CA_KEY_PASSPHRASE}"
            key = _load_private_key(key_path, key_pw, hint)
            ca_cert = certs[0]
            if ca_cert.public_key().public_bytes(serialization.Encoding.DER,
                                                  serialization.PublicFormat.SubjectPublicKeyInfo) != \
                    key.public_key().public_bytes(serialization.Encoding.DER,
                                                  serialization.PublicFormat.SubjectPublicKeyInfo):
                raise PKIError(f"{key_path}: the key does not belong to the CA certificate {cert_path}")
            try:
                bc = ca_cert.extensions.get_extension_for_class(x509.BasicConstraints).value
                is_ca = bc.ca
            except x509.ExtensionNotFound:
                is_ca = False
            if not is_ca:
                raise PKIError(f"{cert_path}: the certificate is not a CA certificate (basicConstraints CA:TRUE)")
            self._ca = (ca_cert, key, certs[1:])
            return self._ca

    def _ensure_instance_ca(self) -> None:
        """Create the instance CA if this is an instance PKI without one (organisation CAs are never made)."""
        if self.mode == "instance" and not (self.ca_cert_path.is_file() and self.ca_key_path.is_file()):
            with self._file_lock():
                if not (self.ca_cert_path.is_file() and self.ca_key_path.is_file()):
                    self._create_ca()

    def _create_ca(self) -> None:
        key = ec.generate_private_key(ec.SECP256R1())
        name = x509.Name([
            x509.NameAttribute(NameOID.COMMON_NAME, f"jtcheck instance CA ({self.ca_name})"[:_CN_MAX]),
            x509.NameAttribute(NameOID.ORGANIZATION_NAME, "jtcheck"),
        ])
        now = _now()
        ski = x509.SubjectKeyIdentifier.from_public_key(key.public_key())
        cert = (
            x509.CertificateBuilder()
            .subject_name(name).issuer_name(name)
            .public_key(key.public_key())
            .serial_number(x509.random_serial_number())
            .not_valid_before(now - BACKDATE).not_valid_after(now + CA_VALIDITY)
            .add_extension(x509.BasicConstraints(ca=True, path_length=0), critical=True)
            .add_extension(x509.KeyUsage(digital_signature=False, content_commitment=False, key_encipherment=False,
                                         data_encipherment=False, key_agreement=False, key_cert_sign=True,
                                         crl_sign=True, encipher_only=False, decipher_only=False), critical=True)
            .add_extension(ski, critical=False)
            .add_extension(x509.AuthorityKeyIdentifier.from_issuer_subject_key_identifier(ski), critical=False)
            .sign(key, hashes.SHA256())
        )
        pw = self._pki_passphrase()
        key_pem = key.private_bytes(serialization.Encoding.PEM, serialization.PrivateFormat.PKCS8,
                                    serialization.BestAvailableEncryption(pw))
        _write_private(self.ca_key_path, key_pem)
        _write_private(self.ca_cert_path, cert.public_bytes(serialization.Encoding.PEM))

    # -- users ---------------------------------------------------------------------------------------------

    def signer_for(self, user_id: int, name: str, email: str, role: str = "") -> SignerHandle:
        """The user's signing identity, issuing a certificate on first use (or when name or e-mail changed, the
        CA changed, or the certificate is about to expire) and reusing it afterwards (cached per process)."""
        name = (name or "").strip()
        email = (email or "").strip()
        if not name:
            raise InputError("name", "the signer's name must not be empty")
        if not email or "@" not in email:
            raise InputError("email", f"the signer's e-mail address {email!r} is not an address")
        with self._lock:
            cached = self._signers.get(user_id)
            if cached is not None and cached.name == name and cached.email == email and \
                    self._still_good(cached.certificate, name, email):
                if cached.role != role:
                    cached = SignerHandle(user_id, name, email, role, cached.signer, cached.certificate, cached.chain)
                    self._signers[user_id] = cached
                return cached
            if self.mode == "p12":
                handle = self._load_preissued(user_id, name, email, role)
            else:
                handle = self._issued_signer(user_id, name, email, role)
            self._signers[user_id] = handle
            return handle

    def _still_good(self, cert: asn1_x509.Certificate, name: str, email: str) -> bool:
        if self.mode == "p12":
            return True
        c = x509.load_der_x509_certificate(cert.dump())
        return self._matches(c, name, email)

    def _matches(self, cert: x509.Certificate, name: str, email: str) -> bool:
        """Whether an issued certificate still fits: same name and e-mail, issued by the current CA, not near its
        end."""
        ca_cert = self._load_ca()[0]
        return (_cert_cn(cert) == name[:_CN_MAX] and _cert_email(cert).lower() == email.lower()
                and cert.issuer == ca_cert.subject and _issued_by(cert, ca_cert)
                and cert.not_valid_after_utc - RENEW_BEFORE > _now())

    def _issued_signer(self, user_id: int, name: str, email: str, role: str) -> SignerHandle:
        path = self.user_p12_path(user_id)
        pw = self._pki_passphrase()
        ca_cert, _, ca_chain = self._load_ca()
        loaded = self._read_p12(path, pw) if path.is_file() else None
        if loaded is None or not self._matches(loaded[1], name, email):
            with self._file_lock():
                # another process may have issued meanwhile
                loaded = self._read_p12(path, pw) if path.is_file() else None
                if loaded is None or not self._matches(loaded[1], name, email):
                    _private_dir(self.users_dir)
                    if loaded is not None:       # keep the replaced certificate for the record
                        os.replace(path, path.with_name(f"{path.stem}.{loaded[1].serial_number:x}.p12.retired"))
                    self._issue(user_id, name, email, path, pw)
                    loaded = self._read_p12(path, pw)
        assert loaded is not None
        key, cert, _ = loaded
        return self._handle(user_id, name, email, role, key, cert, [ca_cert, *ca_chain])

    def _issue(self, user_id: int, name: str, email: str, path: Path, pw: bytes) -> None:
        ca_cert, ca_key, ca_chain = self._load_ca()
        key = ec.generate_private_key(ec.SECP256R1())
        subject = x509.Name([
            x509.NameAttribute(NameOID.COMMON_NAME, name[:_CN_MAX]),
            x509.NameAttribute(NameOID.EMAIL_ADDRESS, email),
        ])
        now = _now()
        not_after = min(now + USER_VALIDITY, ca_cert.not_valid_after_utc)
        try:
            aki = x509.AuthorityKeyIdentifier.from_issuer_subject_key_identifier(
                ca_cert.extensions.get_extension_for_class(x509.SubjectKeyIdentifier).value)
        except x509.ExtensionNotFound:
            aki = x509.AuthorityKeyIdentifier.from_issuer_public_key(ca_cert.public_key())
        try:
            builder = (
                x509.CertificateBuilder()
                .subject_name(subject).issuer_name(ca_cert.subject)
                .public_key(key.public_key())
                .serial_number(x509.random_serial_number())
                .not_valid_before(now - BACKDATE).not_valid_after(not_after)
                .add_extension(x509.BasicConstraints(ca=False, path_length=None), critical=True)
                .add_extension(x509.KeyUsage(digital_signature=True, content_commitment=True, key_encipherment=False,
                                             data_encipherment=False, key_agreement=False, key_cert_sign=False,
                                             crl_sign=False, encipher_only=False, decipher_only=False), critical=True)
                .add_extension(x509.ExtendedKeyUsage([ExtendedKeyUsageOID.EMAIL_PROTECTION]), critical=False)
                .add_extension(x509.SubjectAlternativeName([x509.RFC822Name(email)]), critical=False)
                .add_extension(x509.SubjectKeyIdentifier.from_public_key(key.public_key()), critical=False)
                .add_extension(aki, critical=False)
            )
            cert = builder.sign(ca_key, _signing_hash(ca_key))
        except ValueError as exc:
            raise InputError("email", f"cannot put {email!r} / {name!r} into a certificate: {exc}") from exc
        data = pkcs12.serialize_key_and_certificates(
            f"jtcheck user {user_id}".encode(), key, cert, [ca_cert, *ca_chain],
            serialization.BestAvailableEncryption(pw))
        _write_private(path, data)

    @staticmethod
    def _read_p12(path: Path, pw: bytes | None):
        try:
            key, cert, extra = pkcs12.load_key_and_certificates(path.read_bytes(), pw)
        except ValueError as exc:
            raise PKIError(f"{path}: cannot open the PKCS#12 file (wrong passphrase or damaged file)") from exc
        if key is None or cert is None:
            raise PKIError(f"{path}: the PKCS#12 file holds no key and certificate")
        return key, cert, list(extra)

    def _load_preissued(self, user_id: int, name: str, email: str, role: str) -> SignerHandle:
        assert self._p12_dir is not None
        if "/" in email or "\\" in email or email.startswith("."):
            raise InputError("email", f"{email!r} cannot name a PKCS#12 file")
        path = self._p12_dir / f"{email}.p12"
        if not path.is_file():
            path_lower = self._p12_dir / f"{email.lower()}.p12"
            if not path_lower.is_file():
                raise PKIError(f"no signing certificate for {email}: expected the PKCS#12 file {path} "
                               f"({ENV_SIGNER_P12_DIR})")
            path = path_lower
        key, cert, extra = self._read_p12(path, self._p12_passphrase)
        chain = list(extra)
        if self._org_ca_cert_path is not None:
            known = {c.fingerprint(hashes.SHA256()) for c in chain}
            chain += [c for c in _load_certs(self._org_ca_cert_path.read_bytes(), str(self._org_ca_cert_path))
                      if c.fingerprint(hashes.SHA256()) not in known]
        if cert.not_valid_after_utc <= _now():
            raise PKIError(f"{path}: the signing certificate of {email} expired on "
                           f"{cert.not_valid_after_utc:%Y-%m-%d}")
        return self._handle(user_id, name, email, role, key, cert, chain)

    @staticmethod
    def _handle(user_id, name, email, role, key, cert: x509.Certificate, chain: list[x509.Certificate]) -> SignerHandle:
        from pyhanko.keys import internal as pyhanko_keys
        from pyhanko.sign.signers import SimpleSigner
        from pyhanko_certvalidator.registry import SimpleCertificateStore

        user_asn1 = _to_asn1(cert)
        chain_asn1 = tuple(_to_asn1(c) for c in chain)
        store = SimpleCertificateStore()
        store.register_multiple([user_asn1, *chain_asn1])
        signer = SimpleSigner(signing_cert=user_asn1,
                              signing_key=pyhanko_keys.translate_pyca_cryptography_key_to_asn1(key),
                              cert_registry=store)
        return SignerHandle(user_id, name, email, role, signer, user_asn1, chain_asn1)


def _as_bytes(value: bytes | str | None) -> bytes | None:
    if value is None or value == "":
        return None
    return value.encode() if isinstance(value, str) else value


def _load_private_key(path: Path, passphrase: bytes | None, hint: str):
    data = path.read_bytes()
    try:
        if b"-----BEGIN" in data:
            return serialization.load_pem_private_key(data, passphrase)
        return serialization.load_der_private_key(data, passphrase)
    except TypeError as exc:          # encrypted without passphrase, or passphrase for a plain key
        raise PKIError(f"{path}: {exc}; {hint}") from exc
    except ValueError as exc:
        raise PKIError(f"{path}: cannot decrypt or read the private key (wrong passphrase?); {hint}") from exc


_ENV_CACHE: dict[tuple, InstancePKI] = {}
_ENV_CACHE_LOCK = threading.Lock()


def pki_from_env(instance_folder: Path) -> InstancePKI:
    """The PKI configured by the environment (see the module documentation), one object per configuration and
    process so that signers are reused."""
    env = {k: os.environ.get(k, "").strip() or None
           for k in (ENV_CA_CERT, ENV_CA_KEY, ENV_CA_KEY_PASSPHRASE, ENV_SIGNER_P12_DIR, ENV_SIGNER_P12_PASSPHRASE,
                     ENV_PKI_PASSPHRASE)}
    key = (str(Path(instance_folder).resolve()), *env.values())
    with _ENV_CACHE_LOCK:
        pki = _ENV_CACHE.get(key)
        if pki is None:
            try:
                pki = InstancePKI.from_config(instance_folder, ca_cert_path=env[ENV_CA_CERT],
                                              ca_key_path=env[ENV_CA_KEY],
                                              ca_key_passphrase=env[ENV_CA_KEY_PASSPHRASE],
                                              p12_dir=env[ENV_SIGNER_P12_DIR],
                                              p12_passphrase=env[ENV_SIGNER_P12_PASSPHRASE])
            except InputError as exc:
                env_name = {"ca_cert_path": ENV_CA_CERT, "ca_key_path": ENV_CA_KEY,
                            "p12_dir": ENV_SIGNER_P12_DIR}.get(exc.field, exc.field)
                raise InputError(env_name, exc.message) from exc
            _ENV_CACHE[key] = pki
        return pki


def timestamper_from_env():
    """A pyHanko ``HTTPTimeStamper`` for ``$JTCHECK_TSA_URL`` (RFC 3161), or ``None`` when it is not set.

    One object per URL and process: pyHanko keeps a sample response in it to size the signature container, so
    reusing it saves a request per signature."""
    url = os.environ.get(ENV_TSA_URL, "").strip()
    if not url:
        return None
    if not url.startswith(("http://", "https://")):
        raise InputError(ENV_TSA_URL, f"{url!r} is not an http(s) URL of an RFC 3161 time-stamp server")
    with _ENV_CACHE_LOCK:
        stamper = _TIMESTAMPERS.get(url)
        if stamper is None:
            from pyhanko.sign.timestamps import HTTPTimeStamper

            stamper = _TIMESTAMPERS[url] = HTTPTimeStamper(url, timeout=10)
        return stamper


_TIMESTAMPERS: dict[str, object] = {}
