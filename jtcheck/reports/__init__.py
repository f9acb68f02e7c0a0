"""Calculation records: the PDF rendered from a revision's snapshot (WeasyPrint), its charts, the
instance's certificate authority and users' signing keys, PAdES signatures (pyHanko) and verification; the
screening display (:mod:`~jtcheck.reports.screening_display`) and number formats (:mod:`~jtcheck.reports.numbers`)
that the record and the web pages share.

May import :mod:`jtcheck.records`, the engineering and core packages, :mod:`jtcheck.units`, WeasyPrint,
matplotlib and pyHanko; never the web package.
"""
import warnings as _warnings

# Third-party import-time notices that are not the user's concern: cryptography 51 deprecates DSA, which pyHanko
# imports (records are signed with RSA or ECDSA keys); WeasyPrint 70 asks for the HarfBuzz-Subset system library,
# which a future version will need (the PDF is the same without it).  Without this, `jtcheck record ...` prints them.
_warnings.filterwarnings("ignore", message="DSA is deprecated", category=UserWarning)
_warnings.filterwarnings("ignore", message="HarfBuzz-Subset will be required", category=DeprecationWarning)
