"""``jtcheck letdown`` speaks the user's units everywhere (issue 18 item 5): errors quote the value and the allowed
range in the unit typed, and findings, remedies and the reasoning of the generated cases quote temperatures,
differences and pressures in the units of the options, never kelvin or pascal for a degF/psig user.

The relations checked (outlet above inlet, minimum above normal) and the range of the register's fields are the
project's own rules; the numbers in the expected messages are the user's own inputs, shown back.
"""
from __future__ import annotations

import json
import re

import pytest
from click.testing import CliRunner

from jtcheck.cli import main
from jtcheck.marks import OPEN

GAS = "methane=0.85,ethane=0.07,propane=0.03,n-butane=0.01,nitrogen=0.02,CO2=0.02"


def _run(*opts: str):
    return CliRunner().invoke(main, ["letdown", "--fluid", GAS, *opts])


@pytest.mark.parametrize("opts, message", [
    (("--p-in", "100 bara", "--t-in", "40 degC", "--p-out", "120 bara"),
     "error: p_out: outlet pressure 120 bara is above the inlet pressure 100 bara; allowed: p_out <= p_in"),
    (("--p-in", "1000 psig", "--t-in", "40 degF", "--p-out", "1200 psig"),
     "error: p_out: outlet pressure 1200 psig is above the inlet pressure 1000 psig"),
    (("--p-in", "100 barg", "--t-in", "40 degF", "--p-out", "10 barg", "--t-in-min", "50 degF"),
     "error: t_in_min: minimum credible inlet temperature 50 degF is above the normal inlet temperature 40 degF"),
    (("--p-in", "20000 bara", "--t-in", "40 degC", "--p-out", "10 bara"),
     "error: p_in: inlet pressure 20000 bara is out of range; allowed: above 0 bara and at most 10000 bara"),
    (("--p-in", "100 barg", "--t-in", "4000 degF", "--p-out", "10 barg"),
     "error: t_in: inlet temperature 4000 degF is out of range; allowed: from -369.67 degF to 3140.33 degF"),
    (("--p-in", "100 barg", "--t-in", "40 degF", "--p-out", "10 barg", "--limit", "-2000 degF"),
     "error: limit: '-2000 degF' is below absolute zero; allowed: above -459.67 degF"),
])
def test_errors_quote_the_value_and_the_range_in_the_unit_typed(opts, message):
    # 50 K and 2000 K (the heat-capacity data's range) are -369.67 and 3140.33 degF; 1e9 Pa is 10000 bar
    res = _run(*opts)
    assert res.exit_code == 2
    assert message in res.output
    assert "e+" not in res.output and " Pa" not in res.output and OPEN not in res.output


@pytest.fixture(scope="module")
def degf_case():
    res = _run("--p-in", "1400 psig", "--t-in", "50 degF", "--p-out", "150 psig", "--t-in-min", "35 degF",
               "--p-in-max", "1500 psig", "--limit", "-20 degF", "--margin", "9 degF", "--mass-flow", "5",
               "--heater-off-t", "20 degF", "--water-saturated")
    assert res.exit_code in (0, 3, 4, 5), res.output
    return res.output


def test_a_degf_psig_case_shows_no_kelvin_pascal_or_bar_in_its_sentences(degf_case):
    text = degf_case
    assert OPEN not in text
    assert not re.search(r"-?\d+(\.\d+)? K\b", text), re.findall(r".{40}-?\d+(?:\.\d+)? K\b.{10}", text)
    assert "bar abs" not in text and "bara" not in text and " Pa" not in text
    assert " degC" not in text


def test_differences_read_as_differences_in_a_degf_case(degf_case):
    assert "delta degF" in degf_case
    assert not re.search(r"margin [-0-9.]+ degF", degf_case)   # a margin is a difference, never a reading


def test_generated_cases_reason_in_the_users_units(degf_case):
    block = degf_case.split("credible cases generated from the operating data")[1]
    start_up = next(line for line in block.splitlines() if line.strip().startswith("start-up into depressured outlet:"))
    assert "(0 psig" in start_up and "1400 psig" in start_up and "50.0 degF" in start_up
    heater = next(line for line in block.splitlines() if line.strip().startswith("loss of upstream heater:"))
    assert "20.0 degF" in heater and "psig" in heater


def test_the_json_output_renders_every_sentence_in_the_users_units():
    res = _run("--p-in", "1400 psig", "--t-in", "50 degF", "--p-out", "150 psig", "--limit", "-20 degF",
               "--json")
    body = json.loads(res.output)
    text = json.dumps(body["screening"], ensure_ascii=False)
    assert OPEN not in text
    generated = body["screening"]["answers"]["generated_cases"]
    assert any("psig" in (g.get("reasoning") or "") for g in generated)
    assert "degF" in body["screening"]["findings"][0]["message"]
