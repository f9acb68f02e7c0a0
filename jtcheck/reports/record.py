"""The controlled calculation record: a revision's frozen snapshot rendered as a PDF (WeasyPrint).

>>> rendered = render_record(snapshot, "A4")            # doctest: +SKIP
>>> rendered.pdf[:5], rendered.page_count               # doctest: +SKIP
(b'%PDF-', 5)
>>> rendered.signature_boxes["checker"]                  # doctest: +SKIP
SignatureBox(page_index=0, x1=..., y1=..., x2=..., y2=...)

The record is made from the snapshot alone (:func:`jtcheck.records.snapshot.case_snapshot`): numbers are
the stored SI values, shown in the units the case was entered in; nothing is computed again except the
drawings (the phase envelope and the traced letdown paths of the P-T diagram, a drawing aid whose end
points are the stored ones).  Component constants and kij sources are listed from the shipped data tables
only when the tables are the very versions the result was computed with (same SHA-256 prefix); otherwise
the record says so and lists just what the snapshot holds.

Layout (templates ``reports/record.html`` and ``reports/record.css``): a cover block with the revision, its
status line and three empty framed signature areas (Prepared, Checked, Approved) into which the signing
helper places visible PAdES signatures; then purpose and basis, inputs, fluid, method, results, screening
outcome and findings, answers, charts, references, the caution and the revision history.  Every page
carries the record number and "page x of y".  User text is escaped (Jinja2 autoescape) and reaches the
page margins only through CSS ``string-set``, never through a CSS string.
"""
from __future__ import annotations

import base64
import datetime as dt
import logging
import math
import os
import threading
from collections.abc import Mapping
from dataclasses import dataclass
from functools import cache
from pathlib import Path
from typing import Any

import jinja2

from jtcheck.errors import InputError, JtcheckError
from jtcheck.notices import CAUTION
from jtcheck.records.snapshot import snapshot_digest
from jtcheck.reports import charts
from jtcheck.screening.findings import Outcome
from jtcheck.units import (
    P_ATM_DEFAULT_PA,
    pressure_from_pa,
    temperature_difference_from_k,
    temperature_from_k,
)

# WeasyPrint reports every layout step at INFO; the service's log should carry only what needs attention
logging.getLogger("weasyprint.progress").setLevel(logging.WARNING)

#: Paper sizes: the name accepted (any case) -> (name shown, CSS page size).
PAPERS: dict[str, tuple[str, str]] = {"a4": ("A4", "A4"), "letter": ("Letter", "letter")}
#: The signature areas, in signing order, with the element id on page 1 and the label printed above.
SIGNATURE_ROLES: tuple[str, ...] = ("preparer", "checker", "approver")
SIGNATURE_LABELS = {"preparer": "Prepared", "checker": "Checked", "approver": "Approved"}
#: PDF points per CSS pixel (72 / 96).
PT_PER_PX = 0.75

OUTCOME_LABELS = {Outcome.PASS.value: "PASS", Outcome.MARGIN_ERODED.value: "MARGIN ERODED",
                  Outcome.FAIL.value: "FAIL", Outcome.NOT_SCREENED.value: "NOT SCREENED"}
_SEVERITY_ORDER = {"hazard": 0, "caution": 1, "information": 2}
_DIMENSIONS = {"p_in_pa": "Inlet pressure", "t_in_k": "Inlet temperature", "p_out_pa": "Outlet pressure"}
#: Pascal per unit of a pressure difference (gauge and absolute spellings mean the same for a difference).
_DIFFERENCE_PA = {"bar": 1.0e5, "bara": 1.0e5, "barg": 1.0e5, "kpa": 1.0e3, "kpaa": 1.0e3, "kpag": 1.0e3,
                  "mpa": 1.0e6, "mpaa": 1.0e6, "mpag": 1.0e6, "psi": 6894.757293168361, "psia": 6894.757293168361,
                  "psig": 6894.757293168361, "pa": 1.0, "mbar": 100.0}


@dataclass(frozen=True)
class SignatureBox:
    """Where a signature goes: page index (0 = first page) and the rectangle in PDF points, origin at the
    bottom-left of the page (x1 < x2, y1 < y2), as pyHanko's ``SigFieldSpec(box=...)`` expects."""

    page_index: int
    x1: float
    y1: float
    x2: float
    y2: float

    @property
    def box(self) -> tuple[float, float, float, float]:
        return (self.x1, self.y1, self.x2, self.y2)


@dataclass(frozen=True)
class RenderedRecord:
    """A rendered record: the PDF, the signature areas of ``SIGNATURE_ROLES`` and the number of pages."""

    pdf: bytes
    signature_boxes: dict[str, SignatureBox]
    page_count: int


# -- templates -----------------------------------------------------------------------------------------------
def templates_path() -> Path:
    """The folder of the record templates: ``jtcheck._templates/reports`` in a wheel, else ``templates/reports``
    of the source tree."""
    here = Path(__file__).resolve()
    candidates = [here.parents[1] / "_templates" / "reports",   # installed: the package jtcheck._templates
                  here.parents[2] / "templates" / "reports"]    # source checkout (and editable install)
    for path in candidates:
        if (path / "record.html").is_file() and (path / "record.css").is_file():
            return path
    raise FileNotFoundError("record templates not found; looked in: " + ", ".join(map(str, candidates)))


@cache
def _environment() -> jinja2.Environment:
    env = jinja2.Environment(loader=jinja2.FileSystemLoader(str(templates_path())), autoescape=True,
                             undefined=jinja2.StrictUndefined, trim_blocks=True, lstrip_blocks=True)
    env.filters["num"] = fmt_number
    env.filters["q"] = fmt_quantity
    env.filters["signed"] = fmt_signed
    return env


_CSS_LOCK = threading.Lock()
_CSS: dict[str, Any] = {}


def _stylesheet(page_size: str):
    """The record's style sheet with the page size, parsed once per size."""
    from weasyprint import CSS

    with _CSS_LOCK:
        if page_size not in _CSS:
            text = (templates_path() / "record.css").read_text(encoding="utf-8")
            _CSS[page_size] = CSS(string=text + f"\n@page {{ size: {page_size}; }}\n",
                                  base_url=str(templates_path()))
        return _CSS[page_size]


# -- numbers -------------------------------------------------------------------------------------------------
def _num(value: Any) -> float | None:
    if value is None or isinstance(value, bool):
        return None
    try:
        v = float(value)
    except (TypeError, ValueError):
        return None
    return v if math.isfinite(v) else None


def fmt_number(value: Any, kind: str = "pressure") -> str:
    """A number for the record: temperatures and differences to 0.01, others to 6 significant digits."""
    v = _num(value)
    if v is None:
        return "–"
    if kind in ("temperature", "difference"):
        text = f"{v:.2f}"
        return "0.00" if text == "-0.00" else text
    if kind == "fraction":
        return f"{v:.4f}"
    if abs(v) >= 1e6:
        return f"{v:.0f}"
    return f"{v:.6g}"


def fmt_quantity(q: Mapping[str, Any] | None, kind: str = "pressure") -> str:
    """``{"value", "unit"}`` as "12.5 barg" ("–" without a value)."""
    if not q or _num(q.get("value")) is None:
        return "–"
    return f"{fmt_number(q['value'], kind)} {q['unit']}"


def fmt_signed(q: Mapping[str, Any] | None) -> str:
    """A difference with its sign: "+3.20 K"."""
    if not q or _num(q.get("value")) is None:
        return "–"
    text = f"{_num(q['value']):+.2f}"
    return f"{'0.00' if text in ('-0.00', '+0.00') else text} {q['unit']}"


def _q(value: float | None, unit: str) -> dict[str, Any]:
    return {"value": value, "unit": unit}


class _Units:
    """The units a case was entered in, and conversions of stored SI values to them."""

    def __init__(self, shown: Mapping[str, Any], p_atm_pa: float):
        self.shown = {str(k): str(v) for k, v in shown.items() if v}
        self.p_atm_pa = p_atm_pa
        self.temperature = self.shown.get("inlet_temperature") or "degC"
        self.inlet_pressure = self.shown.get("inlet_pressure") or "barg"
        self.outlet_pressure = self.shown.get("outlet_pressure") or self.inlet_pressure
        self.difference = "degF" if self.temperature.lower() in ("degf", "f") else "K"

    def T(self, k: Any, unit: str | None = None) -> dict[str, Any]:
        unit = unit or self.temperature
        v = _num(k)
        try:
            return _q(None if v is None else temperature_from_k(v, unit), unit)
        except InputError:
            return _q(v, "K")

    def DT(self, dk: Any, unit: str | None = None) -> dict[str, Any]:
        unit = unit or self.difference
        v = _num(dk)
        return _q(None if v is None else temperature_difference_from_k(v, unit), unit)

    def pressure_unit(self, name: str) -> str:
        return self.shown.get(name) or (self.outlet_pressure if name.startswith("outlet") else self.inlet_pressure)

    def P(self, pa: Any, name: str = "inlet_pressure", unit: str | None = None) -> dict[str, Any]:
        """An absolute pressure [Pa] in the unit of the pressure field ``name``."""
        unit = unit or self.pressure_unit(name)
        v = _num(pa)
        try:
            return _q(None if v is None else pressure_from_pa(v, unit, self.p_atm_pa), unit)
        except InputError:
            return _q(v, "Pa")

    def DP(self, dpa: Any, unit: str | None = None) -> dict[str, Any]:
        """A pressure difference [Pa] in ``unit`` (default: the unit the built-up back pressure was entered in)."""
        unit = unit or self.shown.get("built_up_back_pressure") or "bar"
        v = _num(dpa)
        factor = _DIFFERENCE_PA.get(unit.lower())
        if factor is None:
            return _q(v, "Pa")
        return _q(None if v is None else v / factor, unit)

    def dim(self, dim: str, value: Any) -> dict[str, Any]:
        if dim == "t_in_k":
            return self.T(value)
        return self.P(value, "inlet_pressure" if dim == "p_in_pa" else "outlet_pressure")


def _date(value: Any) -> str:
    """An ISO time stamp as "2026-12-02 01:59 UTC" (text that is not one is shown as it is)."""
    if not value:
        return "–"
    try:
        t = dt.datetime.fromisoformat(str(value))
    except ValueError:
        return str(value)
    if t.tzinfo is not None:
        t = t.astimezone(dt.UTC)
        return t.strftime("%Y-%m-%d %H:%M UTC")
    return t.strftime("%Y-%m-%d %H:%M")


def _sentence_case(text: str) -> str:
    return text[:1].upper() + text[1:] if text else text


# -- the view of a snapshot -----------------------------------------------------------------------------------
_INPUT_FIELDS: tuple[tuple[str, str, str, bool], ...] = (
    # SI key, label, kind, shown even when not given
    ("inlet_pressure_pa", "Inlet pressure", "pressure", True),
    ("inlet_temperature_k", "Inlet temperature", "temperature", True),
    ("outlet_pressure_pa", "Outlet pressure", "pressure", True),
    ("inlet_temperature_min_k", "Minimum credible inlet temperature", "temperature", True),
    ("inlet_pressure_max_pa", "Maximum credible inlet pressure", "pressure", True),
    ("outlet_pressure_min_pa", "Minimum credible outlet pressure", "pressure", True),
    ("mass_flow_kg_per_s", "Mass flow", "mass_flow", True),
    ("mdmt_k", "MDMT", "temperature", True),
    ("cold_limit_k", "Cold limit entered", "temperature", True),
    ("margin_k", "Required margin above the cold limit", "difference", True),
    ("set_pressure_pa", "Relief valve set pressure", "pressure", False),
    ("overpressure_fraction", "Allowable overpressure", "percent", False),
    ("superimposed_back_pressure_pa", "Superimposed back pressure", "pressure", False),
    ("built_up_back_pressure_pa", "Built-up back pressure", "pressure_difference", False),
    ("header_limit_k", "Flare header temperature limit", "temperature", False),
)
_SUFFIXES = ("_kg_per_s", "_fraction", "_pa", "_k")


def _display_key(si_key: str) -> str:
    for suffix in _SUFFIXES:
        if si_key.endswith(suffix):
            return si_key[: -len(suffix)]
    return si_key


def _inputs(case: Mapping[str, Any], units: _Units) -> list[dict[str, Any]]:
    """Rows of the inputs table: label, as entered (the unit typed), SI."""
    values = case.get("values") or {}
    relief = case.get("kind") == "relief_valve"
    rows: list[dict[str, Any]] = []
    for key, label, kind, always in _INPUT_FIELDS:
        v = _num(values.get(key))
        if v is None and not (always or relief):
            continue
        name = _display_key(key)
        if v is None:
            rows.append({"label": label, "entered": "not given", "si": "–"})
            continue
        if kind == "pressure":
            entered = fmt_quantity(units.P(v, name, units.shown.get(name)))
            si = f"{fmt_number(v)} Pa abs"
        elif kind == "temperature":
            entered = fmt_quantity(units.T(v, units.shown.get(name) or units.temperature), "temperature")
            si = f"{fmt_number(v, 'temperature')} K"
        elif kind == "difference":
            entered = fmt_quantity(units.DT(v, units.shown.get(name) or units.difference), "difference")
            si = f"{fmt_number(v, 'difference')} K"
        elif kind == "pressure_difference":
            entered = fmt_quantity(units.DP(v))
            si = f"{fmt_number(v)} Pa"
        elif kind == "percent":
            entered = f"{fmt_number(100.0 * v)} %"
            si = f"{fmt_number(v)} (fraction)"
        else:   # mass flow: kg/s is the only unit
            entered = f"{fmt_number(v)} kg/s"
            si = f"{fmt_number(v)} kg/s"
        rows.append({"label": label, "entered": entered, "si": si})
    p_atm = _num(case.get("p_atm_pa")) or _num(values.get("p_atm_pa")) or P_ATM_DEFAULT_PA
    rows.append({"label": "Atmospheric pressure (for gauge units)", "entered": f"{fmt_number(p_atm / 1e5)} bar",
                 "si": f"{fmt_number(p_atm)} Pa"})
    if "water_saturated" in values:
        rows.append({"label": "Gas water-saturated (hydrate screening)",
                     "entered": "yes" if values.get("water_saturated") else "no", "si": "–"})
    if values.get("hydrate_inhibitor"):
        rows.append({"label": "Hydrate inhibitor considered", "entered": str(values.get("hydrate_inhibitor")),
                     "si": "–"})
    return rows


def _limits(snapshot: Mapping[str, Any]) -> dict[str, Any]:
    """The limits screened against [K]: the stored screening's, else the same rule on the case values."""
    screening = (snapshot.get("result") or {}).get("screening")
    stored = screening.get("limits") if isinstance(screening, Mapping) else None
    if isinstance(stored, Mapping):
        return {"mdmt_k": _num(stored.get("mdmt_k")), "mdmt_source": str(stored.get("mdmt_source") or ""),
                "user_limit_k": _num(stored.get("user_limit_k")), "margin_k": _num(stored.get("margin_k")) or 0.0,
                "governing_k": _num(stored.get("governing_k")), "target_k": _num(stored.get("target_k")),
                "basis": str(stored.get("basis") or "")}
    values = (snapshot.get("case") or {}).get("values") or {}
    mdmt, user = _num(values.get("mdmt_k")), _num(values.get("cold_limit_k"))
    margin = _num(values.get("margin_k")) or 0.0
    given = [v for v in (mdmt, user) if v is not None]
    governing = max(given) if given else None
    return {"mdmt_k": mdmt, "mdmt_source": str((snapshot.get("case") or {}).get("mdmt_source") or ""),
            "user_limit_k": user, "margin_k": margin, "governing_k": governing,
            "target_k": None if governing is None else governing + margin,
            "basis": "warmer of the MDMT and the cold limit" if given else "no limit given"}


def _band(t_k: float | None, limits: Mapping[str, Any], converged: bool = True) -> str:
    governing, target = limits["governing_k"], limits["target_k"]
    if not converged or t_k is None or governing is None:
        return Outcome.NOT_SCREENED.value
    if t_k < governing:
        return Outcome.FAIL.value
    if t_k < (target if target is not None else governing):
        return Outcome.MARGIN_ERODED.value
    return Outcome.PASS.value


def _conditions(result: Mapping[str, Any], limits: Mapping[str, Any], units: _Units) -> list[dict[str, Any]]:
    out = []
    for entry in result.get("conditions") or []:
        if not isinstance(entry, Mapping):
            continue
        converged = bool(entry.get("converged")) and _num(entry.get("t_out")) is not None
        t_out = _num(entry.get("t_out")) if converged else None
        if "t_screen_k" in entry:
            t_screen = _num(entry.get("t_screen_k")) if converged else None
            converged = converged and t_screen is not None
        else:
            t_screen = t_out
        by_model = {str(m): _num(t) for m, t in (entry.get("t_out_by_model") or {}).items()}
        if not by_model and result.get("eos"):
            by_model = {str(result["eos"]): t_out}
        temps = [t for t in by_model.values() if t is not None]
        spread = max(temps) - min(temps) if len(temps) >= 2 else None
        drop = None if t_out is None or _num(entry.get("t_in")) is None else _num(entry.get("t_in")) - t_out
        governing = limits["governing_k"]
        solids = entry.get("solids") if isinstance(entry.get("solids"), Mapping) else None
        band = _band(t_screen, limits, converged)
        out.append({
            "name": str(entry.get("condition") or ""), "converged": converged,
            "message": str(entry.get("message") or ""),
            "p_in": units.P(entry.get("p_in"), "inlet_pressure"), "t_in": units.T(entry.get("t_in")),
            "p_out": units.P(entry.get("p_out"), "outlet_pressure"), "t_out": units.T(t_out),
            "inlet_phase": str(entry.get("inlet_phase") or "unknown"),
            "phase": str(entry.get("phase") or "unknown") if t_out is not None else "–",
            "inlet_vf": _num(entry.get("inlet_vapor_fraction")),
            "vf": _num(entry.get("vapor_fraction")) if t_out is not None else None,
            "drop": units.DT(drop), "by_model": {m: units.T(t) for m, t in by_model.items()},
            "spread": units.DT(spread), "t_screen": units.T(t_screen),
            "governing_model": str(entry.get("governing_model") or ""),
            "solids": None if solids is None else {
                "t_out": units.T(solids.get("t_out_k")),
                "solid_percent": None if _num(solids.get("solid_fraction")) is None
                else 100.0 * _num(solids.get("solid_fraction"))},
            "margin": units.DT(None if t_screen is None or governing is None else t_screen - governing),
            "band": band, "band_label": OUTCOME_LABELS.get(band, band.upper()),
            "warnings": [str(w) for w in entry.get("warnings") or ()],
            # SI, for the drawing
            "si": {"p_in": _num(entry.get("p_in")), "t_in": _num(entry.get("t_in")),
                   "p_out": _num(entry.get("p_out")), "t_out": t_out},
        })
    return out


def _findings(screening: Mapping[str, Any]) -> list[dict[str, str]]:
    out = []
    for f in screening.get("findings") or ():
        if not isinstance(f, Mapping):
            continue
        out.append({"severity": str(f.get("severity") or "information"), "topic": str(f.get("topic") or ""),
                    "message": str(f.get("message") or ""), "basis": str(f.get("basis") or ""),
                    "condition": str(f.get("condition") or "")})
    out.sort(key=lambda f: _SEVERITY_ORDER.get(f["severity"], 3))   # stable: hazards first
    return out


def _preheat(units: _Units, ph: Any) -> dict[str, Any] | None:
    if not isinstance(ph, Mapping):
        return None

    def row(p: Mapping[str, Any]) -> dict[str, Any]:
        duty = _num(p.get("duty_w"))
        return {"condition": str(p.get("condition") or ""), "model": str(p.get("model") or ""),
                "converged": bool(p.get("converged")), "needed": bool(p.get("needed")),
                "t_in": units.T(p.get("t_in_k")), "t_in_required": units.T(p.get("t_in_required_k")),
                "rise": units.DT(p.get("temperature_rise_k")), "duty_kw": None if duty is None else duty / 1e3,
                "message": str(p.get("message") or "")}

    rows = [row(p) for p in ph.get("cases") or () if isinstance(p, Mapping)]
    gov = ph.get("governing")
    return {"target": units.T(ph.get("target_k")), "all_converged": bool(ph.get("all_converged")),
            "governing": row(gov) if isinstance(gov, Mapping) else None, "rows": rows,
            "mass_flow_given": any(r["duty_kw"] is not None for r in rows)}


def _outlet_limit(units: _Units, ol: Any) -> dict[str, Any] | None:
    if not isinstance(ol, Mapping):
        return None

    def row(o: Mapping[str, Any]) -> dict[str, Any]:
        return {"condition": str(o.get("condition") or ""), "model": str(o.get("model") or ""),
                "converged": bool(o.get("converged")), "limited": bool(o.get("limited")),
                "inlet_too_cold": bool(o.get("inlet_too_cold")),
                "p_out_min": units.P(o.get("p_out_min_pa"), "outlet_pressure"),
                "t_out_at_floor": units.T(o.get("t_out_at_floor_k")), "message": str(o.get("message") or "")}

    rows = [row(o) for o in ol.get("cases") or () if isinstance(o, Mapping)]
    gov = ol.get("governing")
    too_cold = sorted({r["condition"] for r in rows if r["inlet_too_cold"]})
    return {"target": units.T(ol.get("target_k")), "all_converged": bool(ol.get("all_converged")),
            "governing": row(gov) if isinstance(gov, Mapping) else None, "rows": rows, "inlet_too_cold": too_cold}


def _sweep(units: _Units, sw: Any, limits: Mapping[str, Any]) -> dict[str, Any] | None:
    if not isinstance(sw, Mapping):
        return None
    worst = sw.get("worst") if isinstance(sw.get("worst"), Mapping) else None
    models = {str(m): d for m, d in (sw.get("models") or {}).items() if isinstance(d, Mapping)}
    gov_model = None
    if worst is not None:
        for m, d in models.items():
            if _num(d.get("worst_t_out_k")) == _num(worst.get("t_out_k")):
                gov_model = m
                break
    per_model = [{"model": m, "complete": bool(d.get("complete")), "worst_t_out": units.T(d.get("worst_t_out_k")),
                  "interior": bool(d.get("worst_is_interior")),
                  "interior_dimensions": [_DIMENSIONS.get(x, x).lower() for x in d.get("interior_dimensions") or ()],
                  "n_points": d.get("n_points"), "n_not_converged": d.get("n_not_converged")}
                 for m, d in models.items()]
    table = None
    source = models.get(gov_model or "") or next(iter(models.values()), None)
    raw = source.get("table") if source is not None else None
    if isinstance(raw, Mapping) and raw.get("row_values") and raw.get("column_values"):
        rdim, cdim, fdim = str(raw.get("row_dimension")), str(raw.get("column_dimension")), \
            str(raw.get("fixed_dimension"))
        rows = []
        for value, temps in zip(raw.get("row_values") or (), raw.get("t_out_k") or (), strict=False):
            cells = []
            for t in temps:
                tk = _num(t)
                band = _band(tk, limits, tk is not None)
                cells.append({"t_out": units.T(tk), "band": band})
            rows.append({"axis": units.dim(rdim, value), "cells": cells})
        table = {"model": gov_model or "", "row_dimension": _DIMENSIONS.get(rdim, rdim),
                 "column_dimension": _DIMENSIONS.get(cdim, cdim),
                 "row_kind": "temperature" if rdim == "t_in_k" else "pressure",
                 "column_kind": "temperature" if cdim == "t_in_k" else "pressure",
                 "columns": [units.dim(cdim, v) for v in raw.get("column_values") or ()], "rows": rows,
                 "fixed_dimension": _DIMENSIONS.get(fdim, fdim), "fixed": units.dim(fdim, raw.get("fixed_value")),
                 "fixed_kind": "temperature" if fdim == "t_in_k" else "pressure"}
    gov = next((p for p in per_model if p["model"] == gov_model), None)
    ranges = sw.get("ranges") or {}
    return {"complete": bool(sw.get("complete")), "governing_model": gov_model or "",
            "worst": None if worst is None else {
                "t_out": units.T(worst.get("t_out_k")), "p_in": units.P(worst.get("p_in_pa"), "inlet_pressure"),
                "t_in": units.T(worst.get("t_in_k")), "p_out": units.P(worst.get("p_out_pa"), "outlet_pressure"),
                "band": _band(_num(worst.get("t_out_k")), limits, True)},
            "interior": bool(gov and gov["interior"]), "interior_dimensions": gov["interior_dimensions"] if gov else [],
            "models": per_model, "table": table,
            "ranges": {"p_in": [units.P(v, "inlet_pressure") for v in ranges.get("p_in_pa") or ()],
                       "t_in": [units.T(v) for v in ranges.get("t_in_k") or ()],
                       "p_out": [units.P(v, "outlet_pressure") for v in ranges.get("p_out_pa") or ()]}}


def _relief(units: _Units, rv: Any) -> dict[str, Any] | None:
    if not isinstance(rv, Mapping):
        return None
    models = {str(m): d for m, d in (rv.get("models") or {}).items() if isinstance(d, Mapping)}
    per_model = []
    for m, d in models.items():
        nz = d.get("nozzle") if isinstance(d.get("nozzle"), Mapping) else {}
        per_model.append({"model": m, "converged": bool(d.get("converged")), "choked": nz.get("choked"),
                          "critical_pressure_ratio": _num(nz.get("critical_pressure_ratio")),
                          "t_throat": units.T(d.get("t_throat_k")), "t_downstream": units.T(d.get("t_downstream_k"))})
    gm = str(rv.get("governing_model") or "")
    d = models.get(gm) if gm else None
    out: dict[str, Any] = {"governing_model": gm, "models": per_model, "converged": d is not None}
    if d is None:
        return out
    nz = d.get("nozzle") if isinstance(d.get("nozzle"), Mapping) else {}
    over = _num(d.get("overpressure_fraction"))
    out.update({
        "p_set": units.P(d.get("set_pressure_pa"), "set_pressure"),
        "overpressure_percent": None if over is None else 100.0 * over,
        "p_relieving": units.P(d.get("p_relieving_pa"), "set_pressure"),
        "t_relieving": units.T(d.get("t_relieving_k")),
        "p_superimposed": units.P(d.get("superimposed_back_pressure_pa"), "superimposed_back_pressure"),
        "dp_built_up": units.DP(d.get("built_up_back_pressure_pa")),
        "p_back": units.P(d.get("p_back_pa"), "superimposed_back_pressure"),
        "choked": nz.get("choked"), "critical_pressure_ratio": _num(nz.get("critical_pressure_ratio")),
        "ideal_critical_pressure_ratio": _num(nz.get("ideal_critical_pressure_ratio")),
        "isentropic_exponent": _num(nz.get("isentropic_exponent")),
        "p_throat": units.P(nz.get("p_throat_pa"), "set_pressure"), "t_throat": units.T(d.get("t_throat_k")),
        "throat_phase": str(nz.get("throat_phase") or ""), "t_downstream": units.T(d.get("t_downstream_k")),
        "downstream_phase": str(d.get("downstream_phase") or ""),
        "outlet_limit": units.T(d.get("outlet_limit_k")), "outlet_margin": units.DT(d.get("outlet_margin_k")),
        "below_outlet_limit": bool(d.get("below_outlet_limit")),
        "header_limit": units.T(d.get("header_limit_k")), "header_margin": units.DT(d.get("header_margin_k")),
        "below_header_limit": bool(d.get("below_header_limit")),
        "method": str((nz.get("basis") or {}).get("method") or "") if isinstance(nz.get("basis"), Mapping) else "",
        "warnings": [str(w) for w in d.get("warnings") or ()]})
    return out


def _model_bases(result: Mapping[str, Any]) -> dict[str, dict[str, Any]]:
    """The model basis of each EOS used (the case model's from the inputs, the other from the answers)."""
    bases: dict[str, dict[str, Any]] = {}
    main = ((result.get("inputs") or {}).get("basis")) or {}
    if isinstance(main, Mapping) and main.get("eos"):
        bases[str(main["eos"])] = dict(main)

    def walk(node: Any, depth: int = 0) -> None:
        if depth > 6:
            return
        if isinstance(node, Mapping):
            b = node.get("basis")
            if isinstance(b, Mapping) and b.get("eos") and str(b["eos"]) not in bases and b.get("kij_basis"):
                bases[str(b["eos"])] = dict(b)
            for v in node.values():
                if isinstance(v, (Mapping, list)):
                    walk(v, depth + 1)
        elif isinstance(node, list):
            for v in node[:8]:
                walk(v, depth + 1)

    walk((result.get("screening") or {}).get("answers") or {})
    for c in result.get("conditions") or ():
        if isinstance(c, Mapping):
            walk({"x": c})
    return bases


def _component_rows(composition: list[Any], stored_version: str) -> tuple[list[dict[str, Any]], list[str], bool]:
    """Rows of the composition table, the critical-constant sources and whether the shipped data matched."""
    from jtcheck.thermo.components import COMPONENT_DATA_VERSION, find_component

    matched = bool(stored_version) and stored_version == COMPONENT_DATA_VERSION
    sources: list[str] = []
    rows = []
    total = sum(_num(z) or 0.0 for _, z in composition) or 1.0
    for cid, z in composition:
        row: dict[str, Any] = {"id": str(cid), "z": _num(z), "percent": 100.0 * (_num(z) or 0.0) / total,
                               "name": str(cid), "formula": "", "cas": "", "mw": None, "tc_k": None,
                               "pc_pa": None, "omega": None, "source": None}
        if matched:
            try:
                comp = find_component(str(cid))
            except JtcheckError:
                comp = None
            if comp is not None:
                if comp.crit_source not in sources:
                    sources.append(comp.crit_source)
                row.update(name=comp.name, formula=comp.formula, cas=comp.cas, mw=comp.molar_mass_g_per_mol,
                           tc_k=comp.tc_k, pc_pa=comp.pc_pa, omega=comp.omega,
                           source=sources.index(comp.crit_source) + 1)
        rows.append(row)
    return rows, sources, matched


def _kij_rows(ids: list[str], eos: str, kij_mode: str, stored_version: str) -> tuple[list[dict[str, Any]], bool]:
    """The tabulated kij pairs with their sources, when the shipped table is the version the result used."""
    if kij_mode != "table" or not ids:
        return [], False
    from jtcheck.thermo.components import KIJ_DATA_VERSION, kij_matrix

    if not stored_version or stored_version != KIJ_DATA_VERSION:
        return [], False
    try:
        kset = kij_matrix(ids, eos)
    except JtcheckError:
        return [], False
    return [{"pair": f"{a} / {b}", "kij": k, "source": s} for a, b, k, s in kset.sources], True


def _common_source(texts: list[str]) -> tuple[str, list[str]]:
    """Factor out what every source says (``"database X, <detail>, as distributed with Y"``): the common
    part, and each text's own detail; ("", texts) when there is nothing worth factoring out."""
    if len(texts) < 3:
        return "", texts
    prefix = os.path.commonprefix(texts)
    cut = prefix.rfind(", ")
    prefix = prefix[:cut + 2] if cut >= 0 else ""
    suffix = os.path.commonprefix([t[::-1] for t in texts])[::-1]
    cut = suffix.find(", ")
    suffix = suffix[cut:] if cut >= 0 else ""
    if len(prefix) + len(suffix) < 20 or any(len(t) <= len(prefix) + len(suffix) for t in texts):
        return "", texts
    details = [t[len(prefix):len(t) - len(suffix)] for t in texts]
    return prefix.rstrip(", ") + suffix, details


def _kij_table(rows: list[dict[str, Any]]) -> dict[str, Any]:
    """The kij pairs in two halves side by side, their sources factored."""
    common, details = _common_source([r["source"] for r in rows])
    rows = [{**r, "detail": d} for r, d in zip(rows, details, strict=True)]
    half = (len(rows) + 1) // 2
    pairs = [(rows[i], rows[i + half] if i + half < len(rows) else None) for i in range(half)]
    return {"common": common, "pairs": pairs, "n": len(rows)}


def _history_row(h: Mapping[str, Any]) -> dict[str, str]:
    """One earlier revision for the history table (the workflow's entries, or the plain
    ``{revision, status, at, by, action, comment}``)."""
    names = [f"{word} {h[key]}" for word, key in (("prepared", "prepared_by"), ("checked", "checked_by"),
                                                   ("approved", "approved_by")) if h.get(key)]
    comment = str(h.get("comment") or "")
    if h.get("void_reason"):
        comment = f"{comment}; voided: {h['void_reason']}" if comment else f"voided: {h['void_reason']}"
    return {"revision": str(h.get("revision") or h.get("letter") or ""), "status": str(h.get("status") or ""),
            "at": _date(h.get("at")), "by": "; ".join(names) if names else str(h.get("by") or ""),
            "action": str(h.get("action") or ""), "comment": comment}


def record_context(snapshot: Mapping[str, Any], paper: str = "A4") -> dict[str, Any]:
    """What the record template shows, from a snapshot (numbers in the case's units, as text-ready values)."""
    case = snapshot.get("case") or {}
    result = snapshot.get("result") or {}
    fluid = snapshot.get("fluid") or {}
    inputs = result.get("inputs") or {}
    shown = case.get("display_units") or ((inputs.get("case_values") or {}).get("display_units")) or {}
    p_atm = _num(case.get("p_atm_pa")) or P_ATM_DEFAULT_PA
    units = _Units(shown, p_atm)
    limits = _limits(snapshot)
    screening = result.get("screening") if isinstance(result.get("screening"), Mapping) else None
    outcome = str((screening or {}).get("outcome") or result.get("outcome") or Outcome.NOT_SCREENED.value) \
        if screening is not None else Outcome.NOT_SCREENED.value
    if outcome not in OUTCOME_LABELS:
        outcome = Outcome.NOT_SCREENED.value
    sentence = str((screening or {}).get("outcome_sentence") or Outcome(outcome).sentence)
    if screening is None:
        sentence = ("This result was stored before the hazard screening existed: it has no outcome, findings or "
                    "answers and counts as not screened.")
    answers = (screening or {}).get("answers") or {}
    conditions = _conditions(result, limits, units)
    t_min = _num((screening or {}).get("t_out_min_k"))
    if t_min is None:
        done = [_num(c.get("t_screen_k", c.get("t_out"))) for c in result.get("conditions") or ()
                if isinstance(c, Mapping)]
        done = [t for t in done if t is not None]
        t_min = min(done) if done else None
    bases = _model_bases(result)
    eos = str(result.get("eos") or fluid.get("eos") or "PR")
    main_basis = bases.get(eos) or {}
    comp = [list(x) for x in fluid.get("composition") or ()]
    comp_rows, crit_sources, comp_matched = _component_rows(comp, str(result.get("component_data_version") or ""))
    kij_mode = str(fluid.get("kij_mode") or "table")
    kij_rows, kij_matched = _kij_rows([r["id"] for r in comp_rows], eos, kij_mode,
                                      str(result.get("kij_data_version") or ""))
    history = [dict(h) for h in snapshot.get("history") or () if isinstance(h, Mapping)]
    letter = str((snapshot.get("revision") or {}).get("letter") or "")
    revision = snapshot.get("revision") or {}
    prepared = snapshot.get("prepared_by") or {}
    prepared_at = revision.get("prepared_at") or revision.get("submitted_at") or snapshot.get("prepared_at")
    try:
        digest = snapshot_digest(dict(snapshot))
    except (TypeError, ValueError):
        digest = ""
    refs = [str(b.get("eos_reference")) for b in bases.values() if b.get("eos_reference")]
    relief = _relief(units, answers.get("relief_valve"))
    if relief and relief.get("method"):
        refs.append(f"Relief valve nozzle: {relief['method']}")
    material = case.get("material")
    return {
        "paper": paper, "record_number": str(snapshot.get("record_number") or ""), "letter": letter,
        "schema": str(snapshot.get("schema") or ""), "digest": digest,
        "case": {"tag": str(case.get("tag") or ""), "service": str(case.get("service") or ""),
                 "title": str(case.get("title") or case.get("tag") or ""),
                 "kind_label": str(case.get("kind_label") or case.get("kind") or ""),
                 "site": str(case.get("site") or ""), "unit": str(case.get("unit") or ""),
                 "basis": str(case.get("basis") or ""), "references": str(case.get("references") or ""),
                 "version": case.get("version"), "id": case.get("id"),
                 "mdmt_source": str(case.get("mdmt_source") or "")},
        "material": dict(material) if isinstance(material, Mapping) else None,
        "prepared_by": {"name": str(prepared.get("name") or ""), "email": str(prepared.get("email") or "")},
        "prepared_at": _date(prepared_at) if prepared_at else "",
        "computed_at": _date(result.get("computed_at")), "computed_by": str(result.get("computed_by") or ""),
        "result_case_version": result.get("case_version"),
        "units": {"temperature": units.temperature, "inlet_pressure": units.inlet_pressure,
                  "outlet_pressure": units.outlet_pressure, "difference": units.difference,
                  "p_atm_bar": p_atm / 1e5},
        "inputs": _inputs(case, units),
        "fluid": {"name": str(fluid.get("name") or ""), "eos": eos, "kij_mode": kij_mode, "rows": comp_rows,
                  "total": sum(_num(z) or 0.0 for _, z in comp), "crit_sources": crit_sources,
                  "data_matched": comp_matched},
        "method": {"text": str(inputs.get("method") or ""), "eos_name": str(main_basis.get("eos_name") or eos),
                   "eos_reference": str(main_basis.get("eos_reference") or ""),
                   "volume_translation": str(main_basis.get("volume_translation") or ""),
                   "kij_basis": str(result.get("kij_basis") or main_basis.get("kij_basis") or ""),
                   "defaulted": [" / ".join(map(str, p)) for p in main_basis.get("kij_defaulted_pairs") or ()],
                   "kij_rows": kij_rows, "kij_matched": kij_matched, "kij_table": _kij_table(kij_rows),
                   "others": [{"eos": e, "eos_name": str(b.get("eos_name") or e),
                               "kij_basis": str(b.get("kij_basis") or ""),
                               "n_defaulted": len(b.get("kij_defaulted_pairs") or ())}
                              for e, b in bases.items() if e != eos],
                   "models": [str(m) for m in (screening or {}).get("models") or ()] or [eos],
                   "software_version": str(result.get("software_version") or ""),
                   "component_data_version": str(result.get("component_data_version") or ""),
                   "kij_data_version": str(result.get("kij_data_version") or "")},
        "result": {"converged": bool(result.get("converged")), "message": str(result.get("message") or ""),
                   "warnings": [str(w) for w in result.get("warnings") or ()]},
        "conditions": conditions,
        "any_solids": any(c["solids"] for c in conditions),
        # the result's warnings name their conditions; per condition only when the result has none
        "condition_notes": ([] if result.get("warnings") else
                            [f"{c['name']}: {w}" for c in conditions for w in c["warnings"]])
        + [f"{c['name']}: {c['message']}" for c in conditions if not c["converged"] and c["message"]],
        "models": [str(m) for m in (screening or {}).get("models") or ()] or [eos],
        "limits": {"governing": units.T(limits["governing_k"]), "target": units.T(limits["target_k"]),
                   "mdmt": units.T(limits["mdmt_k"]), "user": units.T(limits["user_limit_k"]),
                   "margin": units.DT(limits["margin_k"]), "basis": limits["basis"],
                   "mdmt_source": limits["mdmt_source"]},
        "outcome": {"value": outcome, "label": OUTCOME_LABELS[outcome], "sentence": sentence,
                    "slug": outcome.replace(" ", "-"), "t_out_min": units.T(t_min),
                    "coldest": str((screening or {}).get("coldest_condition") or ""), "legacy": screening is None},
        "findings": _findings(screening or {}),
        "preheat": _preheat(units, answers.get("preheat")),
        "outlet_limit": _outlet_limit(units, answers.get("outlet_pressure_limit")),
        "sweep": _sweep(units, answers.get("sweep"), limits),
        "relief": relief,
        "references": refs,
        "history": [_history_row(h) for h in history],
        "caution": CAUTION,
        "signature_roles": [{"role": r, "label": SIGNATURE_LABELS[r]} for r in SIGNATURE_ROLES],
        "_limits_k": limits,
    }


# -- charts ----------------------------------------------------------------------------------------------------
def _svg_uri(svg: str) -> str:
    """An SVG document as a ``data:`` URI.

    The record embeds its charts as SVG images rather than as ``<svg>`` elements in the HTML: still vector
    and still in the one file, but WeasyPrint then parses them as SVG alone instead of running the HTML
    parser and the CSS cascade over their several hundred elements (about a fifth of the layout time).
    """
    return "data:image/svg+xml;base64," + base64.b64encode(svg.encode("utf-8")).decode("ascii")


def _charts(snapshot: Mapping[str, Any], ctx: Mapping[str, Any]) -> dict[str, str | None]:
    """The P-T diagram and the sweep chart as inline SVG (None when one cannot be drawn)."""
    result = snapshot.get("result") or {}
    units = ctx["units"]
    limits = ctx["_limits_k"]
    out: dict[str, str | None] = {"pt": None, "sweep": None, "pt_error": None, "sweep_error": None}
    try:
        ends = [charts.LetdownEnds(c["name"], c["converged"], c["si"]["p_in"], c["si"]["t_in"], c["si"]["p_out"],
                                   c["si"]["t_out"]) for c in ctx["conditions"]]
        data = charts.pt_diagram_data(
            charts.fluid_key_of(result.get("inputs") or {}), ends,
            charts.ColdLines(limits["governing_k"], limits["target_k"], limits["mdmt_k"]),
            charts.ChartUnits(units["temperature"], units["inlet_pressure"], units["p_atm_bar"] * 1e5))
        out["pt"] = _svg_uri(charts.draw_pt_diagram(data, style=charts.PRINT, text_as_paths=False,
                                                    css_class="chart-pt", figsize=(8.2, 4.4),
                                                    margins=(0.085, 0.115, 0.70, 0.975)))
    except (JtcheckError, ValueError, KeyError, TypeError) as exc:
        out["pt_error"] = str(exc)[:200]
    sw = ctx.get("sweep")
    table = (sw or {}).get("table")
    if table and table["rows"] and table["columns"]:
        lines = []
        for row in table["rows"]:
            axis = row["axis"]
            label = (f"{table['row_dimension'].lower()} {axis['value']:.4g} {axis['unit']}"
                     if axis["value"] is not None else None)
            lines.append(charts.SweepLine(label, tuple(c["t_out"]["value"] for c in row["cells"])))
        fixed = table["fixed"]
        title = (f"{table['fixed_dimension']} {fixed['value']:.4g} {fixed['unit']} ({table['model'] or 'model'})"
                 if fixed["value"] is not None else None)
        data = charts.SweepChartData(
            x=tuple(c["value"] for c in table["columns"]),
            x_label=f"{table['column_dimension']} [{table['columns'][0]['unit']}]",
            y_label=f"Outlet temperature [{units['temperature']}]", lines=tuple(lines),
            governing=ctx["limits"]["governing"]["value"], target=ctx["limits"]["target"]["value"], title=title)
        try:
            out["sweep"] = _svg_uri(charts.draw_sweep_chart(data, style=charts.PRINT, text_as_paths=False,
                                                            css_class="chart-sweep", figsize=(7.6, 3.6),
                                                            margins=(0.09, 0.135, 0.72, 0.92)))
        except (ValueError, TypeError) as exc:   # pragma: no cover - plain numbers; a drawing problem shows as text
            out["sweep_error"] = str(exc)[:200]
    return out


# -- rendering -----------------------------------------------------------------------------------------------
def _paper(paper: Any) -> tuple[str, str]:
    entry = PAPERS.get(str(paper).strip().lower()) if isinstance(paper, str) else None
    if entry is None:
        raise InputError("paper", f"unknown paper size {paper!r}; allowed: A4, Letter")
    return entry


def render_html(snapshot: Mapping[str, Any], paper: str = "A4") -> str:
    """The record as HTML (the page size comes with the style sheet; see :func:`render_record`)."""
    name, _ = _paper(paper)
    if not isinstance(snapshot, Mapping):
        raise InputError("snapshot", "give the snapshot of a revision (a dict)")
    ctx = record_context(snapshot, name)
    ctx["charts"] = _charts(snapshot, ctx)
    return _environment().get_template("record.html").render(**ctx)


def _signature_boxes(document: Any) -> dict[str, SignatureBox]:
    wanted = {f"sig-{role}": role for role in SIGNATURE_ROLES}
    found: dict[str, SignatureBox] = {}
    for index, page in enumerate(document.pages):
        height_pt = page.height * PT_PER_PX
        for box in page._page_box.descendants():
            element = getattr(box, "element", None)
            if element is None:
                continue
            role = wanted.get(element.get("id") or "")
            if role is None or role in found:
                continue
            x, y = box.border_box_x(), box.border_box_y()
            w, h = box.border_width(), box.border_height()
            found[role] = SignatureBox(page_index=index, x1=round(x * PT_PER_PX, 2),
                                       y1=round(height_pt - (y + h) * PT_PER_PX, 2),
                                       x2=round((x + w) * PT_PER_PX, 2), y2=round(height_pt - y * PT_PER_PX, 2))
    missing = [r for r in SIGNATURE_ROLES if r not in found]
    if missing:   # the template lost an id: a record without its signature areas must not be issued
        raise JtcheckError(f"record layout has no signature area for: {', '.join(missing)}")
    return found


def render_record(snapshot: Mapping[str, Any], paper: str = "A4") -> RenderedRecord:
    """Render a revision's snapshot as the PDF calculation record.

    Parameters
    ----------
    snapshot : dict
        The frozen snapshot of the revision (:func:`jtcheck.records.snapshot.case_snapshot`).
    paper : {"A4", "Letter"}
        Paper size (any case).

    Returns
    -------
    RenderedRecord
        The PDF bytes, the three signature areas (``"preparer"``, ``"checker"``, ``"approver"``, all on the
        first page, PDF points from the bottom-left corner) and the page count.

    Raises
    ------
    jtcheck.errors.InputError
        ``paper`` for a paper size other than A4 or Letter.
    """
    from weasyprint import HTML

    _, page_size = _paper(paper)
    html = render_html(snapshot, paper)
    document = HTML(string=html, base_url=str(templates_path())).render(stylesheets=[_stylesheet(page_size)])
    boxes = _signature_boxes(document)
    pdf = document.write_pdf()
    return RenderedRecord(pdf=pdf, signature_boxes=boxes, page_count=len(document.pages))


def warm_up() -> None:
    """Load what the first record of a process would otherwise load while a user waits (about a second):
    the data tables, the unit registry, the templates and style sheets, matplotlib's and WeasyPrint's fonts.

    Optional; a web worker may call it once at start.  Renders nothing that is kept.
    """
    from weasyprint import HTML

    from jtcheck import Fluid, letdown
    from jtcheck.thermo.components import all_components, kij_matrix

    all_components()
    kij_matrix(["methane", "ethane"], "PR")
    gas = Fluid([("methane", 0.9), ("ethane", 0.1)])     # loads the compiled kernels
    gas.phase_envelope()
    letdown(gas, p_in=50e5, t_in=300.0, p_out=[40e5, 10e5])
    temperature_from_k(300.0, "degC")
    pressure_from_pa(2e5, "barg")
    _environment().get_template("record.html")
    for _, size in PAPERS.values():
        _stylesheet(size)
    charts.draw_sweep_chart(charts.SweepChartData(x=(1.0, 2.0), x_label="x", y_label="y",
                                                  lines=(charts.SweepLine("a", (1.0, 2.0)),)),
                            style=charts.PRINT, text_as_paths=False, margins=(0.1, 0.1, 0.7, 0.9))
    HTML(string='<p class="note">jtcheck <strong>0</strong></p>').render(stylesheets=[_stylesheet("A4")]).write_pdf()

