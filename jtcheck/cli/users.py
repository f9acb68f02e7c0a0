"""``jtcheck user``: accounts of the case register, for set-up and automation."""
from __future__ import annotations

import sys

import click

from jtcheck.cli.exits import fail_input
from jtcheck.cli.register import register_session
from jtcheck.errors import InputError


def acting_admin(session):
    """The first active admin account, who adds accounts from the command line (None before the first)."""
    from sqlalchemy import select

    from jtcheck.records.models import Role, User

    return session.scalar(select(User).where(User.role == Role.ADMIN, User.active.is_(True)).order_by(User.id))


@click.group("user")
def user_group():
    """Accounts of the case register (for set-up and automation; run by whoever runs the server)."""


@user_group.command("add")
@click.argument("email")
@click.option("--role", required=True, type=click.Choice(["engineer", "checker", "approver", "admin"]),
              help="engineer prepares cases; checker and approver review; admin manages users and materials.")
@click.option("--name", default=None, help="Display name (default: the part of EMAIL before @).")
def user_add(email, role, name):
    """Add an account; the password is read from standard input (one line)."""
    from jtcheck.records.errors import PermissionDenied
    from jtcheck.records.passwords import check_password_length, hash_password
    from jtcheck.records.users import create_user

    password = sys.stdin.readline().rstrip("\r\n")
    try:
        check_password_length(password)
        with register_session() as session:
            actor = acting_admin(session)
            if actor is None and role != "admin":
                raise InputError("role", "the first account must be an admin (add one with --role admin)")
            user = create_user(session, actor, email=email, name=name or email.split("@")[0], role=role,
                               password_hash=hash_password(password))
            click.echo(f"added {user.email} ({user.role})")
    except (InputError, PermissionDenied) as err:
        fail_input(err)


@user_group.command("token")
@click.argument("email")
def user_token(email):
    """Print a new API token for EMAIL (replacing any earlier one); only its hash is stored."""
    from jtcheck.records.tokens import create_token
    from jtcheck.records.users import get_user_by_email

    with register_session() as session:
        user = get_user_by_email(session, email)
        if user is None or not user.active:
            fail_input(InputError("email", f"no active account {email!r}"))
        click.echo(create_token(session, user))
