"""A vessel depressuring case's structured inputs typed as text (the web form) or given as objects (the JSON API).

The form takes each as short text with units, converted here to the SI objects the case keeps
(:mod:`jtcheck.cases.depressuring.inputs`); an object (a mapping, or a list of mappings for the orifices) is
taken as it is, in SI, and checked by the case kind:

* **vessel**, ``key=value`` pairs separated by ``;``::

      orientation=vertical; diameter=1.8 m; length=5 m; wall=35 mm; level=0.4 m; material=carbon steel

  ``volume=12 m3`` in place of the length; ``level`` (liquid level), ``material`` (wall thermal properties:
  carbon steel or stainless steel) and ``wall_temperature`` (initial wall temperature) are optional.
  Lengths in m, mm, cm, in or ft.
* **orifices**, one a line: ``name; bore diameter; discharge coefficient; back pressure`` (the back pressure is
  optional: the case's outlet pressure)::

      BDV-2102; 35 mm; 0.85; 2 barg

* **heat input**: ``none``, ``ambient; ambient=5 degC`` or ``fire; F=1; drainage=yes; ambient=15 degC``.
* **run**, ``key=value`` pairs: ``end=20 min; end_pressure=1 barg; design=100 barg; target=6.9 barg;
  target_time=15 min; model=two-zone`` (all optional; times in s, min or h; model equilibrium, the default, or
  two-zone).

Every error is an :class:`~jtcheck.errors.InputError` naming the field and what is allowed.
"""
from __future__ import annotations

import math
import re
from collections.abc import Mapping
from typing import Any

from jtcheck.errors import InputError
from jtcheck.itemlists import lines_of
from jtcheck.units import P_ATM_DEFAULT_PA, parse_pressure, parse_temperature, pressure_from_pa, temperature_from_k

_NUMBER = r"([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)"
_LENGTH_M = {"m": 1.0, "mm": 1e-3, "cm": 1e-2, "in": 0.0254, "ft": 0.3048}
_TIME_S = {"s": 1.0, "min": 60.0, "h": 3600.0}
_VESSEL_KEYS = {"orientation": "orientation", "diameter": "inner_diameter_m", "length": "length_m",
                "volume": "volume_m3", "wall": "wall_thickness_m", "level": "liquid_level_m",
                "material": "wall_material", "wall_temperature": "wall_t0_k"}
_RUN_KEYS = {"end": "end_time_s", "end_pressure": "end_pressure_pa", "design": "design_pressure_pa",
             "target": "target_pressure_pa", "target_time": "target_time_s", "model": "model"}
_HEAT_KEYS = ("kind", "ambient", "f", "drainage")
VESSEL_EXAMPLE = "orientation=vertical; diameter=1.8 m; length=5 m; wall=35 mm"
ORIFICE_EXAMPLE = "BDV-2102; 35 mm; 0.85; 2 barg"
RUN_EXAMPLE = "end=20 min; design=100 barg"
HEAT_EXAMPLE = "fire; F=1; drainage=yes; ambient=15 degC"


def _measure(text: str, field: str, units: Mapping[str, float], what: str, example: str) -> float:
    m = re.match(rf"^\s*{_NUMBER}\s*([a-zA-Z0-9]*)\s*$", text)
    unit = (m.group(2) or "").lower() if m else ""
    if m is None or unit not in units:
        raise InputError(field, f"{text!r}: give the {what} with its unit ({', '.join(units)}), e.g. {example!r}")
    value = float(m.group(1)) * units[unit]
    if not math.isfinite(value):
        raise InputError(field, f"{text!r}: the {what} must be a finite number")
    return value


def _pairs(text: str, field: str, allowed: tuple[str, ...], example: str, first_key: str | None = None
           ) -> dict[str, str]:
    out: dict[str, str] = {}
    for k, cell in enumerate(c.strip() for c in text.split(";")):
        if not cell:
            continue
        if "=" not in cell:
            if k == 0 and first_key is not None:
                out[first_key] = cell
                continue
            raise InputError(field, f"{cell!r}: expected key=value; allowed keys: {', '.join(allowed)}; e.g. "
                                    f"{example!r}")
        key, value = (p.strip() for p in cell.split("=", 1))
        key = key.lower()
        if key not in allowed:
            raise InputError(field, f"unknown key {key!r}; allowed: {', '.join(allowed)}; e.g. {example!r}")
        out[key] = value
    return out


def _one_text(value: Any, field: str) -> str | None:
    lines = lines_of(value, field)
    return "; ".join(lines) if lines else None


def vessel(value: Any, field: str = "vessel", p_atm_pa: float = P_ATM_DEFAULT_PA) -> dict[str, Any] | None:
    """The vessel: ``key=value`` text (see the module text) or a mapping in SI (taken as it is)."""
    if value is None or isinstance(value, Mapping):
        return dict(value) if value else None
    text = _one_text(value, field)
    if text is None:
        return None
    out: dict[str, Any] = {}
    for key, raw in _pairs(text, field, tuple(_VESSEL_KEYS), VESSEL_EXAMPLE).items():
        target = _VESSEL_KEYS[key]
        if key in ("orientation", "material"):
            out[target] = raw.lower()
        elif key == "volume":
            out[target] = _measure(raw, f"{field}.{target}", {"m3": 1.0}, "volume", "volume=12 m3")
        elif key == "wall_temperature":
            out[target] = parse_temperature(raw, f"{field}.{target}")
        else:
            out[target] = _measure(raw, f"{field}.{target}", _LENGTH_M, key, VESSEL_EXAMPLE)
    return out


def orifices(value: Any, field: str = "orifices", p_atm_pa: float = P_ATM_DEFAULT_PA) -> list[dict[str, Any]]:
    """The orifices: one a line, ``name; diameter; discharge coefficient; back pressure`` (or a list of mappings
    in SI, taken as they are)."""
    if isinstance(value, (list, tuple)) and value and all(isinstance(v, Mapping) for v in value):
        return [dict(v) for v in value]
    out = []
    for k, line in enumerate(lines_of(value, field)):
        cells = [c.strip() for c in line.split(";")]
        if not 3 <= len(cells) <= 4 or not cells[0]:
            raise InputError(f"{field}[{k}]", f"{line!r}: expected name; diameter; discharge coefficient; back "
                                              f"pressure (optional), e.g. {ORIFICE_EXAMPLE!r}")
        try:
            cd = float(cells[2])
        except ValueError:
            raise InputError(f"{field}[{k}].discharge_coefficient",
                             f"{cells[2]!r}: the discharge coefficient is a number, e.g. 0.85") from None
        item: dict[str, Any] = {"name": cells[0],
                                "diameter_m": _measure(cells[1], f"{field}[{k}].diameter_m", _LENGTH_M,
                                                       "bore diameter", ORIFICE_EXAMPLE),
                                "discharge_coefficient": cd}
        if len(cells) == 4 and cells[3]:
            item["back_pressure_pa"] = parse_pressure(cells[3], f"{field}[{k}].back_pressure_pa", p_atm_pa).pa
        out.append(item)
    return out


def heat_input(value: Any, field: str = "heat_input", p_atm_pa: float = P_ATM_DEFAULT_PA) -> dict[str, Any] | None:
    """The heat input: ``none``, ``ambient; ambient=5 degC`` or ``fire; F=1; drainage=yes`` (or a mapping in SI)."""
    if value is None or isinstance(value, Mapping):
        return dict(value) if value else None
    text = _one_text(value, field)
    if text is None:
        return None
    pairs = _pairs(text, field, _HEAT_KEYS, HEAT_EXAMPLE, first_key="kind")
    out: dict[str, Any] = {"kind": pairs.get("kind", "none").lower()}
    if "ambient" in pairs:
        out["ambient_t_k"] = parse_temperature(pairs["ambient"], f"{field}.ambient_t_k")
    if "f" in pairs:
        try:
            out["environment_factor"] = float(pairs["f"])
        except ValueError:
            raise InputError(f"{field}.environment_factor", f"{pairs['f']!r}: F is a number from 0 to 1") from None
    if "drainage" in pairs:
        word = pairs["drainage"].lower()
        if word not in ("yes", "no"):
            raise InputError(f"{field}.adequate_drainage", f"{pairs['drainage']!r}: drainage=yes or drainage=no")
        out["adequate_drainage"] = word == "yes"
    return out


def run(value: Any, field: str = "run", p_atm_pa: float = P_ATM_DEFAULT_PA) -> dict[str, Any] | None:
    """The run: ``key=value`` text (end, end_pressure, design, target, target_time, model) or a mapping in SI."""
    if value is None or isinstance(value, Mapping):
        return dict(value) if value else None
    text = _one_text(value, field)
    if text is None:
        return None
    out: dict[str, Any] = {}
    for key, raw in _pairs(text, field, tuple(_RUN_KEYS), RUN_EXAMPLE).items():
        target = _RUN_KEYS[key]
        if target == "model":
            out[target] = raw.strip().lower()     # checked by the case kind (equilibrium or two-zone)
        elif target.endswith("_s"):
            out[target] = _measure(raw, f"{field}.{target}", _TIME_S, "time", "end=20 min")
        else:
            out[target] = parse_pressure(raw, f"{field}.{target}", p_atm_pa).pa
    return out


def _num(v: float) -> str:
    return f"{v:.6g}"


def text_of(name: str, value: Any, p_unit: str, t_unit: str, p_atm_pa: float) -> str:
    """A stored depressuring input (SI) as the form shows it, pressures and temperatures in the case's units."""
    if not value:
        return ""
    p = lambda pa: f"{_num(pressure_from_pa(pa, p_unit, p_atm_pa))} {p_unit}"   # noqa: E731
    if name == "orifices":
        return "\n".join("; ".join([o.get("name", ""), f"{_num(o['diameter_m'] * 1000)} mm",
                                    _num(o["discharge_coefficient"]),
                                    *([p(o["back_pressure_pa"])] if o.get("back_pressure_pa") is not None else [])])
                         for o in value)
    parts: list[str] = []
    if name == "vessel":
        for key, target in _VESSEL_KEYS.items():
            v = value.get(target)
            if v is None:
                continue
            if key in ("orientation", "material"):
                parts.append(f"{key}={v}")
            elif key == "volume":
                parts.append(f"{key}={_num(v)} m3")
            elif key == "wall_temperature":
                parts.append(f"{key}={_num(temperature_from_k(v, t_unit))} {t_unit}")
            elif key == "wall":
                parts.append(f"{key}={_num(v * 1000)} mm")
            else:
                parts.append(f"{key}={_num(v)} m")
    elif name == "heat_input":
        parts.append(str(value.get("kind", "none")))
        if value.get("ambient_t_k") is not None:
            parts.append(f"ambient={_num(temperature_from_k(value['ambient_t_k'], t_unit))} {t_unit}")
        if value.get("environment_factor") is not None:
            parts.append(f"F={_num(value['environment_factor'])}")
        if value.get("adequate_drainage") is not None:
            parts.append(f"drainage={'yes' if value['adequate_drainage'] else 'no'}")
    elif name == "run":
        for key, target in _RUN_KEYS.items():
            v = value.get(target)
            if v is None:
                continue
            if target == "model":
                parts.append(f"{key}={v}")
            else:
                parts.append(f"{key}={_num(v / 60)} min" if target.endswith("_s") else f"{key}={p(v)}")
    return "; ".join(parts)


#: The readers by input name (the web form's list fields).
READERS = {"vessel": vessel, "orifices": orifices, "heat_input": heat_input, "run": run}
