"""Calculation records: the PDF rendered from a revision's snapshot (WeasyPrint), its charts, the
instance's certificate authority and users' signing keys, PAdES signatures (pyHanko) and verification; the
screening display (:mod:`~jtcheck.reports.screening_display`) and number formats (:mod:`~jtcheck.reports.numbers`)
that the record and the web pages share.

May import :mod:`jtcheck.records`, the engineering and core packages, :mod:`jtcheck.units`, WeasyPrint,
matplotlib and pyHanko; never the web package.
"""
