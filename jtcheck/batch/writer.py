"""Write the results of a batch screening: one row per case, as CSV or XLSX.

Each row carries the case's identity (file row, tag, service, kind, fluid, EOS), its inputs in the
units of the file (the display units the reader kept per column) and in SI, then the screening: the
coldest condition, the outlet temperature by model at that condition, the screened outlet, phase and
vapour fraction, the margin to the limit, the outcome in words, the findings, the path (batch or
scalar) and the message.  Temperatures of results are in the file's inlet-temperature unit.

The XLSX has a bold header, frozen panes, column widths, an autofilter and the outcome coloured as a
second cue (the words carry the meaning), and a second sheet "summary" with the counts and the caution.
The CSV is UTF-8 with a byte-order mark (so that spreadsheet programs read it as UTF-8).
"""
from __future__ import annotations

import csv
import io
import math
import os
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path
from typing import Any

from jtcheck import __version__
from jtcheck.batch.cells import FORMULA_START, formula_safe
from jtcheck.batch.layout import (
    ABSOLUTE_PRESSURE,
    COLUMNS,
    KIND_COLUMNS,
    PRESSURE,
    TEMPERATURE,
    WATER_DEFAULT,
    Column,
)
from jtcheck.batch.reader import CaseSource, ReadResult, canonical_unit
from jtcheck.notices import CAUTION
from jtcheck.screening.batch import BatchCase, BatchRowResult, BatchScreening
from jtcheck.units import (
    P_ATM_DEFAULT_PA,
    PRESSURE_UNITS,
    TextUnits,
    pressure_from_pa,
    round_significant,
    temperature_from_k,
)

#: The outcomes, best first, as words.
OUTCOMES = ("pass", "margin eroded", "fail", "not screened")
#: Fill colours of the outcome cells in XLSX (a second cue only: the words carry the meaning).
OUTCOME_FILLS = {"pass": "C6EFCE", "margin eroded": "FFEB9C", "fail": "FFC7CE", "not screened": "D9D9D9"}
#: Models in the order their columns are written (others follow).
MODEL_ORDER = ("PR", "SRK", "RK", "VDW")
_DEFAULT_UNITS = {"inlet_pressure": "bara", "outlet_pressure": "bara", "max_inlet_pressure": "bara",
                  "inlet_temperature": "degC", "min_inlet_temperature": "degC", "mdmt": "degC", "cold_limit": "degC",
                  "margin": "K", "atmospheric_pressure": "bar"}


# ---------------------------------------------------------------------------------------------
# unit conversions (pint, through jtcheck.units; affine maps made once per unit)
# ---------------------------------------------------------------------------------------------

@lru_cache(maxsize=64)
def _pressure_map(unit: str) -> tuple[float, bool]:
    """(factor Pa -> unit, gauge?) from jtcheck.units."""
    gauge = PRESSURE_UNITS[unit.lower()][1]
    return pressure_from_pa(1.0, unit, 0.0) - pressure_from_pa(0.0, unit, 0.0), gauge


@lru_cache(maxsize=64)
def _temperature_map(unit: str) -> tuple[float, float]:
    """(slope, offset) of K -> unit from jtcheck.units."""
    zero = temperature_from_k(0.0, unit)
    return temperature_from_k(1.0, unit) - zero, zero


def _pressure(pa: float | None, unit: str, p_atm_pa: float) -> float | None:
    if pa is None:
        return None
    factor, gauge = _pressure_map(unit)
    return (pa - (p_atm_pa if gauge else 0.0)) * factor


def _temperature(k: float | None, unit: str) -> float | None:
    if k is None or not math.isfinite(k):
        return None
    slope, offset = _temperature_map(unit)
    return k * slope + offset


def _difference(dk: float | None, unit: str) -> float | None:
    if dk is None or not math.isfinite(dk):
        return None
    slope, _ = _temperature_map(unit)
    return dk * slope


def _difference_unit(t_unit: str) -> str:
    return "degF" if t_unit in ("degF", "degR") else "K"


# ---------------------------------------------------------------------------------------------
# the table
# ---------------------------------------------------------------------------------------------

@dataclass(frozen=True)
class _Out:
    """One output column: header, kind of value (for formats and widths)."""

    header: str
    kind: str = "text"        # text, display (a number in a display unit), si, fraction, outcome, long


def _units_for(units: Mapping[str, str] | None) -> dict[str, str]:
    out = dict(_DEFAULT_UNITS)
    for key, unit in (units or {}).items():
        if key in out and unit:
            out[key] = canonical_unit(unit)
    return out


def _models(rows: Sequence[BatchRowResult]) -> list[str]:
    seen: set[str] = set()
    for r in rows:
        seen.update((r.t_out_by_model or {}).keys())
    return [m for m in MODEL_ORDER if m in seen] + sorted(seen - set(MODEL_ORDER))


def _quantity_columns() -> list[Column]:
    """The letdown's quantity columns echoed in the results (the relief and generated-case inputs are not)."""
    return [c for c in COLUMNS if c.has_unit and c.key not in KIND_COLUMNS]


def _headers(units: Mapping[str, str], models: Sequence[str]) -> list[_Out]:
    t_unit = units["inlet_temperature"]
    d_unit = _difference_unit(t_unit)
    cols = [_Out("row"), _Out("tag"), _Out("service", "long"), _Out("kind"), _Out("fluid", "long"), _Out("eos")]
    for c in COLUMNS:
        if c.has_unit and c.key not in KIND_COLUMNS:
            cols.append(_Out(c.header(units[c.key]), "input"))
        elif c.key == "water_saturated":
            cols.append(_Out(c.name))
            cols.append(_Out("water basis", "long"))
    for c in _quantity_columns():
        si = "Pa" if c.quantity in (PRESSURE, ABSOLUTE_PRESSURE) else "K"
        cols.append(_Out(f"SI {c.name} [{si}]", "si"))
    cols += [_Out(f"governing limit [{t_unit}]", "display"), _Out("limit basis", "long"), _Out("coldest condition")]
    cols += [_Out(f"outlet {m} [{t_unit}]", "display") for m in models]
    cols += [_Out(f"screened outlet [{t_unit}]", "display"), _Out("SI screened outlet [K]", "si"),
             _Out("governing model"), _Out("phase"), _Out("vapour fraction", "fraction"),
             _Out(f"margin to limit [{d_unit}]", "display"), _Out("outcome", "outcome"), _Out("findings", "long"),
             _Out("path"), _Out("message", "long")]
    return cols


def water_basis_text(case: BatchCase | None, t_unit: str) -> str:
    """The water a row's gas carries, as the hydrate screening takes it (the saturated-at-inlet default shown)."""
    if case is None:
        return ""
    content = case.extras.get("water_content_kg_per_sm3")
    dew = case.extras.get("water_dew_point_k")
    if content is not None:
        return f"water content {content * 1e6:.4g} mg/Sm3"
    if dew is not None:
        return f"water dew point {_temperature(dew, t_unit):.4g} {t_unit} at the outlet pressure"
    if "water" in case.fluid.ids:
        return "water in the composition"
    if case.water_saturated:
        return f"{WATER_DEFAULT}: the default"
    return "no water given: not screened for hydrates"


def _findings_text(findings: Sequence[Any]) -> str:
    parts = []
    for f in findings or ():
        topic = f.get("topic") if isinstance(f, Mapping) else getattr(f, "topic", "")
        message = f.get("message") if isinstance(f, Mapping) else getattr(f, "message", "")
        parts.append(f"{getattr(topic, 'value', topic)}: {message}")
    return "; ".join(parts)


def _si_inputs(case: BatchCase | None, p_atm_pa: float) -> dict[str, float | None]:
    if case is None:
        return {c.key: None for c in _quantity_columns()}
    lim = case.limits
    return {"inlet_pressure": case.p_in_pa, "inlet_temperature": case.t_in_k, "outlet_pressure": case.p_out_pa,
            "min_inlet_temperature": case.t_in_min_k, "max_inlet_pressure": case.p_in_max_pa, "mdmt": lim.mdmt_k,
            "cold_limit": lim.user_limit_k, "margin": lim.margin_k, "atmospheric_pressure": p_atm_pa}


def _row_values(result: BatchRowResult, case: BatchCase | None, source: CaseSource | None,
                units: Mapping[str, str], models: Sequence[str]) -> list[Any]:
    t_unit = units["inlet_temperature"]
    d_unit = _difference_unit(t_unit)
    p_atm = source.p_atm_pa if source is not None else P_ATM_DEFAULT_PA
    words = TextUnits.typed(dict(units), p_atm)    # findings and messages in the file's units
    si = _si_inputs(case, p_atm)
    if source is not None:
        fluid, eos = source.fluid_name, source.eos
    elif case is not None:
        fluid = ",".join(f"{i}={float(z):.6g}" for i, z in zip(case.fluid.ids, case.fluid.zs, strict=True))
        eos = case.fluid.eos.value
    else:
        fluid = eos = ""
    values: list[Any] = [result.row, result.tag, case.service if case else "", case.kind if case else "", fluid, eos]
    for c in COLUMNS:
        if c.has_unit and c.key not in KIND_COLUMNS:
            u = units[c.key]
            if c.quantity == TEMPERATURE:
                values.append(_temperature(si[c.key], u))
            elif c.key == "margin":
                values.append(_difference(si[c.key], u))
            else:
                values.append(_pressure(si[c.key], u, 0.0 if c.key == "atmospheric_pressure" else p_atm))
        elif c.key == "water_saturated":
            values.append("" if case is None else ("yes" if case.water_saturated else "no"))
            values.append(water_basis_text(case, t_unit))
    values += [si[c.key] for c in _quantity_columns()]
    governing = case.limits.governing_k if case is not None else None
    by_model = result.t_out_by_model or {}
    basis = case.limits.basis if case is not None and governing is not None else ""
    values += [_temperature(governing, t_unit), basis, result.coldest_condition]
    values += [_temperature(by_model.get(m), t_unit) for m in models]
    values += [_temperature(result.t_screen_k, t_unit), result.t_screen_k, result.governing_model, result.phase,
               result.vapor_fraction, _difference(result.margin_to_limit_k, d_unit), str(result.outcome),
               words.text(_findings_text(result.findings)), result.path, words.text(result.message or "")]
    return [None if isinstance(v, float) and not math.isfinite(v) else v for v in values]


def _table(screening: BatchScreening, cases: Sequence[BatchCase], sources: Mapping[int, CaseSource],
           units: Mapping[str, str]) -> tuple[list[_Out], list[list[Any]]]:
    models = _models(screening.rows)
    headers = _headers(units, models)
    by_row = {c.row: c for c in cases}
    if len(by_row) == len(cases):
        lookup = [by_row.get(r.row) for r in screening.rows]
    else:                            # row numbers not unique: match by position
        lookup = [cases[i] if i < len(cases) else None for i in range(len(screening.rows))]
    rows = [_row_values(r, c, sources.get(r.row), units, models) for r, c in zip(screening.rows, lookup, strict=True)]
    return headers, rows


def summary_counts(screening: BatchScreening) -> dict[str, int]:
    """Cases per outcome (every outcome a key), counted from the rows."""
    counts = {o: 0 for o in OUTCOMES}
    for r in screening.rows:
        counts[str(r.outcome)] = counts.get(str(r.outcome), 0) + 1
    return counts


# ---------------------------------------------------------------------------------------------
# writing
# ---------------------------------------------------------------------------------------------

def write_results(screening: BatchScreening, cases: ReadResult | Sequence[BatchCase],
                  path_or_format: str | os.PathLike[str] = "xlsx", *, units: Mapping[str, str] | None = None,
                  sources: Mapping[int, CaseSource] | None = None, filename: str = "") -> bytes | None:
    """Write the results, one row per case, in the order of ``screening.rows``.

    Parameters
    ----------
    screening : BatchScreening
    cases : ReadResult or sequence of BatchCase
        The cases screened; a :class:`~jtcheck.batch.reader.ReadResult` also gives the display units,
        the fluid names as the file gave them and the rows' atmospheric pressures.  Results are matched
        to cases by row number.
    path_or_format : path or ``"csv"`` / ``"xlsx"``
        A file ending ``.csv`` or ``.xlsx`` is written (and None returned); a format returns the bytes.
    units, sources : optional
        Display units (column key -> unit) and case sources when ``cases`` is a plain sequence
        (without them: bara, degC and K; the fluid as a composition).
    filename : str
        The input file's name, for the summary sheet (taken from a ReadResult by default).

    Returns
    -------
    bytes or None
    """
    bad_rows = 0
    if isinstance(cases, ReadResult):
        units = units if units is not None else cases.units
        sources = sources if sources is not None else cases.sources
        filename = filename or cases.filename
        bad_rows = len(cases.bad_rows)
        case_list: Sequence[BatchCase] = cases.cases
    else:
        case_list = list(cases)
    target = os.fspath(path_or_format)
    fmt = target.lower() if target.lower() in ("csv", "xlsx") else Path(target).suffix.lower().lstrip(".")
    if fmt not in ("csv", "xlsx"):
        raise ValueError(f"{target!r}: write results to a .csv or .xlsx file (or give the format 'csv' or 'xlsx')")
    headers, rows = _table(screening, case_list, sources or {}, _units_for(units))
    if fmt == "csv":
        data = _csv_bytes(headers, rows)
    else:
        data = _xlsx_bytes(headers, rows, screening, filename, bad_rows)
    if target.lower() in ("csv", "xlsx"):
        return data
    Path(target).write_bytes(data)
    return None


def _rounded(value: float, kind: str) -> float:
    """A number as its column keeps it: inputs to their 6 significant digits (shown back as entered: 1.01325 bar),
    results in display units and fractions to :data:`_DECIMALS`, SI values to 12 significant digits (no float
    noise such as 244.14999999999998 for 244.15 K; far below any input's precision)."""
    if kind in _DECIMALS:
        return round(value, _DECIMALS[kind])
    return round_significant(value, _SIGNIFICANT.get(kind, 12))


def _csv_cell(value: Any, kind: str) -> Any:
    if value is None:
        return ""
    if isinstance(value, float):
        text = repr(_rounded(value, kind))
        text = text[:-2] if text.endswith(".0") else text
        return "0" if text == "-0" else text
    if isinstance(value, str):
        return formula_safe(value)     # never let a spreadsheet take a text cell (or a piece of it) for a formula
    return value


def _csv_bytes(headers: Sequence[_Out], rows: Sequence[Sequence[Any]]) -> bytes:
    out = io.StringIO(newline="")
    w = csv.writer(out, lineterminator="\r\n")
    w.writerow([h.header for h in headers])
    for row in rows:
        w.writerow([_csv_cell(v, h.kind) for v, h in zip(row, headers, strict=True)])
    return out.getvalue().encode("utf-8-sig")


#: Decimals kept in the columns of results for people (display units: 0.01 K, 0.01 bar; vapour fraction).
_DECIMALS = {"display": 2, "fraction": 4}
#: Significant digits kept of the inputs shown back (as entered) and of the SI columns.
_SIGNIFICANT = {"input": 6, "si": 12}
_WIDTHS = {"long": 60, "outcome": 15}


def _width(header: _Out, rows: Sequence[Sequence[Any]], i: int) -> float:
    if header.kind in _WIDTHS:
        return _WIDTHS[header.kind]
    longest = len(header.header)
    for row in rows[:500]:
        v = row[i]
        n = len(f"{v:.2f}") if isinstance(v, float) else len(str(v)) if v is not None else 0
        longest = max(longest, n)
    return min(max(8, longest + 2), 45)


def _xlsx_bytes(headers: Sequence[_Out], rows: Sequence[Sequence[Any]], screening: BatchScreening, filename: str,
                bad_rows: int) -> bytes:
    from openpyxl import Workbook
    from openpyxl.cell import WriteOnlyCell
    from openpyxl.formatting.rule import CellIsRule
    from openpyxl.styles import Alignment, Font, PatternFill
    from openpyxl.utils import get_column_letter

    wb = Workbook(write_only=True)
    ws = wb.create_sheet("results")
    for i, h in enumerate(headers):
        ws.column_dimensions[get_column_letter(i + 1)].width = _width(h, rows, i)
    ws.freeze_panes = "C2"           # header row and the row / tag columns stay in view
    bold = Font(bold=True)
    head = []
    for h in headers:
        cell = WriteOnlyCell(ws, value=h.header)
        cell.font = bold
        cell.alignment = Alignment(wrap_text=True, vertical="top")
        head.append(cell)
    ws.append(head)
    kinds = [h.kind for h in headers]
    for row in rows:
        out = []
        for v, kind in zip(row, kinds, strict=True):
            if isinstance(v, str) and v.startswith(FORMULA_START):
                cell = WriteOnlyCell(ws, value=v)
                cell.data_type = "s"           # text that looks like a formula stays text
                out.append(cell)
            elif isinstance(v, float) and math.isfinite(v):
                out.append(_rounded(v, kind))
            else:
                out.append(v)
        ws.append(out)
    # the outcome's colour, a second cue after the words: one conditional format per outcome (no per-cell styles,
    # which cost more than the values on long lists; the colours follow sorting and editing)
    if "outcome" in kinds and rows:
        col = get_column_letter(kinds.index("outcome") + 1)
        for outcome, colour in OUTCOME_FILLS.items():
            fill = PatternFill("solid", start_color=colour, end_color=colour)
            ws.conditional_formatting.add(f"{col}2:{col}{len(rows) + 1}",
                                          CellIsRule(operator="equal", formula=[f'"{outcome}"'], fill=fill))
    ws.auto_filter.ref = f"A1:{get_column_letter(len(headers))}{len(rows) + 1}"

    summary = wb.create_sheet("summary")
    summary.column_dimensions["A"].width = 38
    summary.column_dimensions["B"].width = 16
    title = WriteOnlyCell(summary, value="jtcheck batch screening")
    title.font = Font(bold=True, size=13)
    summary.append([title])
    if filename:
        summary.append(["file", filename])
    summary.append(["cases screened", len(screening.rows)])
    for outcome, n in summary_counts(screening).items():
        summary.append([outcome, n])
    if bad_rows:
        summary.append(["bad rows (not read, not screened)", bad_rows])
    summary.append(["screened one by one (full screening)", screening.n_scalar])
    summary.append(["time [s]", round(screening.seconds, 2)])
    summary.append(["jtcheck version", __version__])
    for note in screening.notes:
        summary.append(["note", note])
    summary.append([])
    label = WriteOnlyCell(summary, value="caution")
    label.font = bold
    summary.append([label, CAUTION])
    out = io.BytesIO()
    wb.save(out)
    return out.getvalue()
