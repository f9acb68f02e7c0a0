"""The command line: jtcheck depressure."""
from __future__ import annotations

import csv
import json

import pytest
from click.testing import CliRunner

from jtcheck.cli import EXIT_FAIL, EXIT_INPUT, EXIT_NOT_SCREENED, main

BASE = ["depressure", "--fluid", "methane=1", "--p0", "50 bara", "--t0", "20 degC", "--diameter", "1 m",
        "--length", "2 m", "--wall-thickness", "20 mm", "--orifice", "25 mm", "--back-pressure", "1.2 bara",
        "--end-time", "5 min", "--quiet"]


def run(*args):
    return CliRunner().invoke(main, list(args), catch_exceptions=False)


def test_prints_summary_table_and_caution_and_writes_the_series(tmp_path):
    path = tmp_path / "series.csv"
    res = run(*BASE, "--design-pressure", "60 barg", "--series", str(path))
    assert res.exit_code == 0, res.output
    assert "peak mass flow" in res.output and "coldest fluid" in res.output
    assert "target 7.913 bara" in res.output   # API 521 common basis: 690 kPa g (below 50 % of 60 bar g) + 1 atm
    assert "licensed engineer" in res.output
    with path.open() as fh:
        rows = list(csv.DictReader(fh))
    assert float(rows[0]["pressure_pa"]) == pytest.approx(50e5)
    assert float(rows[-1]["time_s"]) <= 300.0 + 1e-9 and len(rows) > 20


def test_json_and_exit_code_follow_the_screening():
    res = run(*BASE, "--json", "--mdmt", "20 degC")
    data = json.loads(res.output)
    assert data["converged"] is True
    assert data["outcome"] == "fail"       # the gas cools far below 20 degC
    assert res.exit_code == EXIT_FAIL
    assert len(data["time"]) == len(data["pressure"]) == len(data["t_wall_gas"])


@pytest.mark.parametrize("extra,field", [(["--orifice", "25 furlongs"], "orifice"),
                                          (["--back-pressure", "60 bara"], "back_pressure"),
                                          (["--cd", "x"], "cd")])
def test_bad_input_exits_2_naming_the_field(extra, field):
    res = CliRunner().invoke(main, BASE + extra)
    assert res.exit_code == EXIT_INPUT
    assert field in res.output


def test_a_run_past_its_time_budget_is_not_screened():
    # fail closed: past --max-seconds the run stops, not converged, not screened, with the reason
    res = run(*BASE, "--json", "--mdmt", "-100 degC", "--max-seconds", "1e-9")
    data = json.loads(res.output)
    assert data["converged"] is False
    assert data["outcome"] == "not screened"
    assert "time budget" in data["message"]
    assert res.exit_code == EXIT_NOT_SCREENED


def test_a_bad_time_budget_is_an_input_error():
    res = run(*BASE, "--max-seconds", "0")
    assert res.exit_code == EXIT_INPUT
    assert "max_seconds" in res.output


def test_the_two_zone_model_is_chosen_with_model():
    # a propane drum with liquid (invented numbers) on the two-zone model: converged, and it says which model ran
    res = run("depressure", "--fluid", "propane=1", "--p0", "9 bara", "--t0", "22.8 degC", "--diameter", "1.2 m",
              "--length", "3 m", "--wall-thickness", "15 mm", "--liquid-level", "0.5 m", "--orifice", "25 mm",
              "--back-pressure", "1.5 bara", "--end-time", "3 min", "--model", "two-zone", "--json", "--quiet")
    data = json.loads(res.output)
    assert data["converged"] is True, data["message"]
    assert data["inputs"]["model"] == "two-zone"
    assert data["basis"]["method"].startswith("two-zone")
