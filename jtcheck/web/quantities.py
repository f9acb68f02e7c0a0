"""Quantities at the web edge: what a person types (``"72 barg"``) to SI and back, through :mod:`jtcheck.units`.

The web and the API accept a quantity as text with its unit, ``"72 barg"``, or as an object
``{"value": 72, "unit": "barg"}``; the forms send the number and the unit in two fields.  The unit typed
is kept (``Case.display_units``) so that pages show the numbers the way they were entered.

Two kinds need a word:

* ``percent`` (the allowable overpressure of a relief valve) is entered in percent, ``"10 %"`` or
  ``{"value": 10, "unit": "%"}``, and stored as a fraction (0.10).  A bare number is refused, as for every
  other quantity: 0.1 and 10 would both be plausible, and a silent factor of 100 is not.
* ``pressure_difference`` (the built-up back pressure) is a difference: gauge and absolute make no
  difference, so ``"3 barg"``, ``"3 bara"`` and ``"3 bar"`` are all 3e5 Pa, converted without the
  atmospheric offset; units bar, kPa, MPa, psi (and Pa, mbar).
"""
from __future__ import annotations

import math
import numbers
import re
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

from jtcheck.cases import all_fields
from jtcheck.errors import InputError
from jtcheck.units import (
    P_ATM_DEFAULT_PA,
    WATER_CONTENT_CHOICES,
    WATER_CONTENT_UNITS,
    parse_pressure,
    parse_temperature,
    parse_temperature_difference,
    parse_water_content,
    pressure_from_pa,
    pressure_unit_names,
    temperature_difference_from_k,
    temperature_from_k,
)

#: Unit choices offered in the forms.
PRESSURE_CHOICES = ("bara", "barg", "psia", "psig", "kPa", "MPa")
TEMPERATURE_CHOICES = ("degC", "degF", "K")
DIFFERENCE_CHOICES = ("K", "degC", "degF")
P_ATM_CHOICES = ("bar", "kPa", "psia")
#: Units of a pressure difference (gauge and absolute are the same for a difference).
PRESSURE_DIFFERENCE_CHOICES = ("bar", "kPa", "MPa", "psi")
#: The only mass-flow unit (jtcheck.units has no mass-flow conversions).
MASS_FLOW_UNIT = "kg/s"
#: The unit of fractions entered in percent.
PERCENT_UNIT = "%"

#: Pascal per unit of a pressure difference; the gauge and absolute spellings mean the same.
_DIFFERENCE_PA: dict[str, tuple[str, float]] = {}
for _names, _canon, _factor in ((("bar", "bara", "barg"), "bar", 1.0e5), (("kpa", "kpaa", "kpag"), "kPa", 1.0e3),
                                (("mpa", "mpaa", "mpag"), "MPa", 1.0e6), (("psi", "psia", "psig"), "psi",
                                                                           6894.757293168361),
                                (("pa",), "Pa", 1.0), (("mbar",), "mbar", 100.0)):
    for _n in _names:
        _DIFFERENCE_PA[_n] = (_canon, _factor)

_UNIT_OF = re.compile(r"^\s*[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?\s*(\S+?)\s*$")
_NUMBER = re.compile(r"^\s*[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?\s*$")
_NUMBER_UNIT = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(\S*)\s*$")
_TEMPERATURE_NAMES = {"k": "K", "degc": "degC", "c": "degC", "°c": "degC", "degf": "degF", "f": "degF",
                      "°f": "degF", "degr": "degR", "r": "degR"}
_DIFFERENCE_NAMES = {"k": "K", "degc": "degC", "c": "degC", "degf": "degF", "f": "degF", "delta_degc": "degC",
                     "delta_degf": "degF"}
_PRESSURE_NAMES = {name.lower(): name for name in (*pressure_unit_names(), "psi", "kPaa", "MPaa")}


@dataclass(frozen=True)
class QuantityField:
    """A case input that carries a unit.

    Attributes
    ----------
    name : str
        Name in forms, API bodies and ``display_units`` (``inlet_pressure``).
    key : str
        The SI field of the case register (``inlet_pressure_pa``).
    kind : str
        ``"pressure"`` (absolute or gauge), ``"temperature"``, ``"difference"`` (temperature difference),
        ``"mass_flow"``, ``"percent"`` (entered in %, stored as a fraction) or ``"pressure_difference"``
        (a pressure difference: no atmospheric offset).
    label : str
        Words for a person.
    required : bool
        Whether a new case needs it.
    """

    name: str
    key: str
    kind: str
    label: str
    required: bool = False

    @property
    def si_unit(self) -> str:
        return {"pressure": "Pa", "temperature": "K", "difference": "K", "mass_flow": "kg/s", "percent": "fraction",
                "pressure_difference": "Pa", "water_content": "kg/Sm3"}[self.kind]

    @property
    def choices(self) -> tuple[str, ...]:
        return {"pressure": PRESSURE_CHOICES, "temperature": TEMPERATURE_CHOICES, "difference": DIFFERENCE_CHOICES,
                "mass_flow": (MASS_FLOW_UNIT,), "percent": (PERCENT_UNIT,),
                "pressure_difference": PRESSURE_DIFFERENCE_CHOICES, "water_content": WATER_CONTENT_CHOICES}[self.kind]

    @property
    def default_unit(self) -> str:
        return {"pressure": "barg", "temperature": "degC", "difference": "K", "mass_flow": MASS_FLOW_UNIT,
                "percent": PERCENT_UNIT, "pressure_difference": "bar", "water_content": "mg/Sm3"}[self.kind]


#: The quantity inputs of every case kind (:mod:`jtcheck.cases`), in the register's order; the atmospheric
#: pressure for gauge units is entered apart (``p_atm``, absolute units only).
CASE_QUANTITIES: tuple[QuantityField, ...] = tuple(
    QuantityField(f.name, f.key, f.quantity, f.form_label, f.required) for f in all_fields() if f.name != "p_atm")
QUANTITY_BY_NAME = {q.name: q for q in CASE_QUANTITIES}
QUANTITY_BY_KEY = {q.key: q for q in CASE_QUANTITIES}


def unit_word(text: str) -> str:
    """The unit part of ``"72 barg"`` (``"barg"``); empty if there is none."""
    m = _UNIT_OF.match(text)
    return m.group(1) if m else ""


def canonical_unit(unit: str, kind: str) -> str:
    """The usual spelling of a unit word (``"BARG"`` -> ``"barg"``, ``"C"`` -> ``"degC"``)."""
    if kind == "pressure_difference":
        return _DIFFERENCE_PA.get(unit.lower(), (unit, 0.0))[0]
    if kind == "percent":
        return PERCENT_UNIT if unit.lower() in ("%", "percent") else unit
    if kind == "water_content":
        return WATER_CONTENT_UNITS.get(unit.lower(), (unit, 0.0))[0]
    table = {"pressure": _PRESSURE_NAMES, "temperature": _TEMPERATURE_NAMES,
             "difference": _DIFFERENCE_NAMES}.get(kind, {})
    return table.get(unit.lower(), unit)


def quantity_text(value: Any, field: str, example: str) -> str | None:
    """A quantity from JSON as text: ``"72 barg"``, ``{"value": 72, "unit": "barg"}``; None for null or ``""``.

    Raises InputError naming ``field`` for anything else (a bare number has no unit).
    """
    if value is None:
        return None
    if isinstance(value, str):
        return value.strip() or None
    if isinstance(value, Mapping):
        extra = set(value) - {"value", "unit"}
        if extra:
            raise InputError(field, f"unknown key(s) {', '.join(sorted(map(str, extra)))}; give "
                                    f"{{\"value\": number, \"unit\": text}}, e.g. {example!r}")
        number, unit = value.get("value"), value.get("unit")
        if isinstance(number, bool) or not isinstance(number, numbers.Real) or not math.isfinite(float(number)):
            raise InputError(field, f"'value' must be a finite number, got {number!r}")
        if not isinstance(unit, str) or not unit.strip():
            raise InputError(field, f"'unit' must be a unit word, e.g. {example.split()[-1]!r}")
        return f"{float(number)!r} {unit.strip()}"
    if isinstance(value, numbers.Real) and not isinstance(value, bool):
        raise InputError(field, f"{value!r} has no unit; write e.g. {example!r} or {{\"value\": {value!r}, "
                                f"\"unit\": {example.split()[-1]!r}}}")
    raise InputError(field, f"must be text with a unit, e.g. {example!r}, got {type(value).__name__}")


def parse_quantity(q: QuantityField, text: str, p_atm_pa: float) -> tuple[float, str]:
    """``(value in SI, unit word)`` of ``text`` for the case field ``q``; raise InputError naming ``q.name``."""
    if q.kind == "pressure":
        p = parse_pressure(text, q.name, p_atm_pa)
        return p.pa, canonical_unit(p.unit, "pressure")
    if q.kind == "temperature":
        return parse_temperature(text, q.name), canonical_unit(unit_word(text), "temperature")
    if q.kind == "difference":
        return parse_temperature_difference(text, q.name), canonical_unit(unit_word(text), "difference")
    if q.kind == "percent":
        return parse_percent(text, q.name), PERCENT_UNIT
    if q.kind == "pressure_difference":
        return parse_pressure_difference(text, q.name)
    if q.kind == "water_content":
        return parse_water_content(text, q.name)
    # mass flow: kg/s only
    stripped = text.strip()
    if stripped.endswith(MASS_FLOW_UNIT):
        stripped = stripped[: -len(MASS_FLOW_UNIT)]
    if not _NUMBER.match(stripped):
        raise InputError(q.name, f"{text!r} is not a mass flow in kg/s (e.g. '12 kg/s'); kg/s is the only unit")
    value = float(stripped)
    if not math.isfinite(value):
        raise InputError(q.name, f"{text!r} is not a finite number")
    return value, MASS_FLOW_UNIT


def _split_number(text: str, field: str, example: str) -> tuple[float, str]:
    m = _NUMBER_UNIT.match(text)
    if not m:
        raise InputError(field, f"{text!r} is not a number followed by a unit, e.g. {example!r}")
    value = float(m.group(1))
    if not math.isfinite(value):
        raise InputError(field, f"{text!r} is not a finite number")
    return value, m.group(2).strip()


def parse_percent(text: str, field: str) -> float:
    """A fraction from text in percent (``"10 %"`` -> 0.10); the unit is required."""
    value, unit = _split_number(text, field, "10 %")
    if not unit:
        raise InputError(field, f"{text!r} has no unit; write it in percent, e.g. '10 %'")
    if unit.lower() not in ("%", "percent"):
        raise InputError(field, f"unknown unit {unit!r}; give it in percent, e.g. '10 %'")
    return value / 100.0


def parse_pressure_difference(text: str, field: str) -> tuple[float, str]:
    """``(difference [Pa], unit)`` from text such as ``"3 bar"``: no atmospheric offset (barg = bara = bar)."""
    value, unit = _split_number(text, field, "3 bar")
    if not unit:
        raise InputError(field, f"{text!r} has no unit; write e.g. '3 bar'")
    known = _DIFFERENCE_PA.get(unit.lower())
    if known is None:
        raise InputError(field, f"unknown unit {unit!r} for a pressure difference; allowed: "
                                f"{', '.join(PRESSURE_DIFFERENCE_CHOICES)} (gauge or absolute makes no difference)")
    canon, factor = known
    return value * factor, canon


def pressure_difference_from_pa(dp_pa: float, unit: str) -> float:
    """A pressure difference [Pa] in ``unit`` (no atmospheric offset)."""
    known = _DIFFERENCE_PA.get(unit.lower())
    if known is None:
        raise InputError("unit", f"unknown unit {unit!r} for a pressure difference; allowed: "
                                 f"{', '.join(PRESSURE_DIFFERENCE_CHOICES)}")
    return dp_pa / known[1]


def parse_p_atm(text: str | None, field: str = "p_atm") -> float:
    """Atmospheric pressure [Pa abs] for gauge units; the standard atmosphere when ``text`` is empty."""
    if text is None or not str(text).strip():
        return P_ATM_DEFAULT_PA
    p = parse_pressure(str(text), field)
    if p.gauge:
        raise InputError(field, "give the atmospheric pressure in an absolute unit (bar, kPa, psia)")
    return p.pa


def p_atm_unit_for(display_units: Mapping[str, str]) -> str:
    """The unit to show the atmospheric pressure in, matching the case's pressure units."""
    unit = (display_units.get("inlet_pressure") or "").lower()
    if unit.startswith("psi"):
        return "psia"
    if unit.startswith("kpa") or unit.startswith("mpa") or unit == "pa":
        return "kPa"
    return "bar"


def to_display(q: QuantityField, si_value: float | None, unit: str, p_atm_pa: float) -> float | None:
    """``si_value`` of field ``q`` in ``unit`` (None stays None)."""
    if si_value is None:
        return None
    if q.kind == "pressure":
        return pressure_from_pa(si_value, unit, p_atm_pa)
    if q.kind == "temperature":
        return temperature_from_k(si_value, unit)
    if q.kind == "difference":
        return temperature_difference_from_k(si_value, unit)
    if q.kind == "percent":
        return si_value * 100.0
    if q.kind == "pressure_difference":
        return pressure_difference_from_pa(si_value, unit)
    if q.kind == "water_content":
        return si_value / WATER_CONTENT_UNITS.get(unit.lower(), ("", 1.0e-6))[1]
    return si_value


def display_unit(q: QuantityField, display_units: Mapping[str, str]) -> str:
    """The unit the user typed for ``q`` (or the field's default)."""
    return display_units.get(q.name) or q.default_unit


def input_number(value: float | None) -> str:
    """A number for an edit field: enough digits to give the same SI value back, no float noise."""
    if value is None:
        return ""
    text = f"{value:.12g}"
    return "0" if text == "-0" else text
