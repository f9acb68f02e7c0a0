"""Input checks shared by the letdown calculations: a jtcheck Fluid, a positive finite number within range.

Each raises :class:`jtcheck.errors.InputError` naming the argument at fault and what is allowed.
"""
from __future__ import annotations

import math
from typing import Any

import numpy as np

from jtcheck.errors import InputError
from jtcheck.thermo.fluid import Fluid

#: Highest temperature accepted [K] (the range of the ideal-gas heat-capacity data).
T_MAX_K = 2000.0


def check_fluid(fluid: Any) -> Fluid:
    """``fluid`` if it is a :class:`~jtcheck.thermo.fluid.Fluid`; an InputError naming ``fluid`` otherwise."""
    if not isinstance(fluid, Fluid):
        raise InputError("fluid", f"expected a jtcheck Fluid, got {type(fluid).__name__}")
    return fluid


def finite(name: str, value: Any, what: str, unit: str) -> float:
    """A single finite number, else InputError naming ``name`` (``what``, ``unit``: words for the message)."""
    if isinstance(value, bool) or np.ndim(value) != 0:
        raise InputError(name, f"{what} must be a single number [{unit}], got {value!r}")
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(name, f"{what} must be a number [{unit}], got {value!r}") from None
    if not math.isfinite(v):
        raise InputError(name, f"{what} must be a finite number [{unit}], got {value!r}")
    return v


def positive(name: str, value: Any, what: str, unit: str, upper: float | None = None) -> float:
    """A single finite number > 0 (and below ``upper`` when given), else InputError naming ``name``.

    Parameters
    ----------
    name : str
        The argument named in the error.
    value : Any
        The value given.
    what, unit : str
        Words for the message (``"inlet pressure"``, ``"Pa"``).
    upper : float, optional
        Exclusive upper bound in ``unit``.
    """
    v = finite(name, value, what, unit)
    if v <= 0.0:
        raise InputError(name, f"{what} must be greater than 0 {unit} (absolute), got {v:g}")
    if upper is not None and v >= upper:
        raise InputError(name, f"{what} must be below {upper:g} {unit}, got {v:g}")
    return v
