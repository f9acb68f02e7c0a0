"""JSON-safe copies of the values stored with results (numpy scalars, NaN, tuples)."""
from __future__ import annotations

import math
import numbers
from collections.abc import Mapping
from typing import Any


def json_safe(value: Any) -> Any:
    """JSON-safe copy: numpy scalars to Python, NaN and infinity to None, tuples to lists."""
    # fast paths for the exact built-in types (most values); subclasses such as numpy.float64 or enums
    # take the general path below, which gives the same answers for the built-in types
    kind = type(value)
    if kind is float:
        return value if math.isfinite(value) else None
    if kind is str or kind is bool or kind is int or value is None:
        return value
    if kind is dict:
        return {str(k): json_safe(v) for k, v in value.items()}
    if kind is list or kind is tuple:
        return [json_safe(v) for v in value]
    if isinstance(value, Mapping):
        return {str(k): json_safe(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [json_safe(v) for v in value]
    if isinstance(value, bool) or value is None or isinstance(value, str):
        return value
    if isinstance(value, numbers.Integral):
        return int(value)
    if isinstance(value, numbers.Real):
        v = float(value)
        return v if math.isfinite(v) else None
    return str(value)
