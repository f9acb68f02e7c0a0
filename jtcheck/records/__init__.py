"""The case register: stored fluids, materials and letdown cases, their results and an audit log.

Modules
-------
models
    SQLAlchemy tables (``Mapped[...]``), one :class:`~jtcheck.records.models.Base`.
db
    Database URL, engine and sessions; Alembic migrations run from Python.
service
    Operations with permission checks, input checks, audit entries and one transaction each.
demo
    The invented Kestrel Ridge gas terminal.
errors
    PermissionDenied, NotFound, ConcurrentEditError, AppendOnlyError.
"""
