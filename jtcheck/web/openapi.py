"""The OpenAPI 3.1 document of the JSON API, built from the routes themselves.

Each API view is registered with :meth:`ApiRegistry.route`, which adds the URL rule to the blueprint and
records the operation (method, path, summary, parameters, request and response schemas).  The document
served at ``/api/v1/openapi.json`` is built from that record, so a route cannot be served without being
documented.
"""
from __future__ import annotations

import re
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from typing import Any

from flask import Blueprint

_CONVERTER = re.compile(r"<(?:(\w+):)?(\w+)>")
_TYPES = {"int": "integer", "float": "number", None: "string", "string": "string", "path": "string"}

#: Error statuses and what they mean (shared by every operation that can answer them).
ERROR_TEXT = {
    400: "The body is not JSON, or not a JSON object.",
    401: "No token, or the token is not valid.",
    403: "The account's role does not allow this.",
    404: "No such record.",
    409: "Conflict: a name already taken, or the record changed since the version you sent.",
    422: "An input field is not acceptable; `error.field` names it.",
    429: "Too many requests.",
}


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
              errors: Sequence[int] = (), description: str = "", public: bool = False) -> Callable:
        """Register ``rule`` for ``method`` on the blueprint and record it for the document."""

        def decorate(view: Callable) -> Callable:
            self.blueprint.add_url_rule(rule, endpoint=view.__name__, view_func=view, methods=[method])
            self.operations.append(Operation(
                method=method.upper(), rule=rule, endpoint=f"{self.blueprint.name}.{view.__name__}", summary=summary,
                description=description or (view.__doc__ or "").strip(), request=request, response=response,
                status=status, query=tuple(query), errors=tuple(errors), tag=tag, public=public))
            return view

        return decorate

    def document(self, server_url: str) -> dict[str, Any]:
        """The OpenAPI 3.1 document."""
        paths: dict[str, dict[str, Any]] = {}
        for op in self.operations:
            path = _CONVERTER.sub(lambda m: "{" + m.group(2) + "}", op.rule)
            params: list[dict[str, Any]] = [
                {"name": m.group(2), "in": "path", "required": True, "schema": {"type": _TYPES.get(m.group(1),
                                                                                                   "string")}}
                for m in _CONVERTER.finditer(op.rule)]
            params += [{"name": q.name, "in": "query", "required": False, "description": q.description,
                        "schema": q.schema} for q in op.query]
            responses: dict[str, Any] = {}
            if op.status == 204:
                responses["204"] = {"description": "Done; no content."}
            else:
                body: dict[str, Any] = {"description": "Success."}
                if op.response:
                    body["content"] = {"application/json": {"schema": {"$ref": f"#/components/schemas/{op.response}"}}}
                responses[str(op.status)] = body
            codes = set(op.errors) | ({401} if not op.public else set())
            if op.request:
                codes |= {400, 422}
            for code in sorted(codes):
                responses[str(code)] = {"description": ERROR_TEXT[code], "content": {
                    "application/json": {"schema": {"$ref": "#/components/schemas/Error"}}}}
            operation: dict[str, Any] = {"operationId": op.endpoint.split(".", 1)[1], "summary": op.summary,
                                         "tags": [op.tag], "responses": responses}
            if op.description:
                operation["description"] = op.description
            if params:
                operation["parameters"] = params
            if op.request:
                operation["requestBody"] = {"required": True, "content": {"application/json": {
                    "schema": {"$ref": f"#/components/schemas/{op.request}"}}}}
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
