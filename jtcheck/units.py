"""The one place where units are converted (web, API and CLI call this; the core is SI only).

Quantities are written as text, ``"100 bara"``, ``"10 barg"``, ``"40 degC"``, ``"-20 degF"``, ``"5 K"``.
Gauge pressures (``barg``, ``psig``, ``kPag``, ``MPag``) are converted with a stated atmospheric
pressure (default 1.01325 bar, the standard atmosphere), and the results say which was used.
Conversions are done by pint.
"""
from __future__ import annotations

import math
import re
from collections.abc import Mapping
from dataclasses import dataclass
from functools import lru_cache
from typing import Any

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


#: The usual spelling of each temperature unit word (one spelling on every page: degC, not °C or C).
TEMPERATURE_SPELLING = {"k": "K", "degc": "degC", "c": "degC", "°c": "degC", "degf": "degF", "f": "degF",
                        "°f": "degF", "degr": "degR", "r": "degR"}


def temperature_unit_of(text: str, default: str = "K") -> str:
    """The unit of a temperature as typed, in its usual spelling: ``"40degC"``, ``"40 C"`` and ``"40°C"`` give
    ``"degC"``; ``default`` when the text has no known unit."""
    m = _NUM_UNIT.match(str(text))
    word = (m.group(2) or "").strip().lower() if m else ""
    return TEMPERATURE_SPELLING.get(word, default)


def difference_label(unit: str) -> str:
    """The label of a temperature difference shown beside temperatures in ``unit``: K for kelvin and degC (a
    kelvin is a degree Celsius), "delta degF" for degF and "delta degR" for degR (a difference, not a reading)."""
    key = unit.lower()
    return {"degf": "delta degF", "f": "delta degF", "°f": "delta degF", "degr": "delta degR"}.get(key, "K")


def round_significant(value: float, digits: int = 12) -> float:
    """``value`` rounded to ``digits`` significant digits, as the float nearest to that decimal (so that it prints
    without float noise: 244.14999999999998 -> 244.15); non-finite values unchanged."""
    if not math.isfinite(value) or value == 0.0:
        return value
    return float(f"{value:.{digits}g}")


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
        zero = format_pressure(0.0, unit, p_atm_pa, 6) if gauge else f"0 {unit}"
        atm = f" (absolute zero with the atmospheric pressure {p_atm_pa / 1e5:.6g} bar)" if gauge else ""
        raise InputError(field, f"{str(text).strip()!r} is not above absolute zero; allowed: above {zero}{atm}")
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
        zero = format_temperature(0.0 + 1e-12, TEMPERATURE_UNITS[key] if key != "k" else "K", 6).split()[0]
        raise InputError(field, f"{str(text).strip()!r} is below absolute zero; allowed: above {zero} "
                                f"{TEMPERATURE_SPELLING.get(key, unit)} (absolute zero)")
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


#: Length units a thickness or diameter may be given in, to metres.
LENGTH_UNITS = {"m": 1.0, "mm": 1e-3, "cm": 1e-2, "in": 0.0254, "inch": 0.0254, "ft": 0.3048}
#: Stress units, to pascals.
STRESS_UNITS = {"pa": 1.0, "kpa": 1e3, "mpa": 1e6, "psi": 6894.757293168, "ksi": 6894757.293168}


def parse_length(text: str, field: str) -> float:
    """Length [m] from text such as ``"25.4 mm"`` or ``"1 in"``; InputError naming ``field`` otherwise."""
    value, unit = _split(text, field, "25.4 mm")
    factor = LENGTH_UNITS.get(unit.lower())
    if factor is None:
        raise InputError(field, f"unknown length unit {unit!r}; allowed: {', '.join(LENGTH_UNITS)}")
    return value * factor


def parse_stress(text: str, field: str) -> float:
    """Stress [Pa] from text such as ``"138 MPa"`` or ``"20 ksi"``; InputError naming ``field`` otherwise."""
    value, unit = _split(text, field, "138 MPa")
    factor = STRESS_UNITS.get(unit.lower())
    if factor is None:
        raise InputError(field, f"unknown stress unit {unit!r}; allowed: Pa, kPa, MPa, psi, ksi")
    return value * factor


#: The material options of a direct letdown (CLI options, JSON API keys, batch columns), as typed: option ->
#: (key of jtcheck.screening.mdmt.MaterialColdSpec, parser).  Text with units except the curve, the code, the
#: PWHT flag and the joint efficiency.
MATERIAL_OPTIONS = ("curve", "curve_code", "thickness", "impact_test_t", "pwht_credit", "allowable_stress",
                    "outside_diameter", "corrosion_allowance", "joint_efficiency", "other_stress")
#: The option that carries each MaterialColdSpec key (errors of the spec name the option the user typed).
MATERIAL_OPTION_OF = {"thickness_m": "thickness", "outside_diameter_m": "outside_diameter",
                      "corrosion_allowance_m": "corrosion_allowance", "allowable_stress_pa": "allowable_stress",
                      "impact_test_temperature_k": "impact_test_t", "code": "curve_code", "curve": "curve",
                      "pwht_credit": "pwht_credit", "joint_efficiency": "joint_efficiency",
                      "other_stress_pa": "other_stress"}


def material_options(data: Mapping[str, Any]) -> dict[str, Any]:
    """The material options of ``data`` (see :data:`MATERIAL_OPTIONS`; None or "" means not given) in SI, keyed as
    :class:`jtcheck.screening.mdmt.MaterialColdSpec` takes them; {} when none is given.

    ``thickness``, ``outside_diameter``, ``corrosion_allowance``: lengths ("25.4 mm", "1 in");
    ``impact_test_t``: a temperature ("-46 degC"); ``allowable_stress``: a stress ("138 MPa"); ``joint_efficiency``:
    a number (0.85); ``pwht_credit``: true/false (or "yes"/"no"); ``curve``: A-D; ``curve_code``: VIII-1 or B31.3.
    """
    given = {k: data.get(k) for k in MATERIAL_OPTIONS if data.get(k) not in (None, "")}
    if str(given.get("pwht_credit", "")).strip().lower() in ("no", "false", "0"):
        del given["pwht_credit"]
    if not given.keys() - {"curve_code"}:
        return {}
    if "curve" not in given and "impact_test_t" not in given:
        raise InputError("curve", "the material options need the exemption curve (A to D) or the impact test "
                                  "temperature")
    out: dict[str, Any] = {}
    for key, value in given.items():
        if key == "curve":
            out["curve"] = str(value)
        elif key == "curve_code":
            out["code"] = str(value)
        elif key in ("thickness", "outside_diameter", "corrosion_allowance"):
            out[f"{key}_m"] = parse_length(value, key)
        elif key == "impact_test_t":
            out["impact_test_temperature_k"] = parse_temperature(value, key)
        elif key in ("allowable_stress", "other_stress"):
            out[f"{key}_pa"] = parse_stress(value, key)
        elif key == "pwht_credit":
            flag = {"true": True, "yes": True, "1": True, "false": False, "no": False, "0": False}.get(
                str(value).strip().lower()) if not isinstance(value, bool) else value
            if flag is None:
                raise InputError(key, f"must be true or false, got {value!r}")
            out["pwht_credit"] = flag
        elif key == "joint_efficiency":
            try:
                out["joint_efficiency"] = float(value)
            except (TypeError, ValueError):
                raise InputError(key, f"must be a number between 0 and 1, got {value!r}") from None
    return out


#: Units of a water content in a gas, with kg per standard m3 (15 degC, 101.325 kPa) per unit; 1 lb/MMscf =
#: 0.45359237 kg per 28316.846592 m3 (10^6 ft3; the MMscf at 60 degF, 14.696 psia, within 0.1 % of 15 degC).
WATER_CONTENT_UNITS: dict[str, tuple[str, float]] = {"mg/sm3": ("mg/Sm3", 1.0e-6),
                                                     "lb/mmscf": ("lb/MMscf", 0.45359237 / 28316.846592)}
WATER_CONTENT_CHOICES = ("mg/Sm3", "lb/MMscf")


def parse_water_content(text: str, field: str) -> tuple[float, str]:
    """``(water content [kg/Sm3], unit)`` from text such as ``"110 mg/Sm3"`` or ``"7 lb/MMscf"``.

    Raises InputError naming ``field`` for a missing or unknown unit or a value not above 0.
    """
    m = re.match(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(\S*)\s*$", str(text))
    known = WATER_CONTENT_UNITS.get(m.group(2).lower()) if m else None
    if known is None:
        raise InputError(field, f"{text!r}: give the water content in {' or '.join(WATER_CONTENT_CHOICES)}, "
                                "e.g. '110 mg/Sm3'")
    value = float(m.group(1))
    if not (math.isfinite(value) and value > 0.0):
        raise InputError(field, f"{text!r}: the water content must be above 0")
    return value * known[1], known[0]


# -- lengths and durations (vessel depressurisation) ------------------------------------------------
DURATION_UNITS: dict[str, float] = {"s": 1.0, "min": 60.0, "h": 3600.0}


def parse_positive_length(text: str, field: str) -> float:
    """Length [m] from text such as ``"2 m"``, ``"50 mm"`` or ``"2 in"`` (:func:`parse_length`); must be above 0."""
    m = parse_length(text, field)
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


# -- quantities in sentences: the one formatter ------------------------------------------------------
#: Short names of the inputs (CLI options, JSON API keys) -> the field names sentences mark quantities with.
FIELD_ALIASES = {"p_in": "inlet_pressure", "t_in": "inlet_temperature", "p_out": "outlet_pressure",
                 "p_in_max": "inlet_pressure_max", "t_in_min": "inlet_temperature_min",
                 "p_out_min": "outlet_pressure_min", "heater_off_t": "heater_upstream_temperature",
                 "ambient_t_min": "ambient_temperature_min", "limit": "cold_limit", "set_pressure": "set_pressure",
                 "relieving_t_min": "relieving_temperature_min", "built_up_back_pressure": "built_up_back_pressure",
                 "superimposed_back_pressure": "superimposed_back_pressure", "p_atm": "p_atm"}


def unit_word(text: Any) -> str | None:
    """The unit word of a quantity as typed (``"72 barg"`` -> ``"barg"``, ``"40degC"`` -> ``"degC"``); None for text
    that is no number with a unit."""
    m = _NUM_UNIT.match(str(text)) if isinstance(text, str) else None
    word = (m.group(2) or "").strip() if m else ""
    if not word:
        return None
    return TEMPERATURE_SPELLING.get(word.lower(), word)


def is_pressure_unit(unit: str | None) -> bool:
    return bool(unit) and unit.lower() in PRESSURE_UNITS


def is_temperature_unit(unit: str | None) -> bool:
    return bool(unit) and unit.lower() in TEMPERATURE_UNITS


def format_temperature(t_k: float, unit: str, decimals: int = 1) -> str:
    """A temperature [K] in ``unit`` as text: ``"-61.8 degC"`` (the unit's usual spelling; "-" if not finite).

    ``decimals`` of 6 or more means a value shown back as typed: that many significant digits, trailing zeros
    dropped (``"2000 degF"``, ``"-29.5 degC"``)."""
    if t_k is None or not math.isfinite(t_k):
        return "-"
    from jtcheck.marks import fixed, significant

    value = temperature_from_k(t_k, unit)
    text = significant(value, decimals) if decimals >= 6 else fixed(value, decimals)
    return f"{text} {TEMPERATURE_SPELLING.get(unit.lower(), unit)}"


def format_difference(dt_k: float, temperature_unit: str, decimals: int = 1) -> str:
    """A temperature difference [K] beside readings in ``temperature_unit``: ``"1.9 K"`` or ``"3.4 delta degF"``."""
    if dt_k is None or not math.isfinite(dt_k):
        return "-"
    from jtcheck.marks import fixed, significant

    label = difference_label(temperature_unit)
    value = dt_k * 1.8 if label != "K" else dt_k
    return f"{significant(value, decimals) if decimals >= 6 else fixed(value, decimals)} {label}"


def format_pressure(p_pa: float, unit: str, p_atm_pa: float = P_ATM_DEFAULT_PA, digits: int = 4) -> str:
    """An absolute pressure [Pa] in ``unit`` (gauge units from ``p_atm_pa``) to ``digits`` significant digits, no
    exponent: ``"72 barg"``, ``"1.013 bara"`` ("-" if not finite)."""
    if p_pa is None or not math.isfinite(p_pa):
        return "-"
    from jtcheck.marks import significant

    value = pressure_from_pa(p_pa, unit, p_atm_pa)
    if abs(value) < 1e-9 * max(abs(p_pa), 1.0):
        value = 0.0
    return f"{significant(value, digits)} {unit}"


_DIFFERENCE_UNITS_PA = {"bar": 1.0e5, "bara": 1.0e5, "barg": 1.0e5, "mbar": 100.0, "kpa": 1.0e3, "kpaa": 1.0e3,
                        "kpag": 1.0e3, "mpa": 1.0e6, "mpaa": 1.0e6, "mpag": 1.0e6, "psi": 6894.757293168361,
                        "psia": 6894.757293168361, "psig": 6894.757293168361, "pa": 1.0, "atm": 101325.0}


def format_pressure_difference(dp_pa: float, unit: str, digits: int = 4) -> str:
    """A pressure difference [Pa] in ``unit`` (a gauge or absolute unit gives its bare word: barg -> bar)."""
    if dp_pa is None or not math.isfinite(dp_pa):
        return "-"
    from jtcheck.marks import significant

    key = unit.lower()
    factor = _DIFFERENCE_UNITS_PA.get(key)
    if factor is None:
        key, factor = "bar", 1.0e5
    word = {"bara": "bar", "barg": "bar", "kpaa": "kPa", "kpag": "kPa", "mpaa": "MPa", "mpag": "MPa",
            "psia": "psi", "psig": "psi"}.get(key, unit if key == unit.lower() else key)
    return f"{significant(dp_pa / factor, digits)} {word}"


@dataclass(frozen=True)
class TextUnits:
    """The units a person typed a case in, for the quantities marked in sentences (:mod:`jtcheck.marks`).

    Attributes
    ----------
    temperature : str
        Unit of temperatures whose field is not typed (the inlet temperature's).
    pressure : str
        Unit of pressures whose field is not typed (the outlet pressure's).
    p_atm_pa : float
        Atmospheric pressure of gauge units [Pa].
    fields : tuple of (field, unit)
        The unit each input was typed in (register field names; CLI/API short names are translated).
    """

    temperature: str = "degC"
    pressure: str = "bara"
    p_atm_pa: float = P_ATM_DEFAULT_PA
    fields: tuple[tuple[str, str], ...] = ()

    @classmethod
    def typed(cls, typed: Mapping[str, Any], p_atm_pa: float | None = None) -> TextUnits:
        """The units of inputs as typed: ``{"p_in": "100 bara", "t_in": "40degC", ...}`` (short or register
        names; values that are no quantity text, or units given alone as ``{"inlet_pressure": "barg"}``)."""
        fields: dict[str, str] = {}
        for name, value in typed.items():
            key = FIELD_ALIASES.get(str(name), str(name)).removesuffix("_unit")
            word = unit_word(value) if isinstance(value, str) else None
            if word is None and isinstance(value, str) and (is_pressure_unit(value) or is_temperature_unit(value)):
                word = TEMPERATURE_SPELLING.get(value.lower(), value)
            if word is not None and (is_pressure_unit(word) or is_temperature_unit(word)):
                fields[key] = word
        t = fields.get("inlet_temperature") or next((u for u in fields.values() if is_temperature_unit(u)), "degC")
        p = fields.get("outlet_pressure") or fields.get("inlet_pressure") or next(
            (u for u in fields.values() if is_pressure_unit(u)), "bara")
        return cls(temperature=t, pressure=p, p_atm_pa=float(p_atm_pa or P_ATM_DEFAULT_PA),
                   fields=tuple(sorted(fields.items())))

    def unit_of(self, field: str, pressure: bool) -> str:
        """The unit of the input ``field`` (a pressure or a temperature), else the case's."""
        own = dict(self.fields).get(FIELD_ALIASES.get(field, field)) if field else None
        if pressure:
            if is_pressure_unit(own):
                return own  # type: ignore[return-value]
            inlet = dict(self.fields).get("inlet_pressure")
            if field.startswith(("inlet", "set", "relieving", "settle")) and is_pressure_unit(inlet):
                return inlet  # type: ignore[return-value]
            return self.pressure
        return own if is_temperature_unit(own) else self.temperature  # type: ignore[return-value]

    def _one(self, kind: str, field: str, digits: int, value: float) -> str:
        if kind == "T":
            return format_temperature(value, self.unit_of(field, False), digits)
        if kind == "DT":
            return format_difference(value, self.temperature, digits)
        if kind == "P":
            return format_pressure(value, self.unit_of(field, True), self.p_atm_pa, digits)
        return format_pressure_difference(value, self.unit_of(field or "built_up_back_pressure", True), digits)

    def text(self, text: Any) -> Any:
        """``text`` with its marked quantities in these units (anything that is no string unchanged)."""
        from jtcheck.marks import render

        return render(text, self._one) if isinstance(text, str) else text

    def walk(self, obj: Any) -> Any:
        """``obj`` (dicts, lists and tuples of strings and numbers, as stored results are) with every string's marks
        rendered in these units; numbers unchanged."""
        if isinstance(obj, str):
            return self.text(obj)
        if isinstance(obj, Mapping):
            return {k: self.walk(v) for k, v in obj.items()}
        if isinstance(obj, (list, tuple)):
            return type(obj)(self.walk(v) for v in obj) if isinstance(obj, list) else tuple(self.walk(v) for v in obj)
        return obj

    def error(self, err: InputError) -> str:
        """An input error as ``field: message``, its quantities in these units."""
        return f"{err.field}: {self.text(err.message)}"
