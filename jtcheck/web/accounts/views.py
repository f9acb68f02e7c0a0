"""Signing in and out, the user's own account (password, API token) and, for admins, the list of users."""
from __future__ import annotations

from flask import Blueprint, current_app, flash, redirect, render_template, request, url_for

from jtcheck.errors import InputError
from jtcheck.records import service
from jtcheck.records.errors import ConcurrentEditError, NotFound
from jtcheck.records.models import Role, User
from jtcheck.records.tokens import create_token, revoke_token
from jtcheck.records.versions import parse_version
from jtcheck.web.accounts.passwords import (
    check_new_password,
    generate_password,
    hash_password,
    needs_rehash,
    verify_password,
)
from jtcheck.web.database import db_session
from jtcheck.web.forms import FormState
from jtcheck.web.security import current_user, require_admin, require_viewer, safe_next, sign_in, sign_out

bp = Blueprint("auth", __name__)

_FAILED = "e-mail address or password not recognised"


@bp.route("/login", methods=["GET", "POST"])
def login():
    if current_user() is not None and request.method == "GET":
        return redirect(url_for("cases.index"))
    form = FormState.from_request(("email", "next")) if request.method == "POST" else FormState.of(
        {"next": request.args.get("next", "")})
    if request.method == "POST":
        session = db_session()
        email = form.get("email").strip()
        password = request.form.get("password", "")
        user = service.get_user_by_email(session, email) if email and len(email) <= 254 else None
        ok = verify_password(user.password_hash if user is not None else None, password)
        if not ok or user is None or not user.active:
            # no submitted value goes to the log (a password typed into the e-mail field would land there)
            current_app.logger.info("failed sign-in from %s (%s)", request.remote_addr,
                                    f"account id {user.id}" if user is not None else "no such account")
            form.general.append(_FAILED)
            return render_template("accounts/login.html", form=form), 401
        if needs_rehash(user.password_hash):
            user = service.update_user(session, user, user.id, {"password_hash": hash_password(password)})
        sign_in(user)
        return redirect(safe_next(form.get("next")) or url_for("cases.index"))
    return render_template("accounts/login.html", form=form)


@bp.route("/logout", methods=["POST"])
def logout():
    sign_out()
    flash("You are signed out.")
    return redirect(url_for("auth.login"))


# -- own account ---------------------------------------------------------------------------------
@bp.route("/account", methods=["GET"])
def account():
    user = require_viewer("view the account page")
    return render_template("accounts/account.html", user=user, form=FormState(), token=None)


@bp.route("/account/password", methods=["POST"])
def change_password():
    user = require_viewer("change the password")
    form = FormState()
    current = request.form.get("current_password", "")
    new = request.form.get("new_password", "")
    repeat = request.form.get("repeat_password", "")
    if not verify_password(user.password_hash, current):
        form.add("current_password", "this is not your current password")
    try:
        check_new_password(new)
    except InputError as exc:
        form.add(exc.field, exc.message)
    if new != repeat:
        form.add("repeat_password", "the two new passwords differ")
    if new and new == current:
        form.add("new_password", "choose a password different from the current one")
    if not form.ok:
        return render_template("accounts/account.html", user=user, form=form, token=None), 422
    user = service.update_user(db_session(), user, user.id, {"password_hash": hash_password(new)})
    sign_in(user)   # a fresh session; sessions signed in with the old password end
    flash("Your password is changed. Every other session of yours is signed out, and your API token is revoked "
          "(make a new one below if you need it).")
    return redirect(url_for("auth.account"))


@bp.route("/account/token", methods=["POST"])
def make_token():
    user = require_viewer("make an API token")
    token = create_token(db_session(), user)
    return render_template("accounts/account.html", user=user, form=FormState(), token=token)


@bp.route("/account/token/revoke", methods=["POST"])
def drop_token():
    user = require_viewer("revoke an API token")
    revoke_token(db_session(), user)
    flash("Your API token is revoked.")
    return redirect(url_for("auth.account"))


# -- users (admins) ------------------------------------------------------------------------------
_USER_FIELDS = ("email", "name", "role")


@bp.route("/users")
def users():
    admin = require_admin("list users")
    return render_template("accounts/users.html", users=service.list_users(db_session(), admin), roles=list(Role),
                           form=FormState.of({"role": Role.ENGINEER.value}), new_password=None)


@bp.route("/users/new", methods=["POST"])
def new_user():
    admin = require_admin("create users")
    session = db_session()
    form = FormState.from_request(_USER_FIELDS)
    password = generate_password()
    try:
        user = service.create_user(session, admin, email=form.get("email"), name=form.get("name"),
                                   role=form.get("role"), password_hash=hash_password(password))
    except InputError as exc:
        form.add(exc.field, exc.message)
        return render_template("accounts/users.html", users=service.list_users(session, admin), roles=list(Role),
                               form=form, new_password=None), 409 if "already exists" in exc.message else 422
    return render_template("accounts/users.html", users=service.list_users(session, admin), roles=list(Role),
                           form=FormState.of({"role": Role.ENGINEER.value}), new_password=(user, password))


def _user_or_404(user_id: int) -> User:
    user = db_session().get(User, user_id)
    if user is None:
        raise NotFound("user", user_id)
    return user


@bp.route("/users/<int:user_id>", methods=["GET", "POST"])
def edit_user(user_id: int):
    admin = require_admin("edit users")
    user = _user_or_404(user_id)
    if request.method == "GET":
        return render_template("accounts/user_edit.html", user=user, roles=list(Role),
                               form=FormState.of({"name": user.name, "role": Role(user.role).value,
                                                  "active": "1" if user.active else "",
                                                  "version": str(user.version)}), new_password=None)
    form = FormState.from_request(("name", "role", "active", "version"))
    changes = {"name": form.get("name"), "role": form.get("role"), "active": form.get("active") == "1"}
    try:
        version = parse_version(form.get("version"), required=True)
        user = service.update_user(db_session(), admin, user_id, changes, expected_version=version)
    except ConcurrentEditError as exc:
        form.general.append(str(exc))
        return render_template("accounts/user_edit.html", user=_user_or_404(user_id), roles=list(Role), form=form,
                               new_password=None), 409
    except InputError as exc:
        if exc.field == "version":
            form.general.append(f"version: {exc.message}")
        else:
            form.add(exc.field, exc.message)
        return render_template("accounts/user_edit.html", user=_user_or_404(user_id), roles=list(Role), form=form,
                               new_password=None), 422
    flash(f"Saved {user.email}.")
    return redirect(url_for("auth.users"))


@bp.route("/users/<int:user_id>/reset-password", methods=["POST"])
def reset_password(user_id: int):
    admin = require_admin("reset passwords")
    user = _user_or_404(user_id)
    password = generate_password()
    user = service.update_user(db_session(), admin, user.id, {"password_hash": hash_password(password)})
    if user.id == admin.id:
        sign_in(user)   # keep the admin who reset their own password signed in
    return render_template("accounts/user_edit.html", user=user, roles=list(Role),
                           form=FormState.of({"name": user.name, "role": Role(user.role).value,
                                              "active": "1" if user.active else "", "version": str(user.version)}),
                           new_password=password)
