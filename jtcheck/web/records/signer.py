"""The app's signing set-up: the PKI of its instance folder (or the organisation's, from the environment),
the optional RFC 3161 time-stamp server and the paper size, as one signing callback for the workflow."""
from __future__ import annotations

from pathlib import Path

from flask import current_app

from jtcheck.records.workflow import SignFn
from jtcheck.reports.issue import record_signer
from jtcheck.reports.pki import InstancePKI, pki_from_env, timestamper_from_env

#: Paper sizes a record may be rendered on (config ``RECORD_PAPER``, default A4).
PAPER_SIZES = ("A4", "Letter")


def app_pki() -> InstancePKI:
    """The PKI of the running app (created in the instance folder on first use unless configured)."""
    return pki_from_env(Path(current_app.instance_path))


def app_signer() -> SignFn:
    """The signing callback for :mod:`jtcheck.records.workflow` in the running app."""
    paper = current_app.config.get("RECORD_PAPER") or "A4"
    return record_signer(app_pki(), paper=paper, timestamper=timestamper_from_env())


def trust_root_pem() -> bytes:
    """The instance's CA certificate (PEM); made on first call if the instance has none yet."""
    pki = app_pki()
    pki.ensure_ca()
    return pki.trust_root_pem()
