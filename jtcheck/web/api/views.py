"""The JSON API, ``/api/v1``: token authentication (``Authorization: Bearer <token>``), explicit units.

Every route is registered through :data:`~jtcheck.web.api.blueprint.api` (an
:class:`~jtcheck.web.api.openapi.ApiRegistry`) so that it appears in the OpenAPI document at
``/api/v1/openapi.json``.  One module per resource: :mod:`~jtcheck.web.api.letdown`,
:mod:`~jtcheck.web.api.cases`, :mod:`~jtcheck.web.api.library` and :mod:`~jtcheck.web.api.records`;
importing this module registers their routes on :data:`bp`.  Errors are
``{"error": {"field": ..., "message": ...}}`` with 400 (not JSON), 401, 403, 404, 409, 413 or 422.

Calculation records (:mod:`jtcheck.records.workflow`): ``/cases/<id>/revisions[/<rev>[/record.pdf]]`` to
read them, ``POST /cases/<id>/{submit,check,send-for-approval,approve,reject,void}`` for the review steps
on the case's current revision (each answered with the revision), ``/trust-root.pem`` and
``POST /records/verify`` to check a signed record.
"""
from __future__ import annotations

from jtcheck.web.api import cases, letdown, library, records
from jtcheck.web.api.blueprint import api, bp

#: The resource modules whose routes are registered on :data:`bp` (imported for that).
RESOURCES = (letdown, cases, library, records)

__all__ = ["RESOURCES", "api", "bp"]
