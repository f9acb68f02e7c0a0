"""Writing batch results: CSV and XLSX readable back, one row per case, units of the file, summary and caution."""
from __future__ import annotations

import csv
import io

import openpyxl
import pytest

from jtcheck.batch.reader import read_cases
from jtcheck.batch.writer import summary_counts, write_results
from jtcheck.notices import CAUTION
from jtcheck.screening.batch import BatchRowResult, BatchScreening

GAS = "methane=0.9,ethane=0.1"
HEADER = ("tag,service,fluid,inlet pressure [psig],inlet temperature [degF],outlet pressure [psig],MDMT [degF],"
          "margin [degF]")
#: Four cases, one per outcome; row 5's service looks like a spreadsheet formula.
FILE = "\n".join([
    HEADER,
    f'PCV-1,warm,"{GAS}",1000,100,200,-20,9',
    f'PCV-2,eroded,"{GAS}",1000,100,200,-20,9',
    f'PCV-3,cold,"{GAS}",1000,100,200,-20,9',
    f'PCV-4,=1+1,"{GAS}",1000,100,200,,',
]).encode()
#: (outcome, screened outlet [K]); the limit is -20 degF = 244.261 K, the margin 9 degF = 5 K.
OUTCOMES = [("pass", 260.0), ("margin eroded", 247.0), ("fail", 230.0), ("not screened", None)]
LIMIT_K = (-20 - 32) * 5 / 9 + 273.15


def fake_screening(cases) -> BatchScreening:
    rows = []
    for case, (outcome, t) in zip(cases, OUTCOMES, strict=True):
        rows.append(BatchRowResult(
            row=case.row, tag=case.tag, outcome=outcome, t_screen_k=t,
            coldest_condition="normal" if t else "", governing_model="PR" if t else "",
            t_out_by_model={"PR": t, "SRK": None if t is None else t + 1.0}, phase="vapour" if t else "",
            vapor_fraction=1.0 if t else None, margin_to_limit_k=None if t is None else t - LIMIT_K,
            findings=({"topic": "cold metal", "severity": "hazard", "message": f"{outcome} here."},
                      {"topic": "hydrates", "severity": "information", "message": "Not screened for hydrates."}),
            path="batch" if t else "scalar", converged=t is not None, message=f"message {case.tag}"))
    counts = {o: 0 for o, _ in OUTCOMES}
    for r in rows:
        counts[r.outcome] += 1
    return BatchScreening(tuple(rows), counts, n_scalar=1, seconds=0.5, notes=("a note",))


@pytest.fixture(scope="module")
def read():
    result = read_cases(FILE, filename="letdowns.csv")
    assert result.ok, result.errors
    return result


def csv_table(data: bytes) -> list[dict[str, str]]:
    assert data.startswith(b"\xef\xbb\xbf")
    return list(csv.DictReader(io.StringIO(data.decode("utf-8-sig"))))


def test_csv_has_one_row_per_case_in_the_files_units_and_si(read):
    screening = fake_screening(read.cases)
    rows = csv_table(write_results(screening, read, "csv"))
    assert [r["tag"] for r in rows] == ["PCV-1", "PCV-2", "PCV-3", "PCV-4"]
    assert [r["outcome"] for r in rows] == ["pass", "margin eroded", "fail", "not screened"]
    assert [r["row"] for r in rows] == ["2", "3", "4", "5"]
    first = rows[0]
    assert first["fluid"] == GAS and first["eos"] == "PR" and first["kind"] == "control_valve"
    # inputs in the file's units and in SI
    assert float(first["inlet pressure [psig]"]) == pytest.approx(1000, rel=1e-6)
    assert float(first["SI inlet pressure [Pa]"]) == pytest.approx(1000 * 6894.757293168 + 101325, rel=1e-12)
    assert float(first["inlet temperature [degF]"]) == pytest.approx(100, rel=1e-6)
    assert float(first["MDMT [degF]"]) == pytest.approx(-20, rel=1e-6)
    assert float(first["margin [degF]"]) == pytest.approx(9, rel=1e-6)
    assert float(first["SI margin [K]"]) == pytest.approx(5.0)
    # results in the file's temperature unit (degF), differences in degF
    assert float(first["screened outlet [degF]"]) == pytest.approx((260.0 - 273.15) * 1.8 + 32, abs=1e-3)
    assert float(first["SI screened outlet [K]"]) == 260.0
    assert float(first["outlet SRK [degF]"]) == pytest.approx((261.0 - 273.15) * 1.8 + 32, abs=1e-3)
    assert float(first["margin to limit [degF]"]) == pytest.approx((260.0 - LIMIT_K) * 1.8, abs=1e-3)
    assert float(first["governing limit [degF]"]) == pytest.approx(-20, abs=1e-6)
    assert first["findings"] == "cold metal: pass here.; hydrates: Not screened for hydrates."
    assert first["path"] == "batch" and first["message"] == "message PCV-1" and first["phase"] == "vapour"
    last = rows[3]
    assert last["screened outlet [degF]"] == "" and last["MDMT [degF]"] == "" and last["vapour fraction"] == ""
    assert last["service"] == "'=1+1"          # text that a spreadsheet would take for a formula is defused


def test_xlsx_results_sheet_and_summary(read, tmp_path):
    screening = fake_screening(read.cases)
    path = tmp_path / "results.xlsx"
    assert write_results(screening, read, path) is None
    wb = openpyxl.load_workbook(path)
    assert wb.sheetnames == ["results", "summary"]
    ws = wb["results"]
    header = [c.value for c in ws[1]]
    assert all(c.font.b for c in ws[1])
    assert ws.freeze_panes == "C2"
    assert ws.auto_filter.ref == f"A1:{openpyxl.utils.get_column_letter(len(header))}5"
    assert ws.column_dimensions["C"].width > 8
    rows = [dict(zip(header, r, strict=True)) for r in ws.iter_rows(min_row=2, values_only=True)]
    assert len(rows) == 4
    assert [r["outcome"] for r in rows] == ["pass", "margin eroded", "fail", "not screened"]
    assert rows[0]["SI screened outlet [K]"] == 260.0                       # numbers as numbers
    assert rows[0]["inlet pressure [psig]"] == pytest.approx(1000, rel=1e-12)
    assert rows[3]["service"] == "=1+1"                                      # kept as text, not a formula
    assert ws.cell(row=5, column=header.index("service") + 1).data_type == "s"
    # colour as a second cue: a conditional format per outcome word on the outcome column
    col = openpyxl.utils.get_column_letter(header.index("outcome") + 1)
    rules = {r.formula[0]: r.dxf.fill.fgColor.rgb for cf in ws.conditional_formatting for r in cf.rules
             if str(cf.sqref) == f"{col}2:{col}5"}
    assert set(rules) == {'"pass"', '"margin eroded"', '"fail"', '"not screened"'}
    assert rules['"fail"'].endswith("FFC7CE")
    assert rows[0]["screened outlet [degF]"] == round((260.0 - 273.15) * 1.8 + 32, 4)
    summary = {r[0]: r[1] for r in wb["summary"].iter_rows(values_only=True) if r and r[0]}
    assert summary["cases screened"] == 4
    assert (summary["pass"], summary["margin eroded"], summary["fail"], summary["not screened"]) == (1, 1, 1, 1)
    assert summary["caution"] == CAUTION
    assert summary["file"] == "letdowns.csv" and summary["note"] == "a note"
    assert summary["screened one by one (full screening)"] == 1


def test_csv_and_xlsx_to_paths_and_bytes_agree(read, tmp_path):
    screening = fake_screening(read.cases)
    write_results(screening, read, tmp_path / "r.csv")
    assert (tmp_path / "r.csv").read_bytes() == write_results(screening, read, "csv")
    xlsx = write_results(screening, read, "xlsx")
    wb = openpyxl.load_workbook(io.BytesIO(xlsx), read_only=True)
    assert sum(1 for _ in wb["results"].iter_rows(values_only=True)) == 5
    wb.close()
    with pytest.raises(ValueError, match=r"\.csv or \.xlsx"):
        write_results(screening, read, tmp_path / "r.txt")


def test_plain_cases_without_a_read_result_use_si_friendly_defaults(read):
    screening = fake_screening(read.cases)
    rows = csv_table(write_results(screening, read.cases, "csv"))
    assert "inlet pressure [bara]" in rows[0] and "screened outlet [degC]" in rows[0]
    assert rows[0]["fluid"].startswith("methane=0.9")
    assert float(rows[0]["screened outlet [degC]"]) == pytest.approx(260.0 - 273.15)


def test_summary_counts_has_every_outcome(read):
    assert summary_counts(fake_screening(read.cases)) == {"pass": 1, "margin eroded": 1, "fail": 1,
                                                          "not screened": 1}


def test_results_say_which_way_the_limit_was_found():
    # a row whose MDMT comes from its material's exemption curve (issue 17), and a typed one
    data = "\n".join([HEADER + ",curve,thickness",
                      f'PCV-1,curve,"{GAS}",1000,100,200,,9,B,12.7 mm',
                      f'PCV-2,typed,"{GAS}",1000,100,200,-20,9,,',
                      f'PCV-3,curve,"{GAS}",1000,100,200,,9,B,12.7 mm',
                      f'PCV-4,none,"{GAS}",1000,100,200,,,,']).encode()
    read = read_cases(data, filename="letdowns.csv")
    assert read.ok, read.errors
    rows = csv_table(write_results(fake_screening(read.cases), read, "csv"))
    assert "exemption curve" in rows[0]["limit basis"] and "coincident outlet pressure" in rows[0]["limit basis"]
    assert rows[1]["limit basis"].startswith("MDMT")
    assert rows[3]["limit basis"] == ""


def test_numbers_are_written_as_entered_and_si_without_float_noise():
    """An entered 1.01325 bar comes back 1.01325 (not 1.0132); -29 degC in SI is 244.15 K (not 244.14999999999998);
    results in display units to 0.01."""
    text = "\n".join(["tag,fluid,inlet pressure [barg],inlet temperature [degC],outlet pressure [barg],MDMT [degC],"
                      "atmospheric pressure [bar]", f'PCV-9,"{GAS}",39.8143,40,10,-29,1.01325']).encode()
    result = read_cases(text, filename="x.csv")
    assert result.ok, result.errors
    case = result.cases[0]
    assert case.limits.mdmt_k != 244.15       # float noise in the SI value itself (-29 + 273.15)
    row = BatchRowResult(row=case.row, tag=case.tag, outcome="pass", t_screen_k=250.123456789,
                         coldest_condition="normal", governing_model="PR", t_out_by_model={"PR": 250.123456789},
                         phase="vapour",
                         vapor_fraction=0.590228, margin_to_limit_k=5.973456789, findings=(), path="batch",
                         converged=True)
    data = write_results(BatchScreening((row,), {"pass": 1}, n_scalar=0, seconds=0.1, notes=()), result.cases, "csv",
                         units=result.units, sources=result.sources)
    out = csv_table(data)[0]
    assert out["atmospheric pressure [bar]"] == "1.01325"
    assert out["inlet pressure [barg]"] == "39.8143"           # an input, shown back as entered
    assert out["SI MDMT [K]"] == "244.15"
    assert out["screened outlet [degC]"] == "-23.03"
    assert out["vapour fraction"] == "0.5902"
