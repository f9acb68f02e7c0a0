"""Input checks shared by the register: text, record ids, flags (numbers: :mod:`jtcheck.cases.fields`).

Each check raises :class:`jtcheck.errors.InputError` naming the field (the key at fault) and the
allowed range or form; it returns the value as stored.  Quantities are SI floats.
"""
from __future__ import annotations

import numbers
from collections.abc import Mapping, Sequence
from typing import Any

from sqlalchemy.orm import Session

from jtcheck.errors import InputError

#: Longest texts allowed [characters].
MAX_TAG = 64
MAX_NAME = 200
MAX_SHORT_TEXT = 2000
MAX_LONG_TEXT = 50_000
MAX_UNIT_TEXT = 20


#: Largest record id (the databases' 32-bit integer columns).
MAX_ID = 2**31 - 1


def parse_text(key: str, value: Any, label: str, max_len: int, *, required: bool = False,
               single_line: bool = False) -> str:
    """Text of at most ``max_len`` characters (None is empty text); stripped if required or single-line."""
    if value is None:
        value = ""
    if not isinstance(value, str):
        raise InputError(key, f"{label} must be text, got {type(value).__name__}")
    text = value.strip() if (required or single_line) else value
    if required and not text:
        raise InputError(key, f"{label} is required (1 to {max_len} characters)")
    if len(text) > max_len:
        raise InputError(key, f"{label} is {len(text)} characters long; at most {max_len} are allowed")
    if single_line and any(ord(ch) < 32 or ord(ch) == 127 for ch in text):
        raise InputError(key, f"{label} must be one line of text without control characters")
    if any((ord(ch) < 32 and ch not in "\t\n\r") or ord(ch) == 127 for ch in text):
        raise InputError(key, f"{label} must be text without control characters (tabs and line breaks are allowed)")
    return text


def parse_id(key: str, value: Any, label: str) -> int:
    """The integer id of a record (``label`` names its kind, e.g. ``"case"``)."""
    if value is None:
        raise InputError(key, f"a {label} is required (the id of an existing {label})")
    if isinstance(value, bool) or not isinstance(value, numbers.Integral):
        raise InputError(key, f"{label} must be the integer id of an existing record, got {value!r}")
    if not 1 <= int(value) <= MAX_ID:
        raise InputError(key, f"there is no {label} with id {value!r}; ids run from 1 to {MAX_ID}")
    return int(value)


def lookup(session: Session, model: type, key: str, value: Any, label: str, options: Sequence[Any] = ()) -> Any:
    """The stored ``model`` record with id ``value``; an InputError on ``key`` if there is none."""
    obj = session.get(model, parse_id(key, value, label), options=options)
    if obj is None:
        raise InputError(key, f"there is no {label} with id {value!r}; choose an existing one")
    return obj


def parse_flag(key: str, value: Any, label: str) -> bool:
    """True or False (nothing else counts as a flag)."""
    if isinstance(value, bool):
        return value
    raise InputError(key, f"{label} must be true or false, got {value!r}")


def refuse_unknown_keys(data: Mapping[str, Any], allowed: Sequence[str], what: str) -> None:
    """Raise InputError on the first key of ``data`` not in ``allowed`` (``what`` names the record kind)."""
    for key in data:
        if key not in allowed:
            if key == "status":
                raise InputError("status", "the status is set by the review workflow, not by editing the case")
            raise InputError(str(key), f"unknown {what} field; allowed: {', '.join(allowed)}")
