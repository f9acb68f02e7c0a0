"""The web service of jtcheck: pages for the case register and a JSON API.

>>> from jtcheck.web import create_app
>>> app = create_app({"DATABASE_URL": "sqlite:////tmp/jtcheck-example.sqlite3"})   # doctest: +SKIP

Only this package imports Flask.  One package per feature, each with its blueprint in ``views``:
``accounts`` (blueprint ``auth``: sign-in, account, users), ``cases`` (case register pages, sites),
``records`` (review steps, record PDFs, the verify page), ``batches`` (batch screening of an uploaded letdown
list, run as background jobs), ``fluids``, ``materials`` and ``api`` (``/api/v1``); ``health`` (``/healthz``)
is a module.  What the features share stays at this level: settings (``config``), the database session
(``database``), who is signed in (``security``), error answers (``errors``), plain forms (``forms``),
quantities with units (``quantities``), deleting cases and fluids (``removal``), file downloads
(``downloads``) and the case page (``case_page``), which the cases views and the review steps both render.
Configuration comes from environment variables (see :mod:`jtcheck.web.config`); the ``config`` argument
of :func:`create_app` overrides them (tests).
"""
from __future__ import annotations

import hashlib
from pathlib import Path
from typing import Any

from flask import Flask, current_app, request
from flask_limiter import Limiter
from flask_limiter.util import get_remote_address
from flask_wtf.csrf import CSRFProtect
from werkzeug.middleware.proxy_fix import ProxyFix

from jtcheck import __version__
from jtcheck.cases import kind_of
from jtcheck.notices import CAUTION, DEMO_NOTICE
from jtcheck.records.demo_labels import site_label
from jtcheck.records.models import CaseKind, Role
from jtcheck.reports.numbers import finalize_marks, fmt_number, mark_filters
from jtcheck.web import database, errors, limits, security
from jtcheck.web.batches import views as batch_views
from jtcheck.web.cases.diagram import DiagramCache
from jtcheck.web.cases.results import units_of
from jtcheck.web.config import DEFAULTS, from_environment, instance_path, instance_secret_key
from jtcheck.web.records import views as record_views


def templates_path() -> Path:
    """The folder of the page templates: ``jtcheck._templates/web`` in a wheel, else ``templates/web`` of the
    source tree."""
    here = Path(__file__).resolve()
    candidates = [here.parents[1] / "_templates" / "web",      # installed: the package jtcheck._templates
                  here.parents[2] / "templates" / "web"]       # source checkout (and editable install)
    for path in candidates:
        if (path / "base.html").is_file():
            return path
    raise FileNotFoundError("page templates not found; looked in: " + ", ".join(map(str, candidates)))


def _login_limit() -> str:
    return current_app.config["LOGIN_RATE_LIMIT"]


def _account_limit() -> str:
    return current_app.config["LOGIN_ACCOUNT_RATE_LIMIT"]


def _account_key() -> str:
    """The per-account bucket of the sign-in throttle: a digest of the e-mail typed (never the text itself)."""
    email = request.form.get("email", "").strip().lower()[:254]
    return "login-account:" + hashlib.sha256(email.encode("utf-8", "replace")).hexdigest()


def _sign_in_failed(response) -> bool:
    return response.status_code == 401


def create_app(config: dict[str, Any] | None = None) -> Flask:
    """Make the web application.

    Parameters
    ----------
    config : dict, optional
        Settings that override the defaults and the environment, e.g. ``{"TESTING": True,
        "DATABASE_URL": ..., "WTF_CSRF_ENABLED": False}``; ``JTCHECK_INSTANCE`` sets the instance folder.

    Notes
    -----
    On start the database schema is brought to the newest migration (unless ``DB_UPGRADE_ON_START`` is
    false) and, without ``SECRET_KEY``, a secret key is made once and kept in the instance folder (mode 0600).
    """
    overrides = dict(config or {})
    folder = instance_path(overrides)
    folder.mkdir(mode=0o700, parents=True, exist_ok=True)   # database and secret key: owner only
    app = Flask(__name__, instance_path=str(folder), template_folder=str(templates_path()), static_folder="static")
    app.config.from_mapping(DEFAULTS)
    app.config.update(from_environment())
    app.config.update(overrides)
    if not app.config.get("SECRET_KEY"):
        app.config["SECRET_KEY"] = instance_secret_key(folder)
    proxies = int(app.config.get("PROXY_COUNT") or 0)
    if proxies > 0:
        app.wsgi_app = ProxyFix(app.wsgi_app, x_for=proxies, x_proto=proxies, x_host=proxies)  # type: ignore[method-assign]

    database.init_app(app)
    security.init_app(app)          # first: an anonymous request goes to sign-in before anything else
    record_views.init_app(app)      # the upload limit of the verify page, before the CSRF check reads the form
    batch_views.init_app(app)       # the same for the batch upload
    limits.init_app(app)            # ids in URLs within range, no control characters in queries and forms (after
                                    # the upload limits: it reads the form)
    csrf = CSRFProtect(app)
    limiter = Limiter(get_remote_address, app=app, headers_enabled=False)
    errors.register(app)

    from jtcheck.web import health
    from jtcheck.web.accounts import views as accounts
    from jtcheck.web.api import views as api
    from jtcheck.web.cases import views as cases
    from jtcheck.web.fluids import views as fluids
    from jtcheck.web.materials import views as materials

    for bp in (accounts.bp, cases.bp, record_views.bp, batch_views.bp, fluids.bp, materials.bp, api.bp, health.bp):
        app.register_blueprint(bp)
    csrf.exempt(api.bp)             # token-authenticated only: no cookie, so no cross-site forgery
    # sign-in: a limit per address, and one per account counting failed attempts only (many addresses, one account)
    login = limiter.limit(_login_limit, methods=["POST"])(app.view_functions["auth.login"])
    login = limiter.limit(_account_limit, methods=["POST"], key_func=_account_key, deduct_when=_sign_in_failed)(login)
    app.view_functions["auth.login"] = login
    app.extensions["jtcheck_limiter"] = limiter
    app.extensions["jtcheck_diagrams"] = DiagramCache(app.config["DIAGRAM_CACHE_SIZE"])
    if app.config.get("BATCH_RECOVER_ON_START", True):
        batch_views.recover_at_start(app)

    app.jinja_env.filters["num"] = fmt_number
    app.jinja_env.filters.update(mark_filters())     # SI values marked, shown in the case's units (finalize_marks)
    app.jinja_env.finalize = finalize_marks     # marked quantities in the case's units on every page
    app.jinja_env.globals.update(CAUTION=CAUTION, DEMO_NOTICE=DEMO_NOTICE, version=__version__, Role=Role,
                                 CaseKind=CaseKind, current_user=security.current_user, result_units=units_of,
                                 case_kind=kind_of, site_label=site_label)
    return app


__all__ = ["create_app"]
