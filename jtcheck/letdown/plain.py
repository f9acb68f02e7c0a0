"""Plain-JSON copies of engineering results (one helper for every ``to_dict``)."""
from __future__ import annotations

import enum
import math
from collections.abc import Mapping
from dataclasses import fields, is_dataclass
from typing import Any

import numpy as np


def plain(value: Any) -> Any:
    """JSON-safe copy: dataclasses to dicts of their fields, tuples and arrays to lists, numpy scalars to
    Python ones, enums to their values, NaN and infinity to None."""
    if value is None or isinstance(value, str):
        return value
    if isinstance(value, (bool, np.bool_)):
        return bool(value)
    if isinstance(value, enum.Enum):
        return plain(value.value)
    if isinstance(value, (int, np.integer)):
        return int(value)
    if isinstance(value, (float, np.floating)):
        v = float(value)
        return v if math.isfinite(v) else None
    if isinstance(value, np.ndarray):
        return [plain(v) for v in value.tolist()]
    if isinstance(value, Mapping):
        return {str(k): plain(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [plain(v) for v in value]
    if is_dataclass(value) and not isinstance(value, type):
        return {f.name: plain(getattr(value, f.name)) for f in fields(value)}
    return value


class PlainResult:
    """Base of the frozen result dataclasses: :meth:`to_dict` is their plain-JSON copy."""

    __slots__ = ()

    def to_dict(self) -> dict:
        """Plain-JSON representation (SI units; NaN becomes None)."""
        return plain(self)
