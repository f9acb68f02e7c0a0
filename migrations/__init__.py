"""Alembic migrations of the jtcheck case register (shipped in the wheel as ``jtcheck._migrations``)."""
