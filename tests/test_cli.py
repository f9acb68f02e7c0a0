"""The command line: jtcheck letdown / components / demo."""
from __future__ import annotations

import json

import pytest
from click.testing import CliRunner

from jtcheck.cli import EXIT_INPUT, main

FLUID = "methane=0.85,ethane=0.07,propane=0.03,n-butane=0.01,nitrogen=0.02,CO2=0.02"


def run(*args):
    return CliRunner().invoke(main, list(args), catch_exceptions=False)


def test_letdown_prints_a_table_with_the_outlet_and_the_caution():
    res = run("letdown", "--fluid", FLUID, "--p-in", "100 bara", "--t-in", "40 degC", "--p-out", "10 barg")
    assert res.exit_code == 0, res.output
    assert "outlet" in res.output and "degC" in res.output
    assert "atmospheric pressure 1.01325 bar (default)" in res.output
    assert "licensed engineer" in res.output


def test_json_output_carries_si_values_and_display_units():
    res = run("letdown", "--fluid", FLUID, "--p-in", "100 bara", "--t-in", "40 degC", "--p-out", "10 barg",
              "--json")
    data = json.loads(res.output)
    assert data["result"]["p_out"] == pytest.approx(11.01325e5)
    assert data["result"]["converged"] is True
    assert data["display"]["t_out"]["unit"] == "degC"
    assert data["display"]["t_out"]["value"] == pytest.approx(data["result"]["t_out"] - 273.15)
    assert "licensed engineer" in data["caution"]


def test_gauge_pressures_use_the_stated_atmosphere():
    res = run("letdown", "--fluid", "methane=1", "--p-in", "50 barg", "--t-in", "20 degC", "--p-out", "0 barg",
              "--p-atm", "0.9 bar", "--json")
    data = json.loads(res.output)
    assert data["result"]["p_in"] == pytest.approx(50.9e5)
    assert data["result"]["p_out"] == pytest.approx(0.9e5)


def test_same_answer_in_us_units():
    si = json.loads(run("letdown", "--fluid", "methane=1", "--p-in", "68.947573 bara", "--t-in", "300 K",
                        "--p-out", "6.894757 bara", "--json").output)
    us = json.loads(run("letdown", "--fluid", "methane=1", "--p-in", "1000 psia", "--t-in", "80.33 degF",
                        "--p-out", "100 psia", "--json").output)
    assert us["result"]["t_out"] == pytest.approx(si["result"]["t_out"], abs=1e-3)
    assert us["display"]["t_out"]["unit"] == "degF"


@pytest.mark.parametrize("args, field", [
    (["--p-in", "100 bara", "--t-in", "40 degC", "--p-out", "200 bara"], "p_out"),
    (["--p-in", "100 furlongs", "--t-in", "40 degC", "--p-out", "10 bara"], "p_in"),
    (["--p-in", "100 bara", "--t-in", "40", "--p-out", "10 bara"], "t_in"),
    (["--p-in", "100 bara", "--t-in", "40 degC", "--p-out", "10 bara", "--eos", "XYZ"], "eos"),
])
def test_bad_input_exits_2_naming_the_field(args, field):
    res = CliRunner().invoke(main, ["letdown", "--fluid", FLUID, *args])
    assert res.exit_code == EXIT_INPUT
    assert f"error: {field}:" in res.output


def test_unknown_component_exits_2_with_suggestion():
    res = CliRunner().invoke(main, ["letdown", "--fluid", "methan=1", "--p-in", "10 bara", "--t-in", "300 K",
                                    "--p-out", "1 bara"])
    assert res.exit_code == EXIT_INPUT and "methane" in res.output


def test_components_lists_the_library():
    res = run("components", "butane")
    assert "n-butane" in res.output and "isobutane" in res.output


def test_demo_runs_the_invented_site():
    res = run("demo")
    assert res.exit_code == 0
    assert "Kestrel Ridge" in res.output and "invented" in res.output


@pytest.fixture()
def empty_register(tmp_path, monkeypatch):
    """An empty register: a SQLite file in tmp_path, or a throwaway database on the PostgreSQL server
    that DATABASE_URL names (the suite's PostgreSQL run)."""
    import os
    import uuid

    from sqlalchemy import create_engine, text
    from sqlalchemy.engine import make_url

    from jtcheck.records.db import normalise_database_url

    monkeypatch.setenv("JTCHECK_INSTANCE", str(tmp_path))
    url = os.environ.get("DATABASE_URL")
    if not url:
        yield
        return
    base = make_url(normalise_database_url(url))
    name = f"jtcheck_cli_test_{uuid.uuid4().hex[:8]}"
    admin = create_engine(base.set(database="postgres"), isolation_level="AUTOCOMMIT")
    with admin.connect() as conn:
        conn.execute(text(f'CREATE DATABASE "{name}"'))
    monkeypatch.setenv("DATABASE_URL", base.set(database=name).render_as_string(hide_password=False))
    try:
        yield
    finally:
        with admin.connect() as conn:
            conn.execute(text(f'DROP DATABASE IF EXISTS "{name}" WITH (FORCE)'))
        admin.dispose()


def test_user_add_and_token_work_on_the_register(empty_register, tmp_path):
    """`jtcheck user add EMAIL --role ROLE` reads the password from stdin; `jtcheck user token` prints a token
    that the register accepts."""
    runner = CliRunner()
    res = runner.invoke(main, ["user", "add", "ops@example.test", "--role", "engineer"], input="long-password-1\n")
    assert res.exit_code == EXIT_INPUT and "first account must be an admin" in res.output
    res = runner.invoke(main, ["user", "add", "boss@example.test", "--role", "admin"], input="short\n")
    assert res.exit_code == EXIT_INPUT and "password" in res.output
    res = runner.invoke(main, ["user", "add", "boss@example.test", "--role", "admin"], input="long-password-1\n")
    assert res.exit_code == 0, res.output
    res = runner.invoke(main, ["user", "add", "eng@example.test", "--role", "engineer"], input="long-password-2\n")
    assert res.exit_code == 0, res.output
    res = runner.invoke(main, ["user", "token", "eng@example.test"])
    token = res.output.strip()
    assert res.exit_code == 0 and token.startswith("jtc_")
    from jtcheck.records.db import database_url, make_engine, make_session_factory
    from jtcheck.records.tokens import user_for_token

    engine = make_engine(database_url(str(tmp_path)))
    session = make_session_factory(engine)()
    assert user_for_token(session, token).email == "eng@example.test"
    session.close()
    engine.dispose()
    res = runner.invoke(main, ["user", "token", "nobody@example.test"])
    assert res.exit_code == EXIT_INPUT and "email" in res.output
