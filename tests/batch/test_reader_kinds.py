"""Letdown lists carry relief-valve and generated-case inputs; each row is read and screened by its case kind."""
from __future__ import annotations

import pytest

from jtcheck.batch.reader import read_cases
from jtcheck.cases import batch as cases_batch
from jtcheck.screening.batch import screen_batch

GAS = "methane=0.9,ethane=0.1"


def csv_bytes(header, rows) -> bytes:
    """A comma-delimited CSV of the header and the (row number, cells) rows, in row order."""
    import csv
    import io

    out = io.StringIO(newline="")
    w = csv.writer(out, lineterminator="\r\n")
    w.writerow(header)
    for _, cells in rows:
        w.writerow(["" if c is None else c for c in cells])
    return out.getvalue().encode("utf-8")

HEADER = ["tag", "kind", "fluid", "inlet pressure [barg]", "inlet temperature [degC]", "outlet pressure [barg]",
          "MDMT [degC]", "margin [K]", "set pressure [barg]", "overpressure [%]", "built-up back pressure [bar]",
          "header sections", "heater off temperature [degC]", "cases off"]


def row(tag, kind="relief_valve", sections="", heater="", off="", set_p=60, over=10, built=2):
    """An invented row: a lean gas relief valve (or a control valve with the letdown inputs only)."""
    return [tag, kind, GAS, 66, 5, 3, -29, 5, set_p, over, built, sections, heater, off]


def test_a_relief_row_is_screened_by_the_relief_kind_on_the_scalar_path():
    data = csv_bytes(HEADER, [(2, row("PSV-1", sections="main header; 1.5 barg; -46 degC | knock-out drum; "
                                                          "0.2 barg; -46 degC")),
                              (3, row("PCV-1", kind="control_valve", set_p="", over="", built=""))])
    read = read_cases(data, filename="kinds.csv")
    assert read.ok, read.errors
    psv, pcv = read.cases
    assert psv.extras["set_pressure_pa"] == pytest.approx(60e5 + 101325.0)
    assert psv.extras["overpressure_fraction"] == pytest.approx(0.10)
    assert psv.extras["built_up_back_pressure_pa"] == pytest.approx(2e5)
    assert [s["name"] for s in psv.extras["header_sections"]] == ["main header", "knock-out drum"]
    assert not psv.vectorised and pcv.vectorised and not pcv.extras
    direct = cases_batch.row_screening(psv, True)
    assert "relief_valve" in direct.answers
    res = screen_batch(read.cases)
    by_tag = {r.tag: r for r in res.rows}
    assert by_tag["PSV-1"].outcome == direct.outcome == "fail"   # the discharge is below -46 degC (invented)


@pytest.mark.parametrize(("cells", "column", "words"), [
    ({"sections": "knock-out drum; lots"}, "header sections", "header_sections[0].pressure"),
    ({"over": "ten"}, "overpressure [%]", "not a percentage"),
    ({"kind": "control_valve"}, "set pressure [barg]", "only for rows of kind relief_valve"),
    ({"over": ""}, "overpressure [%]", "allowable overpressure is required"),
    ({"off": "start_up:"}, "cases off", "cases_off.start_up")])
def test_a_bad_kind_input_is_reported_on_its_cell(cells, column, words):
    args = {"sections": "", "heater": "", "off": "", "over": 10, "kind": "relief_valve"} | cells
    data = csv_bytes(HEADER, [(2, row("PSV-2", kind=args["kind"], sections=args["sections"], heater=args["heater"],
                                      off=args["off"], over=args["over"]))])
    read = read_cases(data, filename="bad.csv")
    assert not read.ok
    problems = [(e.column, e.reason) for e in read.errors]
    assert any(c == column and words in r for c, r in problems), problems


def test_generated_case_inputs_send_a_letdown_row_to_its_kind():
    data = csv_bytes(HEADER, [(2, row("PCV-2", kind="control_valve", set_p="", over="", built="", heater=-5,
                                      off="start_up: the outlet is never depressured (invented)"))])
    read = read_cases(data, filename="gen.csv")
    assert read.ok, read.errors
    case = read.cases[0]
    assert not case.vectorised and case.extras["heater_upstream_temperature_k"] == pytest.approx(268.15)
    screening = cases_batch.row_screening(case, True)
    assert "loss of upstream heater" in [cs.condition.name for cs in screening.conditions]
