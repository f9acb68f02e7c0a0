"""Lists of items typed as text, one item a line: flare header sections, settle-out volumes, cases switched off.

The web form, the JSON API, the CLI and the batch list take a case kind's structured inputs in the same
plain form (one parser, so that one item reads the same everywhere):

* **flare header sections**, in flow order, each by its lowest pressure::

      tailpipe; 2 barg; -46 degC; stainless
      knock-out drum; 0.2 barg; -29 degC; carbon steel

  name; lowest pressure (gauge or absolute); cold limit (or ``-`` for none); material (optional).
* **settle-out volumes**, the connected inventory that equalises after a shutdown::

      separator V-2100; 40 m3; 72 barg; 15 degC

  name; volume in m3; pressure; temperature.
* **other relief valves discharging at the same time** into the header::

      PSV-4101; propane=0.95,n-butane=0.05; 25 kg/s; 18 barg; 15 degC

  name; composition; mass flow in kg/s; relieving pressure; relieving temperature.
* **credible cases switched off**, each with its reason::

      start_up: the downstream is never depressured (permanently pressurised header)

Lines are separated by new lines (or by ``|`` in a batch cell); empty lines are skipped.  Every error is
an :class:`~jtcheck.errors.InputError` naming the field, the line and what is allowed.  Values come back
in SI: ``{"name": ..., "p_pa": ..., "limit_k": ..., "material": ...}`` and
``{"name": ..., "volume_m3": ..., "p_pa": ..., "t_k": ...}``.
"""
from __future__ import annotations

import math
import re
from typing import Any

from jtcheck.errors import InputError
from jtcheck.units import P_ATM_DEFAULT_PA, parse_pressure, parse_temperature, pressure_from_pa, temperature_from_k

#: The generated credible cases a user may switch off (with a reason).
CREDIBLE_CASES = ("settle_out", "start_up", "heater_loss", "ambient")
_NONE_WORDS = ("", "-", "none")
_VOLUME = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(m3|m\^3|m³)?\s*$")


def lines_of(text: Any, field: str) -> list[str]:
    """The non-empty lines of ``text`` (new lines or ``|`` separate them); a list of strings is taken as lines."""
    if text is None:
        return []
    if isinstance(text, (list, tuple)):
        if not all(isinstance(t, str) for t in text):
            raise InputError(field, "give the items as text, one item a line (or a list of such lines)")
        parts = list(text)
    elif isinstance(text, str):
        parts = re.split(r"[\n|]", text)
    else:
        raise InputError(field, f"give the items as text, one item a line, got {type(text).__name__}")
    return [p.strip() for p in parts if p.strip()]


def _cells(line: str, field: str, n: int, lo: int, example: str) -> list[str]:
    cells = [c.strip() for c in line.split(";")]
    if not lo <= len(cells) <= n:
        raise InputError(field, f"{line!r}: expected {lo} to {n} entries separated by ';', e.g. {example!r}")
    return cells + [""] * (n - len(cells))


def header_sections(text: Any, field: str = "header_sections", p_atm_pa: float = P_ATM_DEFAULT_PA
                    ) -> list[dict[str, Any]]:
    """Flare header sections in flow order: ``name; lowest pressure; cold limit; material``."""
    example = "knock-out drum; 0.2 barg; -29 degC; carbon steel"
    out = []
    for k, line in enumerate(lines_of(text, field)):
        name, p_text, limit_text, material = _cells(line, f"{field}[{k}]", 4, 2, example)
        if not name:
            raise InputError(f"{field}[{k}]", f"{line!r}: every section needs a name, e.g. {example!r}")
        p_pa = parse_pressure(p_text, f"{field}[{k}].pressure", p_atm_pa).pa
        limit = None if limit_text.lower() in _NONE_WORDS else parse_temperature(limit_text, f"{field}[{k}].limit")
        out.append({"name": name, "p_pa": p_pa, "limit_k": limit, "material": material})
    return out


def settle_out_volumes(text: Any, field: str = "settle_out_volumes", p_atm_pa: float = P_ATM_DEFAULT_PA
                       ) -> list[dict[str, Any]]:
    """Connected volumes that settle out: ``name; volume m3; pressure; temperature``."""
    example = "separator V-2100; 40 m3; 72 barg; 15 degC"
    out = []
    for k, line in enumerate(lines_of(text, field)):
        name, v_text, p_text, t_text = _cells(line, f"{field}[{k}]", 4, 4, example)
        m = _VOLUME.match(v_text)
        if not name or m is None:
            raise InputError(f"{field}[{k}]", f"{line!r}: give a name and a volume in m3, e.g. {example!r}")
        volume = float(m.group(1))
        if not math.isfinite(volume) or volume <= 0.0:
            raise InputError(f"{field}[{k}].volume_m3", f"the volume must be above 0 m3, got {v_text!r}")
        out.append({"name": name, "volume_m3": volume,
                    "p_pa": parse_pressure(p_text, f"{field}[{k}].pressure", p_atm_pa).pa,
                    "t_k": parse_temperature(t_text, f"{field}[{k}].temperature")})
    return out


def other_sources(text: Any, field: str = "other_sources", p_atm_pa: float = P_ATM_DEFAULT_PA
                  ) -> list[dict[str, Any]]:
    """Other relief valves discharging at the same time:
    ``name; composition; mass flow kg/s; relieving pressure; relieving temperature``."""
    example = "PSV-4101; propane=0.95,n-butane=0.05; 25 kg/s; 18 barg; 15 degC"
    out = []
    for k, line in enumerate(lines_of(text, field)):
        name, comp, flow_text, p_text, t_text = _cells(line, f"{field}[{k}]", 5, 5, example)
        m = re.match(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(kg/s)?\s*$", flow_text)
        if not name or not comp or m is None:
            raise InputError(f"{field}[{k}]", f"{line!r}: give a name, a composition and a mass flow in kg/s, "
                                              f"e.g. {example!r}")
        flow = float(m.group(1))
        if not math.isfinite(flow) or flow <= 0.0:
            raise InputError(f"{field}[{k}].mass_flow_kg_per_s",
                             f"the mass flow must be above 0 kg/s, got {flow_text!r}")
        out.append({"name": name, "composition": comp, "mass_flow_kg_per_s": flow,
                    "p_pa": parse_pressure(p_text, f"{field}[{k}].pressure", p_atm_pa).pa,
                    "t_k": parse_temperature(t_text, f"{field}[{k}].temperature")})
    return out


def credible_off(text: Any, field: str = "credible_off") -> dict[str, str]:
    """Generated credible cases switched off: ``case: reason`` a line (cases: :data:`CREDIBLE_CASES`)."""
    if isinstance(text, dict):      # already a mapping case -> reason (JSON)
        text = [f"{k}: {v}" for k, v in text.items()]
    out: dict[str, str] = {}
    for line in lines_of(text, field):
        case, _, reason = line.partition(":")
        case = "_".join(case.strip().lower().replace("-", " ").split())
        if case not in CREDIBLE_CASES:
            raise InputError(field, f"{line!r}: unknown credible case; allowed: {', '.join(CREDIBLE_CASES)}")
        if not reason.strip():
            raise InputError(f"{field}.{case}", f"{line!r}: say why the case does not apply, e.g. "
                                                f"'{case}: <reason>'")
        out[case] = reason.strip()
    return out


def _num(x: float) -> str:
    return f"{x:.6g}"


def header_sections_text(rows: Any, p_unit: str = "barg", t_unit: str = "degC",
                         p_atm_pa: float = P_ATM_DEFAULT_PA) -> str:
    """Stored header sections (SI) as the lines :func:`header_sections` reads, in the given units."""
    lines = []
    for r in rows or ():
        limit = "-" if r.get("limit_k") is None else f"{_num(temperature_from_k(r['limit_k'], t_unit))} {t_unit}"
        p = f"{_num(pressure_from_pa(r['p_pa'], p_unit, p_atm_pa))} {p_unit}"
        lines.append("; ".join([r["name"], p, limit] + ([r["material"]] if r.get("material") else [])))
    return "\n".join(lines)


def settle_out_volumes_text(rows: Any, p_unit: str = "barg", t_unit: str = "degC",
                            p_atm_pa: float = P_ATM_DEFAULT_PA) -> str:
    """Stored settle-out volumes (SI) as the lines :func:`settle_out_volumes` reads."""
    return "\n".join(f"{r['name']}; {_num(r['volume_m3'])} m3; {_num(pressure_from_pa(r['p_pa'], p_unit, p_atm_pa))} "
                     f"{p_unit}; {_num(temperature_from_k(r['t_k'], t_unit))} {t_unit}" for r in rows or ())


def credible_off_text(cases: Any) -> str:
    """Stored switched-off cases as the lines :func:`credible_off` reads."""
    return "\n".join(f"{k}: {v}" for k, v in (cases or {}).items())


def other_sources_text(rows: Any, p_unit: str = "barg", t_unit: str = "degC",
                       p_atm_pa: float = P_ATM_DEFAULT_PA) -> str:
    """Stored other relief sources (SI) as the lines :func:`other_sources` reads."""
    return "\n".join(f"{r['name']}; {r['composition']}; {_num(r['mass_flow_kg_per_s'])} kg/s; "
                     f"{_num(pressure_from_pa(r['p_pa'], p_unit, p_atm_pa))} {p_unit}; "
                     f"{_num(temperature_from_k(r['t_k'], t_unit))} {t_unit}" for r in rows or ())
