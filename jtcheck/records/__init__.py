"""The case register: stored fluids, materials and letdown cases, their results and an audit log.

Modules, from the bottom up (each imports only modules above it in this list)
------------------------------------------------------------------------------
errors, models, db
    Exceptions; SQLAlchemy tables (``Mapped[...]``), one :class:`~jtcheck.records.models.Base`;
    database URL, engine, sessions and Alembic migrations run from Python.
guard
    Roles and permission checks.
transactions
    One transaction per write; the row lock that orders edits and review steps of a case.
audit
    Audit entries and the audit trail.
fields, json_values
    Input checks (text, numbers in range, ids, flags) and their limits; JSON-safe copies of values.
case_inputs
    The fields of a case, their defaults and the check of a whole case.
users, sites, fluids, materials
    Accounts; sites and plant units; stored fluids; materials and the shipped typical ones.
snapshot, results
    The frozen content of a calculation record; stored results (latest, by id, still current).
workflow
    Calculation records: revisions and their four-eyes review.
cases, computation
    Create, edit, read and list cases; compute a case and store its result.
service
    The operations above re-exported in one namespace for the web and CLI layers (nothing in this
    package imports it).
demo, tokens, passwords
    The invented Kestrel Ridge gas terminal; API tokens; password hashing.
"""
