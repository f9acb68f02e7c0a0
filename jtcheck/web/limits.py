"""Bounds every request must keep before a view sees it: ids in URLs within the databases' integer range, query
strings and form fields without control characters, JSON bodies not nested deeper than :data:`MAX_JSON_DEPTH`.

A request outside them gets a 4xx answer naming the field, never a 500 from the database or the JSON parser.
"""
from __future__ import annotations

import json
from typing import Any

from flask import Flask, request
from werkzeug.exceptions import NotFound

from jtcheck.records.fields import MAX_ID
from jtcheck.web.errors import ApiError

#: Deepest nesting of arrays and objects a JSON body may have (a case body needs 4).
MAX_JSON_DEPTH = 32


def _bounded_ids(endpoint: str | None, values: dict[str, Any] | None) -> None:
    """An ``<int:...>`` of the URL beyond :data:`MAX_ID` names no record: 404, before the database sees it
    (PostgreSQL refuses integers beyond 2^31 - 1 in its integer columns).  (A converter with ``max`` would do
    the same, but Werkzeug then answers 405 for a path that has rules for other methods.)"""
    for name, value in (values or {}).items():
        if isinstance(value, int) and not isinstance(value, bool) and value > MAX_ID:
            raise NotFound(f"there is no record with {name} {value}; ids run from 1 to {MAX_ID}")


def control_character(text: str, multi_line: bool = False) -> bool:
    """True if ``text`` holds a control character (NUL and the like; tabs and line breaks only if not
    ``multi_line``)."""
    allowed = "\t\n\r" if multi_line else ""
    return any((ord(ch) < 32 and ch not in allowed) or ord(ch) == 127 for ch in text)


def _refuse_control_characters() -> None:
    for name, value in request.args.items(multi=True):
        if control_character(name) or control_character(value):
            raise ApiError(422, "the query parameter holds a control character (such as NUL); send plain text",
                           name if not control_character(name) else None)
    if request.method in ("POST", "PUT", "PATCH") and request.mimetype in ("application/x-www-form-urlencoded",
                                                                            "multipart/form-data"):
        for name, value in request.form.items(multi=True):
            if control_character(name) or control_character(value, multi_line=True):
                raise ApiError(422, "the form field holds a control character (such as NUL); send plain text",
                               name if not control_character(name) else None)


def json_depth(text: str) -> int:
    """The deepest nesting of arrays and objects in the JSON ``text`` (brackets inside strings not counted)."""
    depth = deepest = 0
    in_string = escaped = False
    for ch in text:
        if in_string:
            if escaped:
                escaped = False
            elif ch == "\\":
                escaped = True
            elif ch == '"':
                in_string = False
        elif ch == '"':
            in_string = True
        elif ch in "[{":
            depth += 1
            deepest = max(deepest, depth)
        elif ch in "]}":
            depth -= 1
    return deepest


def json_body() -> Any:
    """The request's JSON document: 400 when it is not JSON, nested deeper than :data:`MAX_JSON_DEPTH`, or holds
    a control character other than tab and line breaks in a string (NUL cannot be stored)."""
    raw = request.get_data(cache=True)
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError:
        raise ApiError(400, "the body is not UTF-8 text") from None
    if json_depth(text) > MAX_JSON_DEPTH:
        raise ApiError(400, f"the JSON body is nested more than {MAX_JSON_DEPTH} levels deep")
    try:
        data = json.loads(text)
    except (ValueError, RecursionError):
        raise ApiError(400, "the body is not valid JSON") from None
    _refuse_control_in(data, "")
    return data


def _refuse_control_in(value: Any, where: str) -> None:
    if isinstance(value, str):
        if control_character(value, multi_line=True):
            raise ApiError(422, "the text holds a control character (such as NUL); send plain text", where or None)
    elif isinstance(value, dict):
        for key, item in value.items():
            _refuse_control_in(key, where)
            _refuse_control_in(item, f"{where}.{key}" if where else str(key))
    elif isinstance(value, list):
        for k, item in enumerate(value):
            _refuse_control_in(item, f"{where}[{k}]")


def init_app(app: Flask) -> None:
    """Install the bound of ids in URLs and the check of query strings and forms."""
    app.url_value_preprocessor(_bounded_ids)
    app.before_request(_refuse_control_characters)
