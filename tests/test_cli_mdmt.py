"""``jtcheck mdmt`` and the material options of ``jtcheck letdown`` (issue 17).

Check values: the curve B value at 1 in, 31 degF, and the 20 degF reduction at a ratio of 0.8 are from memory
(ASME BPVC VIII-1 Table UCS-66 / Fig. UCS-66.1), the same as tests/screening/test_mdmt.py.
"""
from __future__ import annotations

import json

from click.testing import CliRunner

from jtcheck.cli import main
from jtcheck.screening.mdmt import material_mdmt

FLUID = "methane=0.9, ethane=0.1"


def run(*args):
    return CliRunner().invoke(main, list(args), catch_exceptions=False)


def test_mdmt_prints_the_working():
    res = run("mdmt", "--curve", "B", "--thickness", "1 in", "--stress-ratio", "0.8")
    assert res.exit_code == 0
    assert "Curve B at governing thickness 25.40 mm" in res.output
    assert "MDMT -11.7 degC" in res.output      # 31 - 20 = 11 degF = -11.7 degC (from memory)
    assert "verify against the code edition in force" in res.output


def test_mdmt_json_and_bad_input_exit_2():
    res = run("mdmt", "--curve", "D", "--thickness", "25.4 mm", "--json")
    assert json.loads(res.output)["mdmt_k"] == material_mdmt("D", 0.0254).mdmt_k
    bad = run("mdmt", "--curve", "E", "--thickness", "1 in")
    assert bad.exit_code == 2 and "curve" in bad.output
    assert run("mdmt", "--curve", "B", "--thickness", "9 in").exit_code == 2


def test_letdown_with_the_material_by_its_curve():
    args = ["letdown", "--fluid", FLUID, "--p-in", "70 barg", "--t-in", "10 degC", "--p-out", "10 barg",
            "--single-model", "--margin", "5 K", "--curve", "B", "--thickness", "12.7 mm"]
    res = run(*args)
    assert res.exit_code in (0, 4, 5), res.output
    assert "MDMT from the material's exemption curve" in res.output
    # without stress inputs the ratio is 1: the curve value itself (-21.7 degC at 0.5 in: -7 degF, from memory)
    assert "stress ratio 1.000 (no stress inputs" in res.output
    data = json.loads(run(*args, "--json").output)
    assert data["screening"]["limits"]["mdmt_k"] == material_mdmt("B", 0.0127).mdmt_k
    bad = run(*args[:-2], "--thickness", "200 mm")
    assert bad.exit_code == 2 and "thickness" in bad.output
