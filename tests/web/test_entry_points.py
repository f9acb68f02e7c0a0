"""One case, one answer: a demo case through the register, the JSON API, the CLI and the letdown list.

The four entry points take the invented Kestrel Ridge case PCV-1101 (MDMT from its typical material, credible
inlet extremes, a minimum outlet pressure that the operating sweep runs down to, a 5 K margin) and must find the
same coldest screened outlet and the same outcome.  The reference is the register's own result (this is a
consistency test: no outside value is involved).
"""
from __future__ import annotations

import json

import pytest
from click.testing import CliRunner

from jtcheck.batch.reader import read_cases
from jtcheck.batch.template import write_template
from jtcheck.cli import main
from jtcheck.cli.demo import demo_args
from jtcheck.records import service
from jtcheck.records.demo import load_demo
from jtcheck.records.models import Case, Role
from jtcheck.screening.batch import screen_batch
from jtcheck.web.database import db_session

TAG = "PCV-1101"


@pytest.fixture(scope="module")
def register_result(app, world):
    with app.app_context():
        s = db_session()
        load_demo(s)
        case = s.query(Case).filter(Case.tag == TAG).one()
        result = service.latest_results(s, [case.id])[case.id]
        return {"t_k": result.t_out_min_k, "outcome": result.outcome}


def _args():
    return next(a for title, a in demo_args() if f"/ {TAG}:" in title)


def test_the_register_screens_the_demo_case_against_its_material(register_result):
    assert register_result["outcome"] == "fail"     # -29 degC material, the sweep's cold corner below it
    assert register_result["t_k"] < 273.15 - 29.0


def test_the_cli_gives_the_registers_answer(register_result):
    a = _args()
    opts = ["letdown", "--json", "--fluid", a.fluid_text, "--p-in", a.p_in, "--t-in", a.t_in, "--p-out", a.p_out,
            "--p-in-max", a.p_in_max, "--t-in-min", a.t_in_min, "--p-out-min", a.p_out_min, "--mdmt", a.mdmt,
            "--margin", a.margin, "--mass-flow", a.mass_flow, "--p-atm", a.p_atm]
    res = CliRunner().invoke(main, opts)
    body = json.loads(res.output)
    assert body["screening"]["t_out_min_k"] == pytest.approx(register_result["t_k"], abs=0.01)
    assert body["screening"]["outcome"] == register_result["outcome"]


def test_the_demo_command_prints_the_registers_outcome(register_result):
    res = CliRunner().invoke(main, ["demo"])
    block = res.output.split(f"/ {TAG}:")[1].split("Kestrel Ridge")[0]
    assert "OUTCOME: FAIL" in block
    assert "not screened" not in block.split("findings")[0].lower()
    assert f"{register_result['t_k'] - 273.15:.2f} degC" in block


def test_the_api_gives_the_registers_answer(api, register_result):
    a = _args()
    resp = api(Role.ENGINEER, "POST", "/api/v1/letdown", json={
        "fluid": {"composition": a.fluid_text, "eos": a.eos, "kij": "table"}, "p_in": a.p_in, "t_in": a.t_in,
        "p_out": a.p_out, "p_in_max": a.p_in_max, "t_in_min": a.t_in_min, "p_out_min": a.p_out_min,
        "mdmt": a.mdmt, "margin": a.margin, "mass_flow": float(a.mass_flow), "p_atm": a.p_atm})
    assert resp.status_code == 200, resp.get_json()
    body = resp.get_json()
    assert body["screening"]["t_out_min_k"] == pytest.approx(register_result["t_k"], abs=0.01)
    assert body["outcome"] == register_result["outcome"]


def test_the_letdown_list_template_gives_the_registers_answer(register_result):
    read = read_cases(write_template("csv"), filename="template.csv")
    assert not read.errors, read.errors
    case = next(c for c in read.cases if c.tag == TAG)
    assert case.extras.get("outlet_pressure_min_pa") is not None    # the minimum outlet pressure is read
    row = screen_batch([case]).rows[0]
    assert row.t_screen_k == pytest.approx(register_result["t_k"], abs=0.01)
    assert row.outcome == register_result["outcome"]


def test_every_template_column_is_a_cli_input_or_said_not_to_be():
    from jtcheck.batch.layout import COLUMNS
    from jtcheck.cli.demo import ARG_OF_COLUMN, ITEMS_OF_COLUMN, NOT_INPUTS, row_args

    material = {"curve", "curve_code", "thickness", "impact_test_t", "pwht_credit", "allowable_stress",
                "outside_diameter", "corrosion_allowance", "joint_efficiency", "other_stress"}
    known = set(ARG_OF_COLUMN) | set(ITEMS_OF_COLUMN) | set(NOT_INPUTS) | material | {"water_saturated"}
    assert {c.key for c in COLUMNS} <= known, {c.key for c in COLUMNS} - known
    with pytest.raises(ValueError, match="no jtcheck letdown option"):
        from jtcheck.batch import layout
        extra = layout.Column("mystery", "mystery", layout.TEXT, False, "", "", "")
        orig = layout.COLUMNS
        layout.COLUMNS = (*orig, extra)
        try:
            row_args({**{c.header(): "" for c in orig}, "fluid": "methane=1", "inlet pressure [barg]": 10,
                      "inlet temperature [degC]": 10, "outlet pressure [barg]": 5, "mystery": "x"})
        finally:
            layout.COLUMNS = orig


@pytest.fixture(scope="module")
def register_all(app, world, register_result):
    with app.app_context():
        s = db_session()
        cases = s.query(Case).all()
        latest = service.latest_results(s, [c.id for c in cases])
        return {c.tag: (latest[c.id].t_out_min_k, latest[c.id].outcome) for c in cases}


@pytest.fixture(scope="module")
def batch_all():
    read = read_cases(write_template("csv"), filename="template.csv")
    assert not read.errors, read.errors
    rows = screen_batch(read.cases).rows
    return {r.tag: (r.t_screen_k, r.outcome) for r in rows}


DEMO_TAGS = ("PCV-1101", "PSV-2101", "PSV-4101", "PCV-5101", "BDV-5102", "PCV-3101")

#: The ``jtcheck letdown`` options (:class:`jtcheck.cli.letdown.LetdownArgs`) a letdown request of the JSON API takes
#: under the same name.
_SAME_NAME = ("p_in", "t_in", "p_out", "p_atm", "limit", "mdmt", "margin", "p_in_max", "t_in_min", "p_out_min",
              "inhibitor", "water_content", "water_dew_point", "heater_off_t", "ambient_t_min", "set_pressure",
              "overpressure", "superimposed_back_pressure", "built_up_back_pressure", "header_limit",
              "relieving_t_min")


def api_body(args) -> dict:
    """The JSON API's letdown request of a demo case's ``jtcheck letdown`` options."""
    body = {"fluid": {"composition": args.fluid_text, "eos": args.eos, "kij": args.kij}}
    body.update({k: getattr(args, k) for k in _SAME_NAME if getattr(args, k) is not None})
    body["water_saturated"] = args.water_saturated
    body["compare_models"] = args.compare_models
    if args.mass_flow is not None:
        body["mass_flow"] = float(args.mass_flow)
    for key, name in (("header_sections", "header_sections"), ("other_sources", "other_sources"),
                      ("settle_out_volumes", "settle_out_volumes"), ("cases_off", "credible_off")):
        if getattr(args, key):
            body[name] = list(getattr(args, key))
    body.update(dict(args.material))
    return body


@pytest.mark.parametrize("tag", DEMO_TAGS)
def test_every_demo_case_gives_the_registers_answer_from_the_api(tag, api, register_all):
    """The fourth entry point: POST /api/v1/letdown with the demo case's inputs (a relief valve with its set
    pressure, overpressure, back pressures and header limit) finds the register's outcome and coldest outlet."""
    t_reg, outcome_reg = register_all[tag]
    args = next(a for title, a in demo_args() if f"/ {tag}:" in title)
    resp = api(Role.ENGINEER, "POST", "/api/v1/letdown", json=api_body(args))
    assert resp.status_code == 200, resp.get_json()
    body = resp.get_json()
    assert (body["outcome"], body["screening"]["t_out_min_k"]) == (outcome_reg, pytest.approx(t_reg, abs=0.01))


@pytest.mark.parametrize("tag", DEMO_TAGS)
def test_every_demo_case_gives_the_registers_answer_from_the_cli_and_the_batch(tag, register_all, batch_all):
    from jtcheck.cli.letdown import build_fluid, parse_inputs, screen

    t_reg, outcome_reg = register_all[tag]
    args = next(a for title, a in demo_args() if f"/ {tag}:" in title)
    s = screen(args, parse_inputs(args), build_fluid(args))
    assert (s.outcome.value, s.t_out_min_k) == (outcome_reg, pytest.approx(t_reg, abs=0.01)), "CLI"
    t_batch, outcome_batch = batch_all[tag]
    assert (outcome_batch, t_batch) == (outcome_reg, pytest.approx(t_reg, abs=0.01)), "batch"


def test_every_register_input_of_a_letdown_is_a_list_column_or_said_to_have_none():
    """Nothing the register takes is dropped silently by the letdown list: a column, or listed (with what a row gets
    instead) in the layout notes."""
    from jtcheck.batch.layout import KIND_COLUMNS, LETDOWN_COLUMNS, NOT_IN_LIST, layout_markdown
    from jtcheck.cases.letdown import LETDOWN
    from jtcheck.cases.relief import RELIEF_VALVE

    keys = {f.key for kind in (LETDOWN, RELIEF_VALVE) for f in kind.fields}
    keys |= {k for kind in (LETDOWN, RELIEF_VALVE) for k in (*kind.flags, *kind.parameters)}
    covered = set(KIND_COLUMNS.values()) | set(LETDOWN_COLUMNS.values())
    missing = sorted(k for k in keys if k not in covered and k not in NOT_IN_LIST)
    assert missing == [], f"register inputs the letdown list drops silently: {missing}"
    notes = layout_markdown()
    assert all(f"`{k}`" in notes for k in NOT_IN_LIST)
