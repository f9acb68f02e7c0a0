"""Reading a letdown list: every bad cell reported by row and column, units, fluids, keep-going and bad rows."""
from __future__ import annotations

import csv
import io

import openpyxl
import pytest

from jtcheck.batch import reader as reader_mod
from jtcheck.batch.layout import COLUMNS, MAX_BYTES, MAX_ROWS, PROBLEMS_HEADER, layout_markdown
from jtcheck.batch.reader import RowError, RowWarning, bad_rows_file, read_cases
from jtcheck.errors import InputError
from jtcheck.thermo.fluid import Fluid

P_ATM = 101325.0
#: 1 psi in Pa, exactly: 0.45359237 kg x 9.80665 m/s2 / (0.0254 m)^2 (avoirdupois pound-force per square inch).
PSI_PA = 0.45359237 * 9.80665 / 0.0254**2
GAS = "methane=0.9,ethane=0.1"

HEADER = ["tag", "service", "kind", "fluid", "eos", "inlet pressure [barg]", "inlet temperature [degC]",
          "outlet pressure [barg]", "MDMT [degC]", "margin [K]"]
#: (file row, cells); row 1 is the header, row 11 is left empty on purpose (skipped, numbering kept).
MIXED = [
    (2, ["PCV-1", "good", "control_valve", GAS, "PR", 72, 9, 19, -29, 5]),
    (3, ["PCV-2", "bad units", "", GAS, "", "72 furlongs", 9, 19, -29, 5]),
    (4, ["PCV-3", "unknown component", "", "methane=0.9,unobtainium=0.1", "", 72, 9, 19, -29, 5]),
    (5, ["PCV-4", "outlet above inlet", "", GAS, "", 20, 9, 30, -29, 5]),
    (6, ["", "empty required cells", "", "", "", 72, "", 19, -29, 5]),
    (7, ["PCV-6", "own unit in the cell", "choke", GAS, "", "1044 psig", 9, 19, -29, 5]),
    (8, ["PCV-7", "misspelt component", "", "metane=0.9,ethane=0.1", "", 72, 9, 19, -29, 5]),
    (9, ["PCV-8", "SRK", "relief valve", GAS, "srk", 72, 9, 19, -29, 5]),
    (10, ["PCV-9", "not a number", "", GAS, "", 72, "warm", 19, -29, 5]),
    (12, ["PCV-10", "same gas written otherwise", "", "ethane=10, methane=90", "PR", 72, "9 degC", 19, -29, 5]),
]
#: (row, column header, words in the reason) of every problem in MIXED, in file order.
EXPECTED_ERRORS = [
    (3, "inlet pressure [barg]", "unknown pressure unit 'furlongs'"),
    (4, "fluid", "unknown component 'unobtainium'"),
    (5, "outlet pressure [barg]", "the outlet pressure 30 barg is above the inlet pressure 20 barg"),
    (6, "tag", "empty"),
    (6, "fluid", "empty"),
    (6, "inlet temperature [degC]", "empty"),
    (8, "fluid", "did you mean 'methane'"),
    (10, "inlet temperature [degC]", "'warm' is not a number"),
]
GOOD_TAGS = ["PCV-1", "PCV-6", "PCV-8", "PCV-10"]


def csv_bytes(header, rows, delimiter=",", bom=False) -> bytes:
    """A CSV as a spreadsheet saves it: rows placed at their row numbers (gaps left empty)."""
    out = io.StringIO(newline="")
    w = csv.writer(out, delimiter=delimiter, lineterminator="\r\n")
    w.writerow(header)
    line = 2
    for row, cells in rows:
        while line < row:
            w.writerow([])
            line += 1
        w.writerow(["" if c is None else c for c in cells])
        line += 1
    return out.getvalue().encode("utf-8-sig" if bom else "utf-8")


def xlsx_bytes(header, rows) -> bytes:
    """An XLSX with numbers as numbers and the rows at their row numbers."""
    wb = openpyxl.Workbook()
    ws = wb.active
    for j, h in enumerate(header, start=1):
        ws.cell(row=1, column=j, value=h)
    for row, cells in rows:
        for j, value in enumerate(cells, start=1):
            if value not in ("", None):
                ws.cell(row=row, column=j, value=value)
    out = io.BytesIO()
    wb.save(out)
    return out.getvalue()


def mixed(fmt: str) -> tuple[bytes, str]:
    if fmt == "csv":
        return csv_bytes(HEADER, MIXED), "mixed.csv"
    return xlsx_bytes(HEADER, MIXED), "mixed.xlsx"


def good_row(**cells) -> list:
    base = {"tag": "PCV-1", "service": "", "kind": "", "fluid": GAS, "eos": "", "inlet pressure [barg]": 72,
            "inlet temperature [degC]": 9, "outlet pressure [barg]": 19, "MDMT [degC]": -29, "margin [K]": 5}
    base.update(cells)
    return list(base.values())


# ---------------------------------------------------------------------------------------------
# the mixed file
# ---------------------------------------------------------------------------------------------

@pytest.mark.parametrize("fmt", ["csv", "xlsx"])
def test_every_problem_is_reported_with_its_row_column_and_reason_and_nothing_is_imported(fmt):
    data, name = mixed(fmt)
    result = read_cases(data, filename=name)
    assert result.cases == [] and not result.ok
    got = [(e.row, e.column) for e in result.errors]
    assert got == [(row, column) for row, column, _ in EXPECTED_ERRORS]
    for err, (_, _, words) in zip(result.errors, EXPECTED_ERRORS, strict=True):
        assert isinstance(err, RowError)
        assert words in err.reason, (err, words)
    assert result.errors[0].value == "72 furlongs"
    assert str(result.errors[0]).startswith("row 3, column 'inlet pressure [barg]': unknown pressure unit")
    assert result.n_rows == len(MIXED)
    assert [b.row for b in result.bad_rows] == [3, 4, 5, 6, 8, 10]


@pytest.mark.parametrize("fmt", ["csv", "xlsx"])
def test_keep_going_returns_the_good_rows_in_si_and_shares_fluids(fmt):
    data, name = mixed(fmt)
    result = read_cases(data, filename=name, keep_going=True)
    assert [c.tag for c in result.cases] == GOOD_TAGS
    assert [c.row for c in result.cases] == [2, 7, 9, 12]          # spreadsheet rows: header = row 1
    one, own_unit, srk, reordered = result.cases
    assert one.p_in_pa == pytest.approx(72e5 + P_ATM, rel=1e-12)
    assert one.t_in_k == pytest.approx(282.15, rel=1e-12)
    assert one.p_out_pa == pytest.approx(19e5 + P_ATM, rel=1e-12)
    assert one.limits.mdmt_k == pytest.approx(244.15) and one.limits.margin_k == 5.0
    assert own_unit.p_in_pa == pytest.approx(1044 * PSI_PA + P_ATM, rel=1e-12)   # the cell's psig beat the barg
    assert own_unit.kind == "choke" and srk.kind == "relief_valve" and one.kind == "control_valve"
    # one Fluid object per distinct fluid and EOS (the same gas written otherwise, in percent, shares it)
    assert one.fluid is own_unit.fluid is reordered.fluid
    assert srk.fluid is not one.fluid and srk.fluid.eos.value == "SRK" and one.fluid.eos.value == "PR"
    assert result.sources[9].eos == "SRK" and result.sources[2].fluid_name == GAS
    assert result.units["inlet_pressure"] == "barg" and result.units["inlet_temperature"] == "degC"
    assert len(result.errors) == len(EXPECTED_ERRORS)


def test_bad_rows_file_round_trips():
    data, name = mixed("csv")
    result = read_cases(data, filename=name, keep_going=True)
    bad = bad_rows_file(result)
    assert bad.startswith(b"\xef\xbb\xbf")
    rows = list(csv.reader(io.StringIO(bad.decode("utf-8-sig"))))
    assert rows[0] == [*HEADER, PROBLEMS_HEADER]
    assert [r[0] for r in rows[1:]] == ["PCV-2", "PCV-3", "PCV-4", "", "PCV-7", "PCV-9"]
    assert rows[1][5] == "72 furlongs" and rows[1][-1].startswith("was row 3: column 'inlet pressure [barg]'")
    # read back as it is: the same problems, renumbered in the new file; the problems column is ignored
    again = read_cases(bad, filename="bad.csv")
    assert [e.reason for e in again.errors] == [e.reason for e in result.errors]
    assert [e.row for e in again.errors] == [2, 3, 4, 5, 5, 5, 6, 7]
    assert not again.warnings
    # fixed, it reads clean
    fixes = {"PCV-2": {5: "72"}, "PCV-3": {3: GAS}, "PCV-4": {7: "19"}, "": {0: "PCV-5", 3: GAS, 6: "9"},
             "PCV-7": {3: GAS}, "PCV-9": {6: "9"}}
    fixed = [rows[0]]
    for r in rows[1:]:
        cells = list(r)
        for j, v in fixes[r[0]].items():
            cells[j] = v
        fixed.append(cells)
    out = io.StringIO(newline="")
    csv.writer(out).writerows(fixed)
    clean = read_cases(out.getvalue().encode(), filename="fixed.csv")
    assert clean.ok and [c.tag for c in clean.cases] == ["PCV-2", "PCV-3", "PCV-4", "PCV-5", "PCV-7", "PCV-9"]


# ---------------------------------------------------------------------------------------------
# units
# ---------------------------------------------------------------------------------------------

def test_the_same_case_in_bara_degc_and_in_psig_degf_gives_the_same_si_values():
    """Conversions by pint through jtcheck.units; the expected values are worked here by hand:
    1 psi = 0.45359237 x 9.80665 / 0.0254^2 Pa exactly, T[K] = (T[degF] - 32) x 5/9 + 273.15, 1 degF = 5/9 K."""
    si_file = csv_bytes(
        ["tag", "fluid", "inlet pressure [bara]", "inlet temperature [degC]", "outlet pressure [bara]",
         "max inlet pressure [bara]", "min inlet temperature [degC]", "MDMT [degC]", "cold limit [degC]",
         "margin [K]"],
        [(2, ["A", GAS, 72, 9, 19, 85, 2, -29, -20, 5])])

    def psig(bara):
        return (bara * 1e5 - P_ATM) / PSI_PA

    def degf(c):
        return c * 9 / 5 + 32

    us_file = csv_bytes(
        ["tag", "fluid", "inlet pressure [psig]", "inlet temperature [degF]", "outlet pressure [psig]",
         "max inlet pressure [psig]", "min inlet temperature [degF]", "MDMT [degF]", "cold limit [degF]",
         "margin [degF]"],
        [(2, ["A", GAS, repr(psig(72)), repr(degf(9)), repr(psig(19)), repr(psig(85)), repr(degf(2)),
              repr(degf(-29)), repr(degf(-20)), 9])])
    a = read_cases(si_file, filename="si.csv").cases[0]
    b = read_cases(us_file, filename="us.csv").cases[0]
    assert a.p_in_pa == pytest.approx(72e5, rel=1e-12) and a.t_in_k == pytest.approx(282.15, rel=1e-12)
    for field in ("p_in_pa", "t_in_k", "p_out_pa", "p_in_max_pa", "t_in_min_k"):
        assert getattr(b, field) == pytest.approx(getattr(a, field), rel=1e-10), field
    for field in ("mdmt_k", "user_limit_k", "margin_k"):
        assert getattr(b.limits, field) == pytest.approx(getattr(a.limits, field), rel=1e-10), field
    assert b.limits.margin_k == pytest.approx(5.0)
    assert read_cases(us_file, filename="us.csv").units["inlet_pressure"] == "psig"


def test_headers_match_loosely_and_unknown_columns_are_warnings():
    data = csv_bytes(["  TAG ", "Fluid", "Inlet_Pressure   [BARA]", "inlet-temperature [K]", "OUTLET pressure [kPa]",
                      "mdmt [C]", "colour"],
                     [(2, ["A", GAS, 50, 300, 500, -46, "red"])])
    result = read_cases(data, filename="x.csv")
    assert result.ok, result.errors
    c = result.cases[0]
    assert (c.p_in_pa, c.t_in_k, c.p_out_pa) == pytest.approx((50e5, 300.0, 5e5))
    assert c.limits.mdmt_k == pytest.approx(227.15)
    assert [(w.row, w.column) for w in result.warnings] == [(1, "colour")]
    assert result.units["inlet_pressure"] == "bara" and result.units["mdmt"] == "degC"


def test_a_header_without_unit_needs_units_in_every_cell():
    data = csv_bytes(["tag", "fluid", "inlet pressure", "inlet temperature", "outlet pressure", "MDMT"],
                     [(2, ["A", GAS, "50 bara", "40 degC", "10 bara", "-29 degC"]),
                      (3, ["B", GAS, "50", "40 degC", "10 bara", "-29 degC"])])
    result = read_cases(data, filename="x.csv")
    assert [(e.row, e.column) for e in result.errors] == [(3, "inlet pressure")]
    assert "has no unit" in result.errors[0].reason
    assert result.units["inlet_pressure"] == "bara"     # taken from the cells


def test_semicolon_csv_with_bom_and_decimal_commas():
    data = csv_bytes(["tag", "fluid", "inlet pressure [barg]", "inlet temperature [degC]", "outlet pressure [barg]",
                      "MDMT [degC]", "atmospheric pressure [bar]"],
                     [(2, ["A", "methane=0,9;ethane=0,1".replace(",", "."), "72,5", "9,5 degC", 19, -29, "0,95"])],
                     delimiter=";", bom=True)
    result = read_cases(data, filename="x.csv")
    assert result.ok, result.errors
    c = result.cases[0]
    assert c.p_in_pa == pytest.approx(72.5e5 + 0.95e5) and c.t_in_k == pytest.approx(282.65)
    assert result.sources[2].p_atm_pa == pytest.approx(0.95e5)


def test_relations_between_cells_are_checked():
    header = ["tag", "kind", "fluid", "inlet pressure [barg]", "inlet temperature [degC]", "outlet pressure [barg]",
              "min inlet temperature [degC]", "max inlet pressure [barg]", "water saturated"]
    rows = [(2, ["A", "valve", GAS, 72, 9, 19, 12, 70, "maybe"])]
    result = read_cases(csv_bytes(header, rows), filename="x.csv")
    reasons = {e.column: e.reason for e in result.errors}
    assert set(reasons) == {"kind", "min inlet temperature [degC]", "max inlet pressure [barg]", "water saturated"}
    assert "above the inlet temperature 9 degC" in reasons["min inlet temperature [degC]"]
    assert "below the inlet pressure 72 barg" in reasons["max inlet pressure [barg]"]
    assert "'maybe' is not yes or no" in reasons["water saturated"]
    assert "not a kind of letdown" in reasons["kind"]


@pytest.mark.parametrize("column, value, words", [
    ("MDMT [degC]", "300", "temperature limit"),
    ("margin [K]", "150", "margin must lie between"),
    ("inlet temperature [degC]", "-300", "allowed: above -273.15 degC"),
    ("eos", "VDW", "allowed: PR, SRK"),
])
def test_out_of_range_cells(column, value, words):
    row = dict(zip(HEADER, good_row(), strict=True))
    row[column] = value
    result = read_cases(csv_bytes(HEADER, [(2, list(row.values()))]), filename="x.csv")
    assert [(e.row, e.column) for e in result.errors] == [(2, column)]
    assert words in result.errors[0].reason


def test_gauge_pressures_use_the_rows_atmosphere():
    header = ["tag", "fluid", "inlet pressure [barg]", "inlet temperature [degC]", "outlet pressure [psig]",
              "MDMT [degC]", "atmospheric pressure [kPa]"]
    result = read_cases(csv_bytes(header, [(2, ["A", GAS, 50, 20, 0, -29, 90]), (3, ["B", GAS, 50, 20, 0, -29, ""])]),
                        filename="x.csv")
    a, b = result.cases
    assert (a.p_in_pa, a.p_out_pa) == pytest.approx((50.9e5, 0.9e5))
    assert (b.p_in_pa, b.p_out_pa) == pytest.approx((50e5 + P_ATM, P_ATM))


# ---------------------------------------------------------------------------------------------
# warnings, defaults, fluid library
# ---------------------------------------------------------------------------------------------

def test_rows_without_a_limit_and_duplicate_tags_are_read_with_warnings():
    header = ["tag", "fluid", "inlet pressure [bara]", "inlet temperature [degC]", "outlet pressure [bara]",
              "MDMT [degC]"]
    result = read_cases(csv_bytes(header, [(2, ["A", GAS, 50, 20, 10, -29]), (3, ["B", GAS, 50, 20, 10, ""]),
                                           (4, ["a", GAS, 50, 20, 10, -29])]), filename="x.csv")
    assert result.ok and len(result.cases) == 3
    assert all(isinstance(w, RowWarning) for w in result.warnings)
    assert [(w.row, w.column) for w in result.warnings] == [(3, "MDMT [degC]"), (4, "tag")]
    assert "not screened" in result.warnings[0].reason and "also on row 2" in result.warnings[1].reason
    assert result.cases[1].limits.governing_k is None


def test_defaults_fill_empty_cells_and_a_rows_own_cells_win():
    header = ["tag", "fluid", "inlet pressure [bara]", "inlet temperature [degC]", "outlet pressure [bara]",
              "cold limit [degC]"]
    data = csv_bytes(header, [(2, ["A", GAS, 50, 20, 10, -10]), (3, ["B", GAS, 50, 20, 10, ""])])
    result = read_cases(data, filename="x.csv", defaults={"cold_limit": "-29 degC", "margin": "9 degF",
                                                          "mdmt": "-46 degC"})
    a, b = result.cases
    assert a.limits.user_limit_k == pytest.approx(263.15) and b.limits.user_limit_k == pytest.approx(244.15)
    assert a.limits.margin_k == pytest.approx(5.0) and a.limits.mdmt_k == pytest.approx(227.15)
    assert not result.warnings
    with pytest.raises(InputError) as exc:
        read_cases(data, filename="x.csv", defaults={"cold_limit": "cold"})
    assert exc.value.field == "cold_limit"


def test_fluid_names_resolve_against_the_library():
    gas = Fluid({"methane": 0.93, "ethane": 0.07}, eos="SRK")
    library = {"Fuel Gas": gas, "Export gas": Fluid(GAS)}
    header = ["tag", "fluid", "eos", "inlet pressure [bara]", "inlet temperature [degC]", "outlet pressure [bara]",
              "MDMT [degC]"]
    rows = [(2, ["A", "fuel  gas", "", 50, 20, 10, -29]), (3, ["B", "Fuel Gas", "PR", 50, 20, 10, -29]),
            (4, ["C", "FUEL GAS", "", 50, 20, 10, -29]), (5, ["D", "Fuel gaz", "", 50, 20, 10, -29]),
            (6, ["E", "methane", "", 50, 20, 10, -29])]
    result = read_cases(csv_bytes(header, rows), filename="x.csv", fluid_library=library, keep_going=True)
    a, b, c = result.cases
    assert a.fluid is gas and c.fluid is gas                      # the library's own EOS when the cell is empty
    assert b.fluid.eos.value == "PR" and b.fluid is not gas
    assert result.sources[2].fluid_name == "Fuel Gas" and result.sources[2].fluid_from_library
    reasons = {e.row: e.reason for e in result.errors}
    assert "unknown fluid 'Fuel gaz'" in reasons[5] and "'Fuel Gas'" in reasons[5]
    assert "'methane=1'" in reasons[6]
    none = read_cases(csv_bytes(header, rows[:1]), filename="x.csv")
    assert "no fluid library is available" in none.errors[0].reason


# ---------------------------------------------------------------------------------------------
# the header and the file
# ---------------------------------------------------------------------------------------------

def test_header_problems_are_row_1_errors_and_stop_the_rows():
    header = ["tag", "fluid", "inlet pressure [furlongs]", "inlet temperature [degC]", "tag"]
    result = read_cases(csv_bytes(header, [(2, ["A", GAS, 5, 20, "B"])]), filename="x.csv", keep_going=True)
    assert result.cases == []
    got = {(e.row, e.column): e.reason for e in result.errors}
    assert "unknown pressure unit 'furlongs'" in got[(1, "inlet pressure [furlongs]")]
    assert "appears twice" in got[(1, "tag")]
    assert "required column 'outlet pressure' is missing" in got[(1, "outlet pressure [unit]")]
    assert (1, "inlet pressure [unit]") not in got      # present, with a bad unit: reported once


def test_file_problems_raise_input_error_naming_the_file(monkeypatch):
    with pytest.raises(InputError) as exc:
        read_cases(b"", filename="x.csv")
    assert exc.value.field == "file"
    with pytest.raises(InputError, match="no case rows"):
        read_cases(csv_bytes(HEADER, []), filename="x.csv")
    with pytest.raises(InputError, match=r"\.xlsx or as CSV"):
        read_cases(b"whatever", filename="list.xls")
    with pytest.raises(InputError, match="not a readable XLSX"):
        read_cases(b"PK\x03\x04 not really a zip", filename="list.xlsx")
    monkeypatch.setattr(reader_mod, "MAX_ROWS", 3)
    with pytest.raises(InputError, match="more than 3 case rows") as exc:
        read_cases(csv_bytes(HEADER, [(k, good_row(tag=f"T{k}")) for k in range(2, 6)]), filename="x.csv")
    assert exc.value.field == "file"
    with pytest.raises(InputError, match="more than 3 case rows"):
        read_cases(xlsx_bytes(HEADER, [(k, good_row(tag=f"T{k}")) for k in range(2, 6)]), filename="x.xlsx")
    monkeypatch.setattr(reader_mod, "MAX_BYTES", 100)
    with pytest.raises(InputError, match="MB") as exc:
        read_cases(csv_bytes(HEADER, [(2, good_row())]), filename="x.csv")
    assert exc.value.field == "file"


def test_limits_are_200000_rows_and_50_mb():
    assert MAX_ROWS == 200_000 and MAX_BYTES == 50 * 1024 * 1024


def test_reading_from_a_path_and_without_a_filename(tmp_path):
    path = tmp_path / "list.xlsx"
    path.write_bytes(xlsx_bytes(HEADER, [(2, good_row())]))
    assert [c.tag for c in read_cases(path).cases] == ["PCV-1"]
    assert [c.tag for c in read_cases(path.read_bytes()).cases] == ["PCV-1"]          # sniffed as XLSX
    assert [c.tag for c in read_cases(csv_bytes(HEADER, [(2, good_row())])).cases] == ["PCV-1"]


def test_layout_markdown_lists_every_column():
    md = layout_markdown()
    for c in COLUMNS:
        assert f"`{c.generic_header}`" in md
    assert "`inlet pressure [unit]` | yes" in md and "`margin [K]` | no" in md


def test_a_csv_that_is_not_utf8_is_read_as_windows_1252_with_a_warning():
    text = "tag,fluid,inlet pressure [bara],inlet temperature [°C],outlet pressure [bara],MDMT [°C]\r\n" \
           f'A,"{GAS}",50,40,10,-29\r\n'
    result = read_cases(text.encode("cp1252"), filename="x.csv")
    assert result.ok and result.cases[0].t_in_k == pytest.approx(313.15)
    assert "Windows-1252" in result.warnings[0].reason and result.warnings[0].row == 1
    assert read_cases(text.encode("utf-8"), filename="x.csv").warnings == []


# -- the downstream material by its exemption curve (issue 17) ----------------------------------------------------
def test_rows_with_a_material_by_its_curve():
    from jtcheck.screening.mdmt import material_mdmt, stress_ratio

    header = ["tag", "fluid", "inlet pressure [barg]", "inlet temperature [degC]", "outlet pressure [barg]",
              "curve", "curve code", "thickness", "allowable stress", "outside diameter", "margin [K]"]
    rows = [(2, ["PCV-C1", GAS, 72, 9, 19, "B", "B31.3", "12.7 mm", "138 MPa", "219.1 mm", 5]),
            (3, ["PCV-C2", GAS, 72, 9, 19, "E", "", "12.7 mm", "", "", 5]),
            (4, ["PCV-C3", GAS, 72, 9, 19, "B", "", "200 mm", "", "", 5]),
            (5, ["PCV-C4", GAS, 72, 9, 19, "", "", "12.7 mm", "", "", 5])]
    result = read_cases(csv_bytes(header, rows), filename="list.csv", keep_going=True)
    (case,) = result.cases
    ratio = stress_ratio(19e5 + 101325.0, p_atm_pa=101325.0, allowable_stress_pa=138e6, outside_diameter_m=0.2191,
                         thickness_m=0.0127)
    assert case.limits.mdmt_k == material_mdmt("B", 0.0127, ratio, code="B31.3").mdmt_k
    assert case.limits.mdmt_working["working"]["code"] == "B31.3"
    problems = {(e.row, e.column): e.reason for e in result.errors}
    assert "unknown exemption curve" in problems[(3, "curve")]
    assert "impact testing is required" in problems[(4, "thickness")]
    assert "need the exemption curve" in problems[(5, "curve")]
