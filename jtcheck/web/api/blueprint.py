"""The API's blueprint (``/api/v1``) and its OpenAPI registry, the helpers every resource module uses to read a
request and answer it, and the OpenAPI document itself (``GET /api/v1/openapi.json``)."""
from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from flask import Blueprint, Response, jsonify, request

from jtcheck import __version__
from jtcheck.errors import InputError
from jtcheck.notices import CAUTION
from jtcheck.records.fields import MAX_ID
from jtcheck.records.versions import parse_version
from jtcheck.web.api import schemas
from jtcheck.web.api.openapi import ApiRegistry, QueryParam
from jtcheck.web.cases.inputs import FieldInputError
from jtcheck.web.errors import ApiError
from jtcheck.web.limits import json_body
from jtcheck.web.security import require_viewer

bp = Blueprint("api", __name__, url_prefix="/api/v1")
api = ApiRegistry(bp, "jtcheck API", __version__,
                  "Low-temperature screening of pressure letdowns. Quantities carry explicit units; answers give "
                  "SI values (unit in the key) and the same values in the units chosen. Each case has "
                  "calculation records (revisions A, B ...; numbered 0, 1 ... when approved) that go through a "
                  "four-eyes review and are issued as signed PDFs. " + CAUTION)
schemas.register(api)


# -- helpers -------------------------------------------------------------------------------------
def body() -> dict[str, Any]:
    """The request's JSON object; 400 if the body is not JSON or not an object."""
    if not request.is_json:
        raise ApiError(400, "send a JSON object with 'Content-Type: application/json'")
    data = json_body()
    if not isinstance(data, dict):
        raise ApiError(400, "the body is not a JSON object")
    return data


def unknown_keys(data: Mapping[str, Any], allowed: tuple[str, ...]) -> None:
    """Refuse a body with a key outside ``allowed`` (InputError naming the key and listing the allowed ones)."""
    for key in data:
        if key not in allowed:
            raise InputError(str(key), f"unknown field; allowed: {', '.join(allowed)}")


def patch_version(data: dict[str, Any]) -> int:
    """The required ``version`` of a PATCH body (taken out of ``data``): a JSON integer >= 1."""
    version = data.pop("version", None)
    if version is not None and (isinstance(version, bool) or not isinstance(version, int)):
        raise InputError("version", f"must be the whole-number version you edited, got {version!r}")
    number = parse_version(version, required=True)
    assert number is not None
    return number


def field_errors(exc: FieldInputError) -> ApiError:
    """The first of a case body's field errors as a 422 answer naming its field."""
    field, message = exc.first()
    return ApiError(422, message, field)


def int_arg(name: str, lo: int = 0, hi: int = MAX_ID) -> int | None:
    """The integer query parameter ``name`` (None when absent or empty), within ``lo ... hi`` (InputError)."""
    raw = request.args.get(name)
    if raw is None or raw == "":
        return None
    try:
        number = int(raw)
    except ValueError:
        raise InputError(name, f"must be an integer, got {raw!r}") from None
    if not lo <= number <= hi:
        raise InputError(name, f"must be between {lo} and {hi}, got {number}")
    return number


#: Schema of an id in a query string.
ID_SCHEMA = {"type": "integer", "minimum": 0, "maximum": MAX_ID}
#: Longest page of a list, and the page size when none is asked for.
MAX_PAGE = 1000
DEFAULT_PAGE = 500
#: The query parameters of every list: ``limit`` and ``offset``.
PAGE_PARAMS = (
    QueryParam("limit", f"At most this many items (1-{MAX_PAGE}, default {DEFAULT_PAGE}).",
               {"type": "integer", "minimum": 1, "maximum": MAX_PAGE}),
    QueryParam("offset", "Skip this many items (default 0).", {"type": "integer", "minimum": 0, "maximum": MAX_ID}),
)


def page_args(default: int = DEFAULT_PAGE) -> tuple[int, int]:
    """``(limit, offset)`` of a list request (422 naming the parameter when out of range)."""
    limit = int_arg("limit", 1, MAX_PAGE)
    return (default if limit is None else limit), (int_arg("offset") or 0)


def page_json(items_key: str, items: list[Any], limit: int, offset: int, total: int | None = None
              ) -> dict[str, Any]:
    """A page of a list: the items with ``count`` (on this page), ``limit``, ``offset``, ``next_offset`` (None on
    the last page) and, when known, ``total``."""
    following = offset + len(items)
    more = following < total if total is not None else len(items) >= limit
    out = {items_key: items, "count": len(items), "limit": limit, "offset": offset,
           "next_offset": following if more else None}
    if total is not None:
        out["total"] = total
    return out


def created(payload: dict[str, Any], location: str) -> Response:
    """A 201 answer with ``payload`` and the new resource's address in ``Location``."""
    resp = jsonify(payload)
    resp.status_code = 201
    resp.headers["Location"] = location
    return resp


# -- document ------------------------------------------------------------------------------------
@api.route("/openapi.json", "GET", summary="This OpenAPI document", tag="meta", response="OpenAPI")
def openapi():
    """The OpenAPI 3.1 description of this API, generated from the routes."""
    require_viewer("read the API description")
    return jsonify(api.document(request.host_url.rstrip("/") + bp.url_prefix))
