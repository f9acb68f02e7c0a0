"""Errors as answers a person can act on: an HTML page or a JSON body ``{"error": {"field", "message"}}``.

Never a stack trace: unexpected exceptions are logged with their traceback and answered with a plain
500 message.

Calculation records: a review step the revision's status does not allow (:class:`RevisionStateError`) and a
change of an issued record (:class:`RecordImmutableError`) are conflicts (409, with the message); the
four-eyes rule and a case under review are refusals (403, as every :class:`PermissionDenied`).  A record
that could not be signed is a 500 with the message (:class:`RecordSigningError`), or a 502 when the
time-stamp server did not answer; unusable signing keys are a 500 whose details go to the log only (they
name files of the server).
"""
from __future__ import annotations

import sys

from flask import Flask, Response, current_app, jsonify, make_response, render_template, request
from flask_wtf.csrf import CSRFError
from sqlalchemy.exc import IntegrityError, OperationalError
from werkzeug.exceptions import HTTPException, MethodNotAllowed

from jtcheck.errors import InputError
from jtcheck.records.errors import (
    ConcurrentEditError,
    NotFound,
    PermissionDenied,
    RecordImmutableError,
    RecordSigningError,
    RevisionStateError,
)
from jtcheck.reports.pki import PKIError
from jtcheck.units import TextUnits, parse_pressure
from jtcheck.web.removal import InUseError


class ApiError(Exception):
    """An error answered with ``status`` and ``{"error": {"field": field, "message": message}}``."""

    def __init__(self, status: int, message: str, field: str | None = None):
        super().__init__(message)
        self.status = status
        self.message = message
        self.field = field


def is_conflict(exc: InputError) -> bool:
    """True for the records layer's "a ... named X already exists" input errors (answered with 409)."""
    return "already exists" in exc.message


def request_words() -> TextUnits:
    """The units the request typed its quantities in (a JSON body's or a form's values such as ``"72 barg"``, and a
    body's ``units`` object), for the quantities an error message quotes; the default units otherwise."""
    body = request.get_json(silent=True) if request.is_json else None
    typed: dict[str, object] = {}
    if isinstance(body, dict):
        typed.update(body)
        typed.update({k: v["unit"] for k, v in body.items() if isinstance(v, dict) and isinstance(v.get("unit"), str)})
        units = body.get("units")
        if isinstance(units, dict):
            typed.update({f"{k}_unit": v for k, v in units.items()})
    else:
        typed.update({k: v for k, v in request.form.items()})
    p_atm = typed.get("p_atm")
    try:
        p_atm_pa = parse_pressure(p_atm, "p_atm").pa if isinstance(p_atm, str) and p_atm.strip() else None
    except InputError:
        p_atm_pa = None
    return TextUnits.typed({str(k): v for k, v in typed.items() if isinstance(v, str)}, p_atm_pa)


def wants_json() -> bool:
    return request.blueprint == "api" or request.path.startswith("/api/")


def json_error(status: int, message: str, field: str | None = None, headers: dict[str, str] | None = None
               ) -> Response:
    resp = jsonify({"error": {"field": field, "message": message}})
    resp.status_code = status
    if status == 401:
        resp.headers["WWW-Authenticate"] = 'Bearer realm="jtcheck API"'
    for k, v in (headers or {}).items():
        resp.headers[k] = v
    return resp


_TITLES = {400: "Bad request", 401: "Sign-in needed", 403: "Not allowed", 404: "Not found", 405: "Method not allowed",
           409: "Conflict", 413: "Too large", 422: "Input not accepted", 429: "Too many attempts",
           500: "Internal error", 502: "Signing service not answering", 503: "Service unavailable"}

#: Endpoints that take a file upload: a larger request size limit (:mod:`jtcheck.web.records.views`), and their 413
#: answer names the field "file".
UPLOAD_ENDPOINTS = frozenset({"records.verify", "batches.create"})


def is_timestamp_error(exc: BaseException) -> bool:
    """True for :class:`jtcheck.reports.signing.TimestampError` (without importing pyHanko for the check: if the
    module is not loaded, nothing can have raised its error)."""
    signing = sys.modules.get("jtcheck.reports.signing")
    return signing is not None and isinstance(exc, signing.TimestampError)


def _answer(status: int, message: str, field: str | None = None) -> Response:
    if wants_json():
        return json_error(status, message, field)
    title = _TITLES.get(status, "Error")
    return make_response(render_template("error.html", status=status, title=title, message=message, field=field),
                         status)


def register(app: Flask) -> None:
    """Install the error handlers on ``app``."""

    @app.errorhandler(ApiError)
    def _api_error(exc: ApiError):
        return _answer(exc.status, exc.message, exc.field)

    @app.errorhandler(InputError)
    def _input_error(exc: InputError):
        return _answer(409 if is_conflict(exc) else 422, request_words().text(exc.message), exc.field)

    @app.errorhandler(PermissionDenied)
    def _denied(exc: PermissionDenied):
        return _answer(403, str(exc))

    @app.errorhandler(NotFound)
    def _not_found(exc: NotFound):
        return _answer(404, str(exc), exc.field)

    @app.errorhandler(InUseError)
    def _in_use(exc: InUseError):
        return _answer(409, exc.message, exc.field)

    @app.errorhandler(RevisionStateError)
    def _revision_state(exc: RevisionStateError):
        return _answer(409, str(exc))

    @app.errorhandler(RecordImmutableError)
    def _immutable(exc: RecordImmutableError):
        return _answer(409, exc.message)

    @app.errorhandler(RecordSigningError)
    def _signing(exc: RecordSigningError):
        current_app.logger.error("record signing failed: %s", exc.message, exc_info=exc.__cause__ or exc)
        return _answer(500, f"the record could not be signed: {exc.message}; nothing was stored")

    @app.errorhandler(PKIError)
    def _pki(exc: PKIError):
        current_app.logger.error("signing keys not usable: %s", exc)
        return _answer(500, "the record could not be signed: the signing keys of this instance are missing or not "
                            "usable; nothing was stored. The administrator finds the details in the log")

    @app.errorhandler(ConcurrentEditError)
    def _stale(exc: ConcurrentEditError):
        return _answer(409, str(exc), "version")

    @app.errorhandler(IntegrityError)
    def _integrity(exc: IntegrityError):
        current_app.logger.warning("integrity error: %s", exc.orig)
        return _answer(409, "the change conflicts with a stored record (for example a name that is already "
                            "taken); reload and try again")

    @app.errorhandler(OperationalError)
    def _db_down(exc: OperationalError):
        current_app.logger.error("database error: %s", exc.orig)
        return _answer(503, "the database is not answering; try again in a moment")

    @app.errorhandler(CSRFError)
    def _csrf(exc: CSRFError):
        return _answer(400, "the form was missing its security token or it has expired; reload the page and "
                            "send the form again", "csrf_token")

    @app.errorhandler(HTTPException)
    def _http(exc: HTTPException):
        status = exc.code or 500
        message = exc.description or _TITLES.get(status, "error")
        field = None
        if status == 429:
            message = "too many attempts; wait a minute and try again"
        if status == 413:
            limit = request.max_content_length
            message = "the upload is too large" + (f" (at most {limit / 1048576:.0f} MB)" if limit else "")
            field = "file" if request.endpoint in UPLOAD_ENDPOINTS else None
        resp = _answer(status, message, field)
        if isinstance(exc, MethodNotAllowed) and exc.valid_methods:
            resp.headers["Allow"] = ", ".join(exc.valid_methods)
        return resp

    @app.errorhandler(Exception)
    def _unexpected(exc: Exception):
        if isinstance(exc, HTTPException):   # pragma: no cover - routed above
            return _http(exc)
        if is_timestamp_error(exc):
            current_app.logger.warning("time-stamp server: %s", exc)
            return _answer(502, "the record could not be signed: the time-stamp server did not answer or refused "
                                "(nothing was stored); try again in a moment")
        current_app.logger.exception("unhandled error on %s %s", request.method, request.path)
        return _answer(500, "an internal error occurred; it has been logged. Try again, and tell the "
                            "administrator if it happens again")
