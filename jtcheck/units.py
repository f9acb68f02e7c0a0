"""The one place where units are converted (web, API and CLI call this; the core is SI only).

Quantities are written as text, ``"100 bara"``, ``"10 barg"``, ``"40 degC"``, ``"-20 degF"``, ``"5 K"``.
Gauge pressures (``barg``, ``psig``, ``kPag``, ``MPag``) are converted with a stated atmospheric
pressure (default 1.01325 bar, the standard atmosphere), and the results say which was used.
Conversions are done by pint.
"""
from __future__ import annotations

import math
import re
from dataclasses import dataclass
from functools import lru_cache

from jtcheck.errors import InputError

#: Standard atmosphere [Pa] (ISO 2533), the default for gauge pressures.
P_ATM_DEFAULT_PA = 101325.0

# our unit words -> (pint unit, gauge?)
PRESSURE_UNITS: dict[str, tuple[str, bool]] = {
    "pa": ("pascal", False), "kpa": ("kilopascal", False), "mpa": ("megapascal", False),
    "bar": ("bar", False), "bara": ("bar", False), "barg": ("bar", True),
    "mbar": ("millibar", False), "kpag": ("kilopascal", True), "mpag": ("megapascal", True),
    "kpaa": ("kilopascal", False), "mpaa": ("megapascal", False),
    "psi": ("psi", False), "psia": ("psi", False), "psig": ("psi", True),
    "atm": ("atmosphere", False),
}
TEMPERATURE_UNITS: dict[str, str] = {
    "k": "kelvin", "degc": "degC", "c": "degC", "°c": "degC", "degf": "degF", "f": "degF", "°f": "degF",
    "degr": "degR", "r": "degR",
}
TEMPERATURE_DIFFERENCE_UNITS: dict[str, str] = {
    "k": "kelvin", "degc": "delta_degC", "c": "delta_degC", "degf": "delta_degF", "f": "delta_degF",
    "delta_degc": "delta_degC", "delta_degf": "delta_degF",
}

_NUM_UNIT = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*([A-Za-z°_]+)?\s*$")


@lru_cache(maxsize=1)
def _ureg():
    import pint

    return pint.UnitRegistry()


@lru_cache(maxsize=64)   # the names come from the fixed tables above
def _unit(name: str):
    """The pint Unit called ``name`` (made once: parsing a unit name costs more than converting)."""
    return _ureg().Unit(name)


def _split(text: str, field: str, example: str) -> tuple[float, str]:
    if isinstance(text, (int, float)):
        raise InputError(field, f"give a number with its unit, e.g. {example!r}")
    m = _NUM_UNIT.match(str(text))
    if not m:
        raise InputError(field, f"{text!r} is not a number followed by a unit, e.g. {example!r}")
    value = float(m.group(1))
    if not math.isfinite(value):
        raise InputError(field, f"{text!r} is not a finite number")
    unit = (m.group(2) or "").strip()
    if not unit:
        raise InputError(field, f"{text!r} has no unit; write e.g. {example!r}")
    return value, unit


@dataclass(frozen=True)
class Pressure:
    """A pressure as entered and in SI.

    Attributes
    ----------
    pa : float
        Absolute pressure [Pa].
    text : str
        As the user wrote it.
    unit : str
        The unit word (e.g. ``barg``).
    gauge : bool
        Whether it was a gauge pressure.
    p_atm_pa : float
        Atmospheric pressure used for gauge conversion [Pa].
    """

    pa: float
    text: str
    unit: str
    gauge: bool
    p_atm_pa: float


def pressure_unit_names() -> list[str]:
    return ["Pa", "kPa", "MPa", "bar", "bara", "barg", "mbar", "kPag", "MPag", "psia", "psig", "atm"]


def parse_pressure(text: str, field: str, p_atm_pa: float = P_ATM_DEFAULT_PA) -> Pressure:
    """Absolute pressure [Pa] from text such as ``"100 bara"`` or ``"150 psig"``.

    Raises InputError naming ``field`` for an unknown unit, a missing unit or a result <= 0 Pa abs.
    """
    value, unit = _split(text, field, "100 bara")
    key = unit.lower()
    if key not in PRESSURE_UNITS:
        raise InputError(field, f"unknown pressure unit {unit!r}; allowed: {', '.join(pressure_unit_names())}")
    pint_unit, gauge = PRESSURE_UNITS[key]
    pa = float(_ureg().Quantity(value, _unit(pint_unit)).to(_unit("pascal")).magnitude)
    if gauge:
        pa += p_atm_pa
    if not pa > 0.0:
        raise InputError(field, f"{text!r} is {pa:g} Pa absolute; pressures must be above 0 Pa absolute")
    return Pressure(pa=pa, text=str(text).strip(), unit=unit, gauge=gauge, p_atm_pa=p_atm_pa)


def parse_temperature(text: str, field: str) -> float:
    """Temperature [K] from text such as ``"40 degC"``, ``"-20 degF"`` or ``"300 K"``.

    Raises InputError naming ``field`` for an unknown unit or a result <= 0 K.
    """
    value, unit = _split(text, field, "40 degC")
    key = unit.lower()
    if key not in TEMPERATURE_UNITS:
        raise InputError(field, f"unknown temperature unit {unit!r}; allowed: K, degC, degF, degR")
    q = _ureg().Quantity(value, _unit(TEMPERATURE_UNITS[key]))
    k = float(q.to(_unit("kelvin")).magnitude)
    if not k > 0.0:
        raise InputError(field, f"{text!r} is {k:g} K; temperatures must be above absolute zero")
    return k


def parse_temperature_difference(text: str, field: str) -> float:
    """Temperature difference [K] from text such as ``"5 K"`` or ``"9 degF"``."""
    value, unit = _split(text, field, "5 K")
    key = unit.lower()
    if key not in TEMPERATURE_DIFFERENCE_UNITS:
        raise InputError(field, f"unknown temperature-difference unit {unit!r}; allowed: K, degC, degF")
    return float(_ureg().Quantity(value, _unit(TEMPERATURE_DIFFERENCE_UNITS[key])).to(_unit("kelvin")).magnitude)


def pressure_from_pa(pa: float, unit: str, p_atm_pa: float = P_ATM_DEFAULT_PA) -> float:
    """Express an absolute pressure [Pa] in ``unit`` (gauge units subtract ``p_atm_pa``)."""
    key = unit.lower()
    if key not in PRESSURE_UNITS:
        raise InputError("unit", f"unknown pressure unit {unit!r}; allowed: {', '.join(pressure_unit_names())}")
    pint_unit, gauge = PRESSURE_UNITS[key]
    value = pa - p_atm_pa if gauge else pa
    return float(_ureg().Quantity(value, _unit("pascal")).to(_unit(pint_unit)).magnitude)


def temperature_from_k(k: float, unit: str) -> float:
    """Express a temperature [K] in ``unit`` (K, degC, degF, degR)."""
    key = unit.lower()
    if key not in TEMPERATURE_UNITS:
        raise InputError("unit", f"unknown temperature unit {unit!r}; allowed: K, degC, degF, degR")
    return float(_ureg().Quantity(k, _unit("kelvin")).to(_unit(TEMPERATURE_UNITS[key])).magnitude)


def temperature_difference_from_k(dk: float, unit: str) -> float:
    """Express a temperature difference [K] in ``unit``."""
    key = unit.lower()
    if key in ("degf", "f"):
        return dk * 1.8
    return dk


# -- lengths and durations (vessel depressurisation) ------------------------------------------------
LENGTH_UNITS: dict[str, float] = {"m": 1.0, "mm": 1e-3, "cm": 1e-2, "in": 0.0254, "ft": 0.3048}
DURATION_UNITS: dict[str, float] = {"s": 1.0, "min": 60.0, "h": 3600.0}


def parse_length(text: str, field: str) -> float:
    """Length [m] from text such as ``"2 m"``, ``"50 mm"`` or ``"2 in"``; must be above 0."""
    value, unit = _split(text, field, "50 mm")
    key = unit.lower()
    if key not in LENGTH_UNITS:
        raise InputError(field, f"unknown length unit {unit!r}; allowed: {', '.join(LENGTH_UNITS)}")
    m = value * LENGTH_UNITS[key]
    if not m > 0.0:
        raise InputError(field, f"{text!r} must be a length above 0")
    return m


def parse_duration(text: str, field: str) -> float:
    """Duration [s] from text such as ``"15 min"``, ``"900 s"`` or ``"1 h"``; must be above 0."""
    value, unit = _split(text, field, "15 min")
    key = unit.lower()
    if key not in DURATION_UNITS:
        raise InputError(field, f"unknown time unit {unit!r}; allowed: {', '.join(DURATION_UNITS)}")
    s = value * DURATION_UNITS[key]
    if not s > 0.0:
        raise InputError(field, f"{text!r} must be a duration above 0")
    return s
