"""The inputs of a case: one declaration per field, shared by the register, the API, the forms, the CLI and batch.

A :class:`Field` names an input twice (``inlet_pressure`` as people and the API write it,
``inlet_pressure_pa`` as it is stored in SI), says what quantity it is (so the edges know which units to
offer and convert), its words for a person, whether it is required and the range allowed in SI.  Every
entry point checks a value with :meth:`Field.check`, so the message for a bad value is the same wherever it
was typed.  Field lists belong to the case kinds (:mod:`jtcheck.cases`); :data:`COMMON_FIELDS` are those
every kind has (the cold limits and the atmospheric pressure for gauge units).
"""
from __future__ import annotations

import math
import numbers
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

from jtcheck import marks
from jtcheck.errors import InputError

# Allowed ranges, (low, high, low is inclusive) in SI units.
PRESSURE_RANGE_PA = (0.0, 1.0e9, False)           # absolute; 1e9 Pa = 10 000 bar
# the range of the heat-capacity data: 50 K is the lowest temperature any component's fit covers (letdown.throttle)
INLET_TEMPERATURE_RANGE_K = (50.0, 2000.0, True)
LIMIT_TEMPERATURE_RANGE_K = (0.0, 1000.0, False)  # MDMT and cold limits
MARGIN_RANGE_K = (0.0, 100.0, True)
MASS_FLOW_RANGE_KG_PER_S = (0.0, 1.0e5, False)
P_ATM_RANGE_PA = (5.0e4, 1.1e5, True)             # sea level to about 5500 m
OVERPRESSURE_RANGE = (0.0, 1.0, True)             # fraction of the set gauge pressure (0.10 = 10 %)
BUILT_UP_RANGE_PA = (0.0, 1.0e9, True)            # a pressure difference
WATER_CONTENT_RANGE_KG_PER_SM3 = (0.0, 1.0, False)  # water in a gas, kg per standard m3 (1 kg/Sm3: far above any)

#: SI unit of each quantity, as written in messages.
SI_UNITS = {"pressure": "Pa", "temperature": "K", "difference": "K", "mass_flow": "kg/s", "percent": "fraction",
            "pressure_difference": "Pa", "water_content": "kg/Sm3"}


def range_text(lo: float, hi: float, lo_inclusive: bool, unit: str) -> str:
    """``"0 < value <= 1e+09 Pa"``: a range as the messages write it."""
    return f"{lo:g} {'<=' if lo_inclusive else '<'} value <= {hi:g} {unit}"


#: The mark (:mod:`jtcheck.marks`) of each quantity whose messages quote it in the user's units.
_MARKS = {"pressure": marks.P, "temperature": marks.T, "difference": lambda v, field, digits: marks.DT(v, digits),
          "pressure_difference": marks.DP}


def _marked_range(lo: float, hi: float, lo_inclusive: bool, quantity: str, field: str) -> str:
    """A range in the user's units: ``"from -50 degC to 100 degC"`` (marked ends)."""
    mark = _MARKS[quantity]
    absolute = " (absolute)" if quantity == "pressure" else ""
    if lo_inclusive:
        return f"from {mark(lo, field, 6)} to {mark(hi, field, 6)}{absolute}"
    return f"above {mark(lo, field, 6)} and at most {mark(hi, field, 6)}{absolute}"


def check_number(key: str, value: Any, label: str, unit: str, rng: tuple[float, float, bool],
                 required: bool, quantity: str = "", field: str = "") -> float | None:
    """A finite number within ``rng`` (or None when not required); an :class:`InputError` naming ``key`` otherwise.

    Parameters
    ----------
    key : str
        The field named in the error.
    value : Any
        The value given (None for none).
    label, unit : str
        Words for the message: ``"inlet pressure"``, ``"Pa"``.
    rng : (float, float, bool)
        Low and high end in SI, and whether the low end is allowed.
    required : bool
        Whether None is refused.
    quantity, field : str
        For a pressure, temperature, temperature difference or pressure difference (``Field.quantity``) and the
        input's name (``Field.name``): a value out of range and the range are quoted in the units the user typed
        the field in (marked, :mod:`jtcheck.marks`), not in SI.
    """
    lo, hi, lo_inclusive = rng
    if value is None:
        if required:
            raise InputError(key, f"{label} is required [{unit}]; allowed: {range_text(lo, hi, lo_inclusive, unit)}")
        return None
    if isinstance(value, bool) or not isinstance(value, numbers.Real):
        raise InputError(key, f"{label} must be a number in {unit}, got {value!r}")
    v = float(value)
    if not math.isfinite(v):
        raise InputError(key, f"{label} must be a finite number [{unit}], got {v!r}")
    if v < lo or (v == lo and not lo_inclusive) or v > hi:
        if quantity in _MARKS:
            raise InputError(key, f"{label} {_MARKS[quantity](v, field, 6)} is out of range; allowed: "
                                  f"{_marked_range(lo, hi, lo_inclusive, quantity, field)}")
        raise InputError(key, f"{label} {v:g} {unit} is out of range; allowed: "
                              f"{range_text(lo, hi, lo_inclusive, unit)}"
                         + (" (absolute)" if unit == "Pa" else ""))
    return v


def named_entries(key: str, items: Any, keys: tuple[str, ...], what: str = "entries") -> list[Mapping[str, Any]]:
    """A kind's structured input: a list of mappings with the allowed ``keys``, each with a unique ``name``.

    None is no entry.  An :class:`InputError` names the entry and key at fault (``header_sections[2].name``)
    and what is allowed; the values themselves are the caller's to check.
    """
    if items is None:
        return []
    if isinstance(items, (str, bytes, Mapping)) or not isinstance(items, (list, tuple)):
        raise InputError(key, f"expected a list of {what}, each with {', '.join(keys)}; got {type(items).__name__}")
    for k, item in enumerate(items):
        if not isinstance(item, Mapping):
            raise InputError(f"{key}[{k}]", f"expected an entry with {', '.join(keys)}; got {type(item).__name__}")
        unknown = sorted(set(item) - set(keys))
        if unknown:
            raise InputError(f"{key}[{k}].{unknown[0]}", f"unknown key {unknown[0]!r}; allowed: {', '.join(keys)}")
        name = item.get("name")
        if not isinstance(name, str) or not name.strip():
            raise InputError(f"{key}[{k}].name", f"a name is required, got {name!r}; allowed: a non-empty text")
        if any(o.get("name") == name for o in items[:k]):
            raise InputError(f"{key}[{k}].name", f"the name {name!r} is used twice; names must differ")
    return list(items)


@dataclass(frozen=True)
class Field:
    """One quantity a case kind takes as input.

    Attributes
    ----------
    name : str
        Name in forms, API bodies, CLI options, batch columns and ``display_units`` (``inlet_pressure``).
    key : str
        The SI field of the register (``inlet_pressure_pa``).
    quantity : str
        ``"pressure"`` (absolute or gauge), ``"temperature"``, ``"difference"`` (temperature difference),
        ``"mass_flow"``, ``"percent"`` (entered in %, stored as a fraction), ``"pressure_difference"``
        (no atmospheric offset) or ``"water_content"`` (water in a gas, kg per standard cubic metre at 15 degC and
        101.325 kPa; entered in mg/Sm3 or lb/MMscf).
    label : str
        Words in messages (``"inlet pressure"``).
    form_label : str
        Words beside the input on a form (``"Inlet pressure"``).
    record_label : str
        Words in the record's inputs table; the form's words when empty.
    si_range : (float, float, bool)
        Allowed SI range: low, high, low end allowed.
    required : bool
        Whether a new case needs it.
    message_unit : str
        The unit written in messages ("Pa", "K", "-", "Pa (difference)"); the SI unit when empty.
    """

    name: str
    key: str
    quantity: str
    label: str
    form_label: str
    si_range: tuple[float, float, bool]
    required: bool = False
    message_unit: str = ""
    record_label: str = ""

    @property
    def si_unit(self) -> str:
        """The SI unit of the stored value (``"fraction"`` for percent fields)."""
        return SI_UNITS[self.quantity]

    def check(self, value: Any) -> float | None:
        """The value as a float in SI within :attr:`si_range`; raise :class:`InputError` naming :attr:`key`."""
        return check_number(self.key, value, self.label, self.message_unit or self.si_unit, self.si_range,
                            self.required, self.quantity, self.name)


#: Fields every case kind has: the cold limits of the downstream steel and the atmospheric pressure for gauge
#: units (the web and the API treat the last apart: it is entered with its own units, ``p_atm``).
MDMT = Field("mdmt", "mdmt_k", "temperature", "MDMT", "MDMT", LIMIT_TEMPERATURE_RANGE_K)
COLD_LIMIT = Field("cold_limit", "cold_limit_k", "temperature", "cold limit", "Cold limit", LIMIT_TEMPERATURE_RANGE_K,
                   record_label="Cold limit entered")
MARGIN = Field("margin", "margin_k", "difference", "margin", "Required margin", MARGIN_RANGE_K, required=True,
               record_label="Required margin above the cold limit")
P_ATM = Field("p_atm", "p_atm_pa", "pressure", "atmospheric pressure for gauge units",
              "Atmospheric pressure for gauge units", P_ATM_RANGE_PA, required=True)
COMMON_FIELDS: tuple[Field, ...] = (MDMT, COLD_LIMIT, MARGIN, P_ATM)
