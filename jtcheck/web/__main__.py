"""Run the web service: ``python -m jtcheck.web [--host 127.0.0.1] [--port 8000]``.

On the first start the database is created (SQLite in ``./instance`` unless ``DATABASE_URL`` says
otherwise), the invented demo site is loaded if the database is empty, and an admin account is made
with a random one-time password printed here.  Then the app is served by waitress.  For production
behind a reverse proxy use a WSGI server on ``jtcheck.web.wsgi:app`` instead (e.g. gunicorn).
"""
from __future__ import annotations

import argparse
import ipaddress
import logging
import os
import sys

from flask import Flask
from sqlalchemy import func, select

from jtcheck.notices import DEMO_NOTICE
from jtcheck.records import service
from jtcheck.records.demo import load_demo
from jtcheck.records.models import Role, Site, User
from jtcheck.web import create_app
from jtcheck.web.accounts.passwords import generate_password, hash_password
from jtcheck.web.database import db_session

#: E-mail address of the admin account made on the first start (JTCHECK_ADMIN_EMAIL changes it).
DEFAULT_ADMIN_EMAIL = "admin@jtcheck.local"
#: Environment variable that asks for a new admin password at start, as --reset-admin-password does
#: (``make run RESET_ADMIN=1`` sets it).
RESET_ADMIN_ENV = "JTCHECK_RESET_ADMIN_PASSWORD"
#: Printed before anything slow: the first start compiles the calculation kernels.
STARTING = ("starting: the first start compiles the calculation kernels and computes the demo cases (one to two "
            "minutes on a small machine; later starts reuse the compiled kernels). Please wait...")


def _is_loopback(host: str) -> bool:
    if host == "localhost":
        return True
    try:
        return ipaddress.ip_address(host).is_loopback
    except ValueError:
        return False


def bootstrap(app: Flask, url: str, *, demo: bool = True, reset_admin_password: bool = False) -> list[str]:
    """Make the first admin and load the demo site when the database is new; return what to tell the user."""
    lines: list[str] = []
    with app.app_context():
        session = db_session()
        if not session.scalar(select(func.count()).select_from(User)):
            email = os.environ.get("JTCHECK_ADMIN_EMAIL", "").strip() or DEFAULT_ADMIN_EMAIL
            password = generate_password()
            service.create_user(session, None, email=email, name="Administrator", role=Role.ADMIN,
                                password_hash=hash_password(password))
            lines.append(f"log in at {url} as {email} with password {password} ; change it after logging in "
                         "(your account page). It is shown only this once.")
        else:
            admin = session.scalar(select(User).where(User.role == Role.ADMIN, User.active.is_(True)).order_by(User.id))
            if admin is None:
                lines.append("no active admin account exists; ask whoever manages the database")
            elif reset_admin_password:
                password = generate_password()
                service.update_user(session, admin, admin.id, {"password_hash": hash_password(password)})
                lines.append(f"new password for {admin.email}: {password} ; change it after logging in at {url}")
            else:
                lines.append(f"an admin account exists ({admin.email}); log in at {url} with its password "
                             "(lost it? start again with `make run RESET_ADMIN=1` or --reset-admin-password)")
        if demo and not session.scalar(select(func.count()).select_from(Site)):
            load_demo(session)
            lines.append(f"loaded the demo site. {DEMO_NOTICE}")
            from jtcheck.reports.demo import DEMO_RECORD_TAG, issue_demo_record
            from jtcheck.web.records.signer import app_signer

            revision = issue_demo_record(session, app_signer())
            if revision is not None:
                lines.append(f"issued the demo record of {DEMO_RECORD_TAG} (revision {revision.label}, three "
                             "signatures by invented reviewers)")
    return lines


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(prog="python -m jtcheck.web", description="Run the jtcheck web service.")
    parser.add_argument("--host", default="127.0.0.1", help="address to listen on (default 127.0.0.1)")
    parser.add_argument("--port", type=int, default=None, help="port (default $PORT or 8000)")
    parser.add_argument("--threads", type=int, default=8, help="worker threads (default 8)")
    parser.add_argument("--no-demo", action="store_true", help="do not load the demo site into an empty database")
    parser.add_argument("--reset-admin-password", action="store_true",
                        help=f"give the first active admin a new random password and print it "
                             f"(also with {RESET_ADMIN_ENV}=1)")
    parser.add_argument("--init-only", action="store_true",
                        help="create the database, the admin account and the demo site, then exit")
    args = parser.parse_args(argv)
    reset = args.reset_admin_password or os.environ.get(RESET_ADMIN_ENV, "").strip().lower() in ("1", "yes", "true")
    print(f"jtcheck web: {STARTING}", flush=True)
    port = args.port if args.port is not None else int(os.environ.get("PORT", "8000"))
    logging.basicConfig(level=logging.INFO, format="%(asctime)s %(levelname)s %(name)s: %(message)s")
    logging.getLogger("alembic").setLevel(logging.WARNING)

    app = create_app()
    shown_host = f"[{args.host}]" if ":" in args.host else args.host
    url = f"http://{'127.0.0.1' if args.host in ('0.0.0.0', '::') else shown_host}:{port}"
    print(f"jtcheck web: database {app.config['DATABASE_URL']}", flush=True)
    print(f"jtcheck web: instance folder {app.instance_path}", flush=True)
    for line in bootstrap(app, url, demo=not args.no_demo, reset_admin_password=reset):
        print(f"jtcheck web: {line}", flush=True)
    if args.init_only:
        return 0
    if not app.config["SESSION_COOKIE_SECURE"]:
        print("jtcheck web: SESSION_COOKIE_SECURE=0: the session cookie is also sent over plain HTTP. Fine for a "
              "local run on 127.0.0.1; never in production (serve HTTPS and leave it unset).", flush=True)
    elif _is_loopback(args.host):
        print("jtcheck web: the session cookie is marked Secure; browsers accept it from http://127.0.0.1 and "
              "http://localhost. If signing in does not stick, start with SESSION_COOKIE_SECURE=0.", flush=True)

    from waitress import serve

    print(f"jtcheck web: serving on {url} (Ctrl+C stops)", flush=True)
    serve(app, host=args.host, port=port, threads=args.threads, ident="jtcheck")
    return 0


if __name__ == "__main__":
    sys.exit(main())
