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


SOURCES_HEADER = ["tag", "kind", "fluid", "inlet pressure [barg]", "inlet temperature [degC]",
                  "outlet pressure [barg]", "MDMT [degC]", "margin [K]", "mass flow [kg/s]", "set pressure [barg]",
                  "overpressure [%]", "built-up back pressure [bar]", "header limit [degC]", "header sections",
                  "other sources"]
#: An invented second relief valve discharging into the same header: propane-rich, 25 kg/s at 18 barg, 15 degC.
OTHER = "PSV-9; propane=0.95,n-butane=0.05; 25 kg/s; 18 barg; 15 degC"


def test_a_relief_row_takes_its_mass_flow_and_other_sources_as_the_register_does():
    """The list's mass flow and other sources reach the relief kind, whose screening mixes the sources before the
    header section: the row gives what the kind computes from the same values (the register's path)."""
    cells = ["PSV-3", "relief_valve", GAS, 66, 5, 3, -29, 5, 12, 60, 10, 2, -46, "main header; 1.5 barg; -46 degC"]
    data = csv_bytes(SOURCES_HEADER, [(2, [*cells, OTHER]), (3, [*cells[:8], 12, "", "", "", "", "", ""])])
    read = read_cases(data, filename="sources.csv")
    assert read.ok, read.errors
    psv, plain = read.cases
    assert psv.extras["mass_flow_kg_per_s"] == pytest.approx(12.0)
    assert psv.extras["other_sources"] == [{"name": "PSV-9", "composition": "propane=0.95,n-butane=0.05",
                                            "mass_flow_kg_per_s": 25.0, "p_pa": pytest.approx(18e5 + 101325.0),
                                            "t_k": pytest.approx(288.15)}]
    assert not psv.vectorised
    # a mass flow alone keeps a letdown row on the vectorised path
    assert plain.vectorised and plain.extras["mass_flow_kg_per_s"] == pytest.approx(12.0)
    direct = cases_batch.row_screening(psv, True)
    relief = direct.answers["relief_valve"]
    assert relief["other_sources"] == ["PSV-9"] and relief["mass_flow_kg_per_s"] == pytest.approx(12.0)
    mixed = relief["header"]
    assert [s["name"] for s in mixed["sources"]] == ["this relief valve", "PSV-9"]
    assert mixed["mass_flow_kg_per_s"] == pytest.approx(12.0 + 25.0)
    alone = cases_batch.row_screening(read_cases(csv_bytes(SOURCES_HEADER, [(2, [*cells, ""])]),
                                                 filename="alone.csv").cases[0], True)
    # mixing 25 kg/s of warmer LPG changes the header temperature: the sources are not ignored
    assert direct.t_out_min_k is not None and alone.t_out_min_k is not None
    alone_header = alone.answers["relief_valve"]["header"]
    assert alone_header["mass_flow_kg_per_s"] == pytest.approx(12.0)
    assert mixed["sections"][0]["t_k"] != pytest.approx(alone_header["sections"][0]["t_k"], abs=0.1)
    res = screen_batch(read.cases)
    assert res.rows[0].outcome == direct.outcome and res.rows[0].t_screen_k == pytest.approx(direct.t_out_min_k)


def test_a_mass_flow_that_is_not_one_is_reported_on_its_cell():
    cells = ["PCV-4", "control_valve", GAS, 66, 5, 3, -29, 5, "lots", "", "", "", "", "", ""]
    read = read_cases(csv_bytes(SOURCES_HEADER, [(2, cells)]), filename="bad.csv")
    assert [(e.column, "not a mass flow" in e.reason) for e in read.errors] == [("mass flow [kg/s]", True)]
    cells[8] = -3
    read = read_cases(csv_bytes(SOURCES_HEADER, [(2, cells)]), filename="bad.csv")
    assert read.errors and "must lie above 0" in read.errors[0].reason


def test_the_vectorised_start_up_conditions_are_the_scalar_ones():
    """A plain row screens its start-up into a depressured outlet on the vectorised path with the same conditions,
    temperatures and outcome as its kind's scalar screening (register, CLI, API)."""
    header = HEADER[:8] + ["min inlet temperature [degC]"]
    # six rows (the vectorised path takes groups of at least BATCH_MIN_ROWS rows of one fluid)
    rows = [(k + 2, [f"PCV-5{k}", "control_valve", "methane=0.97,ethane=0.03", 66 - k, 30, 3, -60, 5, 20])
            for k in range(6)]
    cases = read_cases(csv_bytes(header, rows), filename="start.csv").cases
    assert all(c.vectorised for c in cases)
    for case, row in zip(cases, screen_batch(cases).rows, strict=True):
        scalar = cases_batch.row_screening(case, True)
        assert row.path == "batch"
        assert row.coldest_condition == scalar.coldest_condition == ("start-up into depressured outlet "
                                                                      "(min inlet temperature)")
        assert row.t_screen_k == pytest.approx(scalar.t_out_min_k, abs=0.01) and row.outcome == scalar.outcome


def test_a_vessel_depressuring_row_is_refused_with_where_to_enter_it():
    data = csv_bytes(HEADER, [(2, row("BDV-1", kind="vessel depressuring", set_p="", over="", built=""))])
    read = read_cases(data, filename="bdv.csv")
    assert not read.ok
    assert any(e.column == "kind" and "enter each as a case in the register" in e.reason for e in read.errors), \
        [(e.column, e.reason) for e in read.errors]
