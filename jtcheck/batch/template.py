"""A letdown list to start from: the layout's header and the invented Kestrel Ridge demo cases.

The rows are the demo cases of the case register (:mod:`jtcheck.records.demo`): the site, the tags and
every number are invented.  Each fluid is written as an inline composition (so the template screens
without a case register), and the MDMT is that of the demo case's typical material.  Relief and
blowdown valves are screened like every row: an isenthalpic letdown from the inlet to the outlet pressure.
The demo's vessel depressuring case (a run in time) is not a row: letdown lists do not take that kind.
"""
from __future__ import annotations

import csv
import io
from typing import Any

from jtcheck import itemlists
from jtcheck.batch.layout import COLUMNS, KINDS, LAYOUT_HEADINGS, MAX_ROWS, layout_rows
from jtcheck.notices import CAUTION, DEMO_NOTICE

#: The header of the template: every column of the layout, with its template unit.
TEMPLATE_HEADER: tuple[str, ...] = tuple(c.header() for c in COLUMNS)


def _number(x: float) -> int | float:
    """A value as a person would type it: 72 rather than 72.0, no float noise."""
    r = round(float(x), 6)
    return int(r) if r == int(r) else r


def _composition_text(composition: dict[str, float]) -> str:
    return ",".join(f"{name}={_number(z)}" for name, z in composition.items())


def template_rows() -> list[dict[str, Any]]:
    """The invented Kestrel Ridge demo cases, one dict per row keyed by the template header.

    Numbers are numbers (pressures in barg, temperatures in degC, the margin in K); empty cells are ``""``.
    """
    from jtcheck.records.demo import CASES, FLUIDS, P_ATM
    from jtcheck.records.materials import SEED_MATERIALS

    t0 = 273.15
    compositions = {f["name"]: f["composition"] for f in FLUIDS}
    models = {f["name"]: f.get("eos", "PR") for f in FLUIDS}
    mdmt_k = {m["name"]: m["min_metal_temperature_k"] for m in SEED_MATERIALS}

    def barg(pa: float | None) -> Any:
        return "" if pa is None else _number((pa - P_ATM) / 1e5)

    def degc(k: float | None) -> Any:
        return "" if k is None else _number(k - t0)

    rows = []
    for _unit, fluid_name, material, f in CASES:
        if str(getattr(f["kind"], "value", f["kind"])) not in KINDS:
            continue        # the demo's vessel depressuring case is a run in time, not a row of a letdown list
        values = {
            "tag": f["tag"],
            "service": f"{f['service']} (invented; {fluid_name})",
            "kind": str(getattr(f["kind"], "value", f["kind"])),
            "fluid": _composition_text(compositions[fluid_name]),
            "eos": models[fluid_name],
            "inlet_pressure": barg(f["inlet_pressure_pa"]),
            "inlet_temperature": degc(f["inlet_temperature_k"]),
            "outlet_pressure": barg(f["outlet_pressure_pa"]),
            "min_inlet_temperature": degc(f.get("inlet_temperature_min_k")),
            "max_inlet_pressure": barg(f.get("inlet_pressure_max_pa")),
            "min_outlet_pressure": barg(f.get("outlet_pressure_min_pa")),
            "mdmt": degc(mdmt_k[material]),
            "cold_limit": "",
            "margin": _number(f.get("margin_k", 0.0)),
            "water_saturated": "yes" if f.get("water_saturated") else "no",
            # empty: saturated at the inlet (the conservative default) on rows screened for hydrates
            "water_content": "" if f.get("water_content_kg_per_sm3") is None
            else _number(1e6 * f["water_content_kg_per_sm3"]),
            "water_dew_point": degc(f.get("water_dew_point_k")),
            "atmospheric_pressure": _number(P_ATM / 1e5),
            # the relieving case of the demo's relief valves, as the register holds it
            "set_pressure": barg(f.get("set_pressure_pa")),
            "overpressure": "" if f.get("overpressure_fraction") is None else _number(100 * f["overpressure_fraction"]),
            "superimposed_back_pressure": barg(f.get("superimposed_back_pressure_pa")),
            "built_up_back_pressure": "" if f.get("built_up_back_pressure_pa") is None
            else _number(f["built_up_back_pressure_pa"] / 1e5),
            "header_limit": degc(f.get("header_limit_k")),
            "min_relieving_temperature": degc(f.get("relieving_temperature_min_k")),
            "mass_flow": "" if f.get("mass_flow_kg_per_s") is None else _number(f["mass_flow_kg_per_s"]),
            "other_sources": "", "header_sections": "", "heater_off_temperature": "", "min_ambient_temperature": "",
            "settle_out_volumes": "", "cases_off": itemlists.credible_off_text(f.get("credible_off")),
            # the material by its exemption curve: left empty in the demo rows (the MDMT cell is the typed limit)
            "curve": "", "curve_code": "", "thickness": "", "impact_test_t": "", "pwht_credit": "",
            "allowable_stress": "", "outside_diameter": "", "corrosion_allowance": "", "joint_efficiency": "",
            "other_stress": "",
        }
        rows.append({c.header(): values[c.key] for c in COLUMNS})
    return rows


def write_template(fmt: str) -> bytes:
    """The template as ``"csv"`` (UTF-8 with a byte-order mark, comma-delimited) or ``"xlsx"`` bytes.

    The XLSX has the rows on its first sheet (the one that is read) and the layout, the demo notice and
    the caution on a second sheet, "columns".
    """
    fmt = fmt.lower().lstrip(".")
    rows = template_rows()
    if fmt == "csv":
        out = io.StringIO(newline="")
        w = csv.writer(out, lineterminator="\r\n")
        w.writerow(TEMPLATE_HEADER)
        for row in rows:
            w.writerow([row[h] for h in TEMPLATE_HEADER])
        return out.getvalue().encode("utf-8-sig")
    if fmt == "xlsx":
        return _template_xlsx(rows)
    raise ValueError(f"format {fmt!r}: give 'csv' or 'xlsx'")


def _template_xlsx(rows: list[dict[str, Any]]) -> bytes:
    from openpyxl import Workbook
    from openpyxl.styles import Font
    from openpyxl.utils import get_column_letter

    wb = Workbook()
    ws = wb.active
    ws.title = "letdowns"
    ws.append(list(TEMPLATE_HEADER))
    for row in rows:
        ws.append([None if row[h] == "" else row[h] for h in TEMPLATE_HEADER])
    for cell in ws[1]:
        cell.font = Font(bold=True)
    for i, h in enumerate(TEMPLATE_HEADER, start=1):
        longest = max([len(h)] + [len(str(r[h])) for r in rows])
        ws.column_dimensions[get_column_letter(i)].width = min(max(10, longest + 2), 60)
    ws.freeze_panes = "B2"

    doc = wb.create_sheet("columns")
    doc.append(list(LAYOUT_HEADINGS))
    for cell in doc[1]:
        cell.font = Font(bold=True)
    for row in layout_rows():
        doc.append(list(row))
    doc.append([])
    for text in ("Row 1 of the first sheet holds the headers; every further row is one case. Rows are numbered "
                 "as the spreadsheet numbers them (the header is row 1).",
                 "A cell may carry its own unit ('1044 psig'), which overrides the header's.",
                 f"At most {MAX_ROWS:,} rows per file. Only the first sheet is read.",
                 DEMO_NOTICE, CAUTION):
        doc.append([text])
    for letter, width in zip("ABCDE", (28, 10, 40, 14, 100), strict=True):
        doc.column_dimensions[letter].width = width
    out = io.BytesIO()
    wb.save(out)
    return out.getvalue()
