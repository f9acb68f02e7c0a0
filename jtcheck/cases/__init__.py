"""Case kinds: the seam that lets the register, the API, batch, the web and the records handle any kind of case.

A kind (:class:`~jtcheck.cases.kind.CaseKind`) declares its inputs (:class:`~jtcheck.cases.fields.Field`),
checks them, computes and screens a case, and names the sections it adds to the form, the result page
and the record.  Each kind is a package here (:mod:`jtcheck.cases.letdown`, :mod:`jtcheck.cases.relief`)
registered in :mod:`jtcheck.cases.registry`; the layers above dispatch on it and never on one kind's
fields.  This package sits in the engineering layer: it imports thermo, letdown, screening and errors.
"""
from __future__ import annotations

from jtcheck.cases.fields import COMMON_FIELDS, P_ATM, Field
from jtcheck.cases.kind import CaseKind
from jtcheck.cases.registry import KINDS, all_fields, form_sections, kind_named, kind_of, kinds_with

__all__ = ["COMMON_FIELDS", "KINDS", "P_ATM", "CaseKind", "Field", "all_fields", "form_sections", "kind_named",
           "kind_of", "kinds_with"]
