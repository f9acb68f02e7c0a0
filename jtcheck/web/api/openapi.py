"""The OpenAPI 3.1 document of the JSON API, built from the routes themselves.

Each API view is registered with :meth:`ApiRegistry.route`, which adds the URL rule to the blueprint and
records the operation (method, path, summary, parameters, request and response schemas).  The document
served at ``/api/v1/openapi.json`` is built from that record, so a route cannot be served without being
documented.
"""
from __future__ import annotations

import inspect
import re
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

from flask import Blueprint

_CONVERTER = re.compile(r"<(?:(\w+):)?(\w+)>")
_TYPES = {"int": "integer", "float": "number", None: "string", "string": "string", "path": "string"}
JSON = "application/json"
#: Media types sent or answered as text (other non-JSON media types are binary).
_TEXT_MEDIA = ("text/", "application/x-pem-file")


def _media_schema(media: str, schema_name: str | None) -> dict[str, Any]:
    """The schema of a body: the named component for JSON, else a string (binary unless a text type)."""
    if media == JSON:
        return {"$ref": f"#/components/schemas/{schema_name}"} if schema_name else {"type": "object"}
    if media.startswith(_TEXT_MEDIA):
        return {"type": "string"}
    return {"type": "string", "format": "binary", "contentMediaType": media}

#: Error statuses and what they mean (shared by every operation that can answer them).
ERROR_TEXT = {
    400: "The body is not what the operation takes: not JSON or not a JSON object (or, where a file is sent, "
         "not of its media type).",
    401: "No token, or the token is not valid.",
    403: "The account's role does not allow this.",
    404: "No such record.",
    409: "Conflict: a name already taken, the record changed since the version you sent, or a review step the "
         "calculation record's status does not allow.",
    413: "The body is too large.",
    422: "An input field is not acceptable; `error.field` names it.",
    429: "Too many requests.",
}


def _path_schema(converter: str | None) -> dict[str, Any]:
    """The schema of a path parameter: ``int`` ids run from 0 to 2^31 - 1 (the route matches no other)."""
    if converter == "int":
        return {"type": "integer", "minimum": 0, "maximum": 2**31 - 1}
    return {"type": _TYPES.get(converter, "string")}


@dataclass(frozen=True)
class QueryParam:
    name: str
    description: str
    schema: dict[str, Any] = field(default_factory=lambda: {"type": "string"})


@dataclass(frozen=True)
class Operation:
    method: str
    rule: str
    endpoint: str
    summary: str
    description: str
    request: str | None
    response: str | None
    status: int
    query: tuple[QueryParam, ...]
    errors: tuple[int, ...]
    tag: str
    public: bool
    request_media: str = JSON
    response_media: str = JSON
    request_required: bool = True
    path_help: tuple[tuple[str, str], ...] = ()


class ApiRegistry:
    """Routes of one API blueprint and the schemas they use."""

    def __init__(self, blueprint: Blueprint, title: str, version: str, description: str = ""):
        self.blueprint = blueprint
        self.title = title
        self.version = version
        self.description = description
        self.operations: list[Operation] = []
        self.schemas: dict[str, dict[str, Any]] = {}

    def schema(self, name: str, schema: dict[str, Any]) -> str:
        """Add a named schema (components/schemas) and return its name."""
        self.schemas[name] = schema
        return name

    def route(self, rule: str, method: str, *, summary: str, tag: str, request: str | None = None,
              response: str | None = None, status: int = 200, query: Sequence[QueryParam] = (),
              errors: Sequence[int] = (), description: str = "", public: bool = False, request_media: str = JSON,
              response_media: str = JSON, request_required: bool = True,
              path_help: Mapping[str, str] | None = None) -> Callable:
        """Register ``rule`` for ``method`` on the blueprint and record it for the document.

        ``request`` and ``response`` name JSON schemas (components); a body of another media type
        (``request_media``, ``response_media``, e.g. ``"application/pdf"``) is documented as a string, binary
        unless it is text.  ``request_required=False`` documents an optional body.  ``path_help`` describes
        path parameters by name.
        """

        def decorate(view: Callable) -> Callable:
            self.blueprint.add_url_rule(rule, endpoint=view.__name__, view_func=view, methods=[method])
            self.operations.append(Operation(
                method=method.upper(), rule=rule, endpoint=f"{self.blueprint.name}.{view.__name__}", summary=summary,
                description=description or inspect.cleandoc(view.__doc__ or ""), request=request, response=response,
                status=status, query=tuple(query), errors=tuple(errors), tag=tag, public=public,
                request_media=request_media, response_media=response_media, request_required=request_required,
                path_help=tuple((path_help or {}).items())))
            return view

        return decorate

    def document(self, server_url: str) -> dict[str, Any]:
        """The OpenAPI 3.1 document."""
        paths: dict[str, dict[str, Any]] = {}
        for op in self.operations:
            path = _CONVERTER.sub(lambda m: "{" + m.group(2) + "}", op.rule)
            helps = dict(op.path_help)
            params: list[dict[str, Any]] = [
                {"name": m.group(2), "in": "path", "required": True, "schema": _path_schema(m.group(1)),
                 **({"description": helps[m.group(2)]} if m.group(2) in helps else {})}
                for m in _CONVERTER.finditer(op.rule)]
            params += [{"name": q.name, "in": "query", "required": False, "description": q.description,
                        "schema": q.schema} for q in op.query]
            responses: dict[str, Any] = {}
            if op.status == 204:
                responses["204"] = {"description": "Done; no content."}
            else:
                body: dict[str, Any] = {"description": "Success."}
                if op.response or op.response_media != JSON:
                    body["content"] = {op.response_media: {"schema": _media_schema(op.response_media, op.response)}}
                responses[str(op.status)] = body
            codes = set(op.errors) | ({401} if not op.public else set())
            has_body = bool(op.request) or op.request_media != JSON
            if has_body:
                codes |= {400, 413, 422}
            for code in sorted(codes):
                responses[str(code)] = {"description": ERROR_TEXT[code], "content": {
                    "application/json": {"schema": {"$ref": "#/components/schemas/Error"}}}}
            operation: dict[str, Any] = {"operationId": op.endpoint.split(".", 1)[1], "summary": op.summary,
                                         "tags": [op.tag], "responses": responses}
            if op.description:
                operation["description"] = op.description
            if params:
                operation["parameters"] = params
            if has_body:
                operation["requestBody"] = {"required": op.request_required, "content": {op.request_media: {
                    "schema": _media_schema(op.request_media, op.request)}}}
            if op.public:
                operation["security"] = []
            paths.setdefault(path, {})[op.method.lower()] = operation
        return {
            "openapi": "3.1.0",
            "info": {"title": self.title, "version": self.version, "description": self.description},
            "servers": [{"url": server_url}],
            "security": [{"bearerToken": []}],
            "tags": [{"name": t} for t in dict.fromkeys(op.tag for op in self.operations)],
            "paths": paths,
            "components": {
                "securitySchemes": {"bearerToken": {"type": "http", "scheme": "bearer",
                                                    "description": "An API token from your account page."}},
                "schemas": dict(self.schemas),
            },
        }
