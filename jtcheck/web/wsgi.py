"""WSGI entry point for production servers: ``gunicorn 'jtcheck.web.wsgi:app'``.

Configure with environment variables (``DATABASE_URL``, ``SECRET_KEY``, ``REDIS_URL``, ...; see
:mod:`jtcheck.web.config`).  The first admin account is made by ``python -m jtcheck.web --init-only``.
"""
from jtcheck.web import create_app

app = create_app()
