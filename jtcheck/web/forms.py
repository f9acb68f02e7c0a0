"""Plain HTML forms: what the user typed, and the error of each field, handed back to the template.

Forms are written by hand in the templates (every one carries the CSRF token); a view reads
``request.form`` into a :class:`FormState`, converts and stores, and on bad input renders the same
template again with the user's text and the error beside the field it names.
"""
from __future__ import annotations

from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field

from flask import request


@dataclass
class FormState:
    """The text of each field (as typed) and the errors, field -> message."""

    values: dict[str, str] = field(default_factory=dict)
    errors: dict[str, str] = field(default_factory=dict)
    general: list[str] = field(default_factory=list)

    def get(self, name: str, default: str = "") -> str:
        return self.values.get(name, default)

    def error(self, name: str) -> str | None:
        return self.errors.get(name)

    def add(self, name: str, message: str) -> None:
        self.errors.setdefault(name, message)

    @property
    def ok(self) -> bool:
        return not self.errors and not self.general

    @classmethod
    def from_request(cls, names: Iterable[str]) -> FormState:
        """The posted text of each field in ``names`` (missing fields are empty)."""
        return cls(values={n: request.form.get(n, "") for n in names})

    @classmethod
    def of(cls, values: Mapping[str, str]) -> FormState:
        return cls(values=dict(values))
