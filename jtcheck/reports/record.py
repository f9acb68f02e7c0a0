"""The controlled calculation record: a revision's frozen snapshot rendered as a PDF (WeasyPrint).

>>> rendered = render_record(snapshot, "A4")            # doctest: +SKIP
>>> rendered.pdf[:5], rendered.page_count               # doctest: +SKIP
(b'%PDF-', 5)
>>> rendered.signature_boxes["checker"]                  # doctest: +SKIP
SignatureBox(page_index=0, x1=..., y1=..., x2=..., y2=...)

The record is made from the snapshot alone (:func:`jtcheck.records.snapshot.case_snapshot`): numbers are the
stored SI values, shown in the units the case was entered in; the screening (outcome, limits, conditions,
findings, answers) is the display of :mod:`jtcheck.reports.screening_display`, the one the web's result page
shows too.  Nothing is computed again except the drawings (the phase envelope and the traced letdown paths of
the P-T diagram, a drawing aid whose end points are the stored ones).  Component constants and kij sources are
listed from the shipped data tables only when the tables are the very versions the result was computed with
(same SHA-256 prefix); otherwise the record says so and lists just what the snapshot holds.

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
import os
import threading
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field, replace
from functools import cache
from pathlib import Path
from typing import Any

import jinja2

from jtcheck.cases import COMMON_FIELDS, CaseKind, all_fields, kind_of
from jtcheck.errors import InputError, JtcheckError
from jtcheck.notices import CAUTION
from jtcheck.records.snapshot import snapshot_digest
from jtcheck.reports import charts
from jtcheck.reports.depressuring import depressuring_view, draw_depressuring_chart
from jtcheck.reports.numbers import finalize_marks, finite_or_none, fmt_number, fmt_quantity, fmt_signed, mark_filters
from jtcheck.reports.record_fields import add_text_fields
from jtcheck.reports.screening_display import (
    OUTCOME_LABELS,
    ConditionView,
    DisplayUnits,
    ScreeningDisplay,
    StoredResult,
    screening_display,
    sweep_chart_data,
)
from jtcheck.units import (
    P_ATM_DEFAULT_PA,
    pressure_from_pa,
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


#: The text fields of a record (their slots' element ids without "field-") and their font sizes [pt]; the
#: footer of every page adds "revision-page-<n>".  Later signatures fill them (jtcheck.reports.record_fields).
TEXT_FIELD_SIZES = {"revision-cover": 24.0, "status": 8.6, "revision-end": 8.0,
                    **{f"history-{step}-{part}": 7.5 for step in ("check", "approve")
                       for part in ("revision", "status", "at", "by", "action", "comment")}}
#: Font size of the footer [pt] (record.css, @bottom-left).
FOOTER_SIZE_PT = 7.5
#: The history line of each later step before its signature fills it.
PENDING = {"check": "awaiting check", "approve": "awaiting approval"}


@dataclass(frozen=True)
class RenderedRecord:
    """A rendered record: the PDF, the signature areas of ``SIGNATURE_ROLES``, the number of pages and the
    text fields that later signatures fill (name -> ``((page_index, x1, y1, x2, y2), initial text, size [pt])``,
    for :func:`jtcheck.reports.record_fields.add_text_fields`)."""

    pdf: bytes
    signature_boxes: dict[str, SignatureBox]
    page_count: int
    text_fields: dict[str, tuple[tuple[int, float, float, float, float], str, float]] = field(default_factory=dict)


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
                             undefined=jinja2.StrictUndefined, trim_blocks=True, lstrip_blocks=True,
                             finalize=finalize_marks)
    env.filters["num"] = fmt_number
    env.filters.update(mark_filters())
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


def date_text(value: Any) -> str:
    """A time (datetime or ISO text) as the record shows it: "2026-12-02 01:59 UTC"."""
    return _date(value.isoformat() if isinstance(value, dt.datetime) else value)


def _sentence_case(text: str) -> str:
    return text[:1].upper() + text[1:] if text else text


# -- the view of a snapshot -----------------------------------------------------------------------------------
def _kind_of(case: Mapping[str, Any]) -> CaseKind:
    """The case kind of a snapshot's case (a letdown when the snapshot names no known device)."""
    try:
        return kind_of(str(case.get("kind") or "control_valve"))
    except InputError:
        return kind_of("control_valve")


def _inputs(case: Mapping[str, Any], units: DisplayUnits) -> list[dict[str, Any]]:
    """Rows of the inputs table: label, as entered (the unit typed), SI."""
    values = case.get("values") or {}
    kind = _kind_of(case)
    own = {f.key for f in (*kind.fields, *COMMON_FIELDS)}
    rows: list[dict[str, Any]] = []
    for f in all_fields():      # the case kind's fields and the common ones, in the register's order
        if f.name == "p_atm" or f.key not in own:
            continue
        key, label, kind = f.key, f.record_label or f.form_label, f.quantity
        v = finite_or_none(values.get(key))
        name = f.name
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
        elif kind == "water_content":
            entered = f"{fmt_number(v * 1e6)} mg/Sm3"
            si = f"{fmt_number(v)} kg/Sm3 (15 degC, 101.325 kPa)"
        else:   # mass flow: kg/s is the only unit
            entered = f"{fmt_number(v)} kg/s"
            si = f"{fmt_number(v)} kg/s"
        rows.append({"label": label, "entered": entered, "si": si})
    p_atm = finite_or_none(case.get("p_atm_pa")) or finite_or_none(values.get("p_atm_pa")) or P_ATM_DEFAULT_PA
    rows.append({"label": "Atmospheric pressure (for gauge units)", "entered": f"{fmt_number(p_atm / 1e5)} bar",
                 "si": f"{fmt_number(p_atm)} Pa"})
    if "water_saturated" in values:
        rows.append({"label": "Gas water-saturated (hydrate screening)",
                     "entered": "yes" if values.get("water_saturated") else "no", "si": "–"})
    if values.get("hydrate_inhibitor"):
        rows.append({"label": "Hydrate inhibitor considered", "entered": str(values.get("hydrate_inhibitor")),
                     "si": "–"})
    return rows


def _condition_rows(conditions: Sequence[ConditionView], units: DisplayUnits) -> list[dict[str, Any]]:
    """The conditions as the record's tables show them (text-ready values in the case's units)."""
    out = []
    for c in conditions:
        solid_fraction = finite_or_none((c.solids or {}).get("solid_fraction"))
        out.append({
            "name": c.name, "converged": c.converged, "message": c.message,
            "p_in": units.P(c.p_in_pa, "inlet_pressure"), "t_in": units.T(c.t_in_k),
            "p_out": units.P(c.p_out_pa, "outlet_pressure"), "t_out": units.T(c.t_out_k),
            "inlet_phase": c.inlet_phase, "phase": c.phase if c.t_out_k is not None else "–",
            "inlet_vf": c.inlet_vapor_fraction, "vf": c.vapor_fraction,
            "drop": units.DT(c.drop_k), "by_model": {m: units.T(t) for m, t in c.t_out_by_model.items()},
            "spread": units.DT(c.model_spread_k), "t_screen": units.T(c.t_screen_k),
            "governing_model": c.governing_model,
            "solids": None if c.solids is None else {
                "t_out": units.T(c.solids.get("t_out_k")),
                "solid_percent": None if solid_fraction is None else 100.0 * solid_fraction},
            "margin": units.DT(c.margin_to_cold_limit_k), "band": c.band,
            "band_label": OUTCOME_LABELS.get(c.band, c.band.upper()), "warnings": list(c.warnings)})
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
    total = sum(finite_or_none(z) or 0.0 for _, z in composition) or 1.0
    for cid, z in composition:
        zi = finite_or_none(z)
        row: dict[str, Any] = {"id": str(cid), "z": zi, "percent": 100.0 * (zi or 0.0) / total,
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
    p_atm = finite_or_none(case.get("p_atm_pa")) or P_ATM_DEFAULT_PA
    units = DisplayUnits.entered(shown, p_atm)
    stored = StoredResult.from_snapshot(result)
    if not stored.case_values:      # a result stored without its case values: the snapshot's case has them
        stored = replace(stored, case_values={**(case.get("values") or {}), "mdmt_source": case.get("mdmt_source")})
    display = screening_display(stored, units)
    limits = display.limits
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
    relief = display.relief
    if relief and relief.get("method"):
        refs.append(f"Relief valve nozzle: {relief['method']}")
    material = case.get("material")
    conditions = _condition_rows(display.conditions, units)
    models = list(display.models) or [eos]
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
        "words": units.words,
        "units": {"temperature": units.temperature, "inlet_pressure": units.inlet_pressure,
                  "outlet_pressure": units.outlet_pressure, "difference": units.difference,
                  "p_atm_bar": p_atm / 1e5},
        "inputs": _inputs(case, units),
        "kind_sections": list(_kind_of(case).record_sections),
        "kind_remedies": _kind_of(case).remedies_sentence,
        "generated_cases": list(((result.get("screening") or {}).get("answers") or {}).get("generated_cases") or []),
        "fluid": {"name": str(fluid.get("name") or ""), "eos": eos, "kij_mode": kij_mode, "rows": comp_rows,
                  "total": sum(finite_or_none(z) or 0.0 for _, z in comp), "crit_sources": crit_sources,
                  "data_matched": comp_matched},
        "method": {"text": str(inputs.get("method") or ""), "eos_name": str(main_basis.get("eos_name") or eos),
                   "eos_reference": str(main_basis.get("eos_reference") or ""),
                   "eos_version": str(main_basis.get("eos_version") or ""),
                   "eos_range": str(main_basis.get("eos_range") or ""),
                   "governing_alone": eos == "GERG2008",
                   "volume_translation": str(main_basis.get("volume_translation") or ""),
                   "kij_basis": str(result.get("kij_basis") or main_basis.get("kij_basis") or ""),
                   "defaulted": [" / ".join(map(str, p)) for p in main_basis.get("kij_defaulted_pairs") or ()],
                   "kij_rows": kij_rows, "kij_matched": kij_matched, "kij_table": _kij_table(kij_rows),
                   "others": [{"eos": e, "eos_name": str(b.get("eos_name") or e),
                               "kij_basis": str(b.get("kij_basis") or ""),
                               "n_defaulted": len(b.get("kij_defaulted_pairs") or ())}
                              for e, b in bases.items() if e != eos],
                   "models": models,
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
        "models": models,
        "limits": {"governing": units.T(limits.governing_k), "target": units.T(limits.target_k),
                   "mdmt": units.T(limits.mdmt_k), "user": units.T(limits.user_limit_k),
                   "margin": units.DT(limits.margin_k), "basis": limits.basis, "mdmt_source": limits.mdmt_source,
                   "mdmt_working": limits.mdmt_working,
                   "total_margin": units.DT(limits.total_margin_k),
                   "margin_terms": [{"term": str(t.get("term") or ""), "k": units.DT(t.get("k")),
                                     "basis": str(t.get("basis") or "")} for t in limits.margin_terms]},
        "outcome": {"value": display.outcome, "label": display.label, "sentence": display.sentence,
                    "slug": display.slug, "t_out_min": display.t_out_min, "coldest": display.coldest_condition,
                    "legacy": display.legacy},
        "findings": display.findings,
        "preheat": display.preheat, "hydrate_preheat": display.hydrate_preheat,
        "remedies_cover": display.remedies_cover,
        "outlet_limit": display.outlet_limit,
        "sweep": display.sweep,
        "relief": relief,
        "references": refs,
        "history": [_history_row(h) for h in history],
        "caution": CAUTION,
        "signature_roles": [{"role": r, "label": SIGNATURE_LABELS[r]} for r in SIGNATURE_ROLES],
        "_display": display, "_units": units,
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
    display: ScreeningDisplay = ctx["_display"]
    units = ctx["units"]
    limits = display.limits
    out: dict[str, str | None] = {"pt": None, "sweep": None, "pt_error": None, "sweep_error": None,
                                  "depressuring": None, "depressuring_error": None}
    if ctx.get("depressuring") is not None:   # a run in time: its curves, not a letdown path
        try:
            svg = draw_depressuring_chart(result.get("screening"), ctx["_units"], limit_k=limits.governing_k,
                                          target_k=limits.target_k, style=charts.PRINT, text_as_paths=False,
                                          css_class="chart-depressuring", figsize=(7.6, 8.0),
                                          margins=(0.1, 0.07, 0.72, 0.98))
            out["depressuring"] = None if svg is None else _svg_uri(svg)
        except (ValueError, TypeError, KeyError) as exc:
            out["depressuring_error"] = str(exc)[:200]
        return out
    try:
        ends = [charts.LetdownEnds(c.name, c.converged, c.p_in_pa, c.t_in_k, c.p_out_pa, c.t_out_k)
                for c in display.conditions]
        data = charts.pt_diagram_data(
            charts.fluid_key_of(result.get("inputs") or {}), ends,
            charts.ColdLines(limits.governing_k, limits.target_k, limits.mdmt_k, limits.allowable_curve),
            charts.ChartUnits(units["temperature"], units["inlet_pressure"], units["p_atm_bar"] * 1e5))
        out["pt"] = _svg_uri(charts.draw_pt_diagram(data, style=charts.PRINT, text_as_paths=False,
                                                    css_class="chart-pt", figsize=(8.2, 4.4),
                                                    margins=(0.085, 0.115, 0.70, 0.975)))
    except (JtcheckError, ValueError, KeyError, TypeError) as exc:
        out["pt_error"] = str(exc)[:200]
    sweep = sweep_chart_data(display, ctx["_units"])
    if sweep is not None:
        try:
            out["sweep"] = _svg_uri(charts.draw_sweep_chart(sweep, style=charts.PRINT, text_as_paths=False,
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


def render_html(snapshot: Mapping[str, Any], paper: str = "A4", issued_at: str = "") -> str:
    """The record as HTML (the page size comes with the style sheet; see :func:`render_record`)."""
    name, _ = _paper(paper)
    if not isinstance(snapshot, Mapping):
        raise InputError("snapshot", "give the snapshot of a revision (a dict)")
    ctx = record_context(snapshot, name)
    ctx["shows_conditions"] = _kind_of(snapshot.get("case") or {}).shows_conditions
    ctx["depressuring"] = depressuring_view((snapshot.get("result") or {}).get("screening"), ctx["_units"])
    if issued_at:
        ctx["prepared_at"] = issued_at
    ctx["charts"] = _charts(snapshot, ctx)
    return _environment().get_template("record.html").render(**ctx)


def _pt_box(page: Any, box: Any, content: bool = False) -> tuple[float, float, float, float]:
    """(x1, y1, x2, y2) [pt] of a layout box, origin at the page's bottom left."""
    height_pt = page.height * PT_PER_PX
    if content:
        x, y, w, h = box.content_box_x(), box.content_box_y(), box.width, box.height
    else:
        x, y, w, h = box.border_box_x(), box.border_box_y(), box.border_width(), box.border_height()
    return (round(x * PT_PER_PX, 2), round(height_pt - (y + h) * PT_PER_PX, 2), round((x + w) * PT_PER_PX, 2),
            round(height_pt - y * PT_PER_PX, 2))


def _field_slots(document: Any, initial: Mapping[str, str]) -> dict[str, tuple[tuple[int, float, float, float, float],
                                                                              str, float]]:
    """The text fields of the record: each slot of the layout (``id="field-..."``) and, on every page, the space
    after "revision" in the footer, with its initial text."""
    found: dict[str, tuple[tuple[int, float, float, float, float], str, float]] = {}
    for index, page in enumerate(document.pages):
        for box in page._page_box.descendants():
            element = getattr(box, "element", None)
            ident = (element.get("id") or "") if element is not None else ""
            name = ident[len("field-"):] if ident.startswith("field-") else ""
            if name in TEXT_FIELD_SIZES and name not in found:
                found[name] = ((index, *_pt_box(page, box, content=True)), initial.get(name, ""),
                               TEXT_FIELD_SIZES[name])
        footer = next((b for b in page._page_box.children if getattr(b, "at_keyword", "") == "@bottom-left"), None)
        if footer is not None:
            texts = [b for b in footer.descendants() if type(b).__name__ == "TextBox"]
            if texts:
                x1, y1, x2, y2 = _pt_box(page, texts[-1])
                found[f"revision-page-{index + 1}"] = ((index, x2 + 1.5, y1, x2 + 40.0, y2), initial["revision"],
                                                       FOOTER_SIZE_PT)
    missing = [n for n in TEXT_FIELD_SIZES if n not in found]
    if missing or len(found) != len(TEXT_FIELD_SIZES) + len(document.pages):
        raise JtcheckError(f"record layout lacks the slots of the text fields: {', '.join(missing) or 'footer'}")
    return found


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


def initial_fields(snapshot: Mapping[str, Any], issued_at: str = "") -> dict[str, str]:
    """The text of the record's text fields when it is issued for check (``"revision"`` for every revision slot)."""
    letter = str((snapshot.get("revision") or {}).get("letter") or "")
    out = {"revision": letter, "revision-cover": letter, "revision-end": f"{letter}.",
           "status": f"Issued for check as revision {letter}" + (f" on {issued_at}" if issued_at else "")
                     + "; check and approval are shown by the signatures below."}
    for step, words in PENDING.items():
        out[f"history-{step}-status"] = words
    return out


def issued_fields(letter: str, label: str, at: str, name: str, comment: str, n_pages: int) -> dict[str, str]:
    """The text fields the approver's signature fills: the issued revision ``label`` everywhere (cover, every
    footer, the end), the status line and the approval's history line."""
    out = {"revision-cover": label, "revision-end": f"{label}.",
           **{f"revision-page-{i}": label for i in range(1, n_pages + 1)},
           "status": f"Issued as revision {label}, approved {at}; revision {letter} was issued for check. "
                     "Signatures below."}
    out.update(history_fields("approve", label, "approved", at, f"approved {name}", comment))
    return out


def history_fields(step: str, revision: str, status: str, at: str, by: str, comment: str) -> dict[str, str]:
    """The history line of a later step (``"check"`` or ``"approve"``) as text field values."""
    action = {"check": "checked", "approve": "approved"}[step]
    return {f"history-{step}-revision": revision, f"history-{step}-status": status, f"history-{step}-at": at,
            f"history-{step}-by": by, f"history-{step}-action": action, f"history-{step}-comment": comment}


def render_record(snapshot: Mapping[str, Any], paper: str = "A4", issued_at: str = "") -> RenderedRecord:
    """Render a revision's snapshot as the PDF calculation record.

    Parameters
    ----------
    snapshot : dict
        The frozen snapshot of the revision (:func:`jtcheck.records.snapshot.case_snapshot`).
    paper : {"A4", "Letter"}
        Paper size (any case).
    issued_at : str
        The date it is issued for check (the preparer's signature), shown as prepared; empty for a preview.

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
    html = render_html(snapshot, paper, issued_at)
    document = HTML(string=html, base_url=str(templates_path())).render(stylesheets=[_stylesheet(page_size)])
    boxes = _signature_boxes(document)
    slots = _field_slots(document, initial_fields(snapshot, issued_at))
    pdf = add_text_fields(document.write_pdf(), slots)
    return RenderedRecord(pdf=pdf, signature_boxes=boxes, page_count=len(document.pages), text_fields=slots)


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

