"""Formula injection: every text cell of a CSV the service writes is safe to open in a spreadsheet program.

The rule checked is the OWASP "CSV Injection" page's (owasp.org/www-community/attacks/CSV_Injection): a cell
that starts with ``=``, ``+``, ``-``, ``@``, tab or carriage return is prefixed with an apostrophe; it is applied
after every separator a spreadsheet in another locale could split the cell on (``;`` in semicolon locales).
"""
from __future__ import annotations

import csv
import io

import pytest

from jtcheck.batch.cells import formula_safe, unquote_cell
from jtcheck.batch.reader import bad_rows_file, read_cases

HOSTILE = ["=BADROW()", "+1+1", "-2+3", "@SUM(A1)", "\t=1", "\r=1", "x;=1+1", "x,=1+1", "x\t@A1", "a; =cmd|x",
           "ok;-1+1;+2"]


def _pieces(text: str) -> list[str]:
    """The cells a spreadsheet program could make of ``text``, splitting on any separator."""
    out = [""]
    for ch in text:
        if ch in ",;\t\r\n":
            out.append("")
        else:
            out[-1] += ch
    return out


def _formula(piece: str) -> bool:
    """True if a spreadsheet would evaluate ``piece`` (a plain number such as ``+2`` is only a number)."""
    body = piece.strip(' "')
    try:
        float(body)
        return False
    except ValueError:
        return body.startswith(("=", "+", "-", "@"))


@pytest.mark.parametrize("text", HOSTILE)
def test_no_piece_of_a_protected_cell_starts_a_formula(text):
    safe = formula_safe(text)
    assert safe != text
    for piece in _pieces(safe):
        assert not _formula(piece), (text, safe, piece)


@pytest.mark.parametrize("text", ["-40", "+1.5e3", "72 barg", "methane=0.9", "PCV-1", "", "a b"])
def test_numbers_and_plain_text_are_left_alone(text):
    assert formula_safe(text) == text


def test_the_reader_removes_the_leading_apostrophe_again():
    assert unquote_cell(formula_safe("-40 degC")) == "-40 degC"
    assert unquote_cell("'quoted") == "'quoted"      # an apostrophe the user typed stays


def test_the_bad_rows_csv_is_formula_safe_and_still_reads():
    header = ["tag", "service", "kind", "fluid", "inlet pressure [barg]", "inlet temperature [degC]",
              "outlet pressure [barg]"]
    rows = [["PCV-1", "good", "", "methane=0.9,ethane=0.1", "72", "9", "19"],
            ["=BADROW()", "x;=1+1", "", "methane=0.9,ethane=0.1", "72 furlongs", "-40 degC", "19"]]
    out = io.StringIO(newline="")
    csv.writer(out, lineterminator="\r\n").writerows([header, *rows])
    result = read_cases(out.getvalue().encode(), filename="hostile.csv", keep_going=True)
    assert len(result.bad_rows) == 1
    bad = bad_rows_file(result).decode("utf-8-sig")
    cells = list(csv.reader(io.StringIO(bad)))[1]
    assert cells[0] == "'=BADROW()" and cells[1] == "x;'=1+1" and cells[5] == "'-40 degC"
    # semicolon locales split the raw line on ';': no piece may start a formula
    for line in bad.splitlines()[1:]:
        for piece in _pieces(line):
            assert not _formula(piece), piece
    again = read_cases(bad.encode(), filename="bad.csv", keep_going=True)
    assert [e.value for e in again.errors] == [e.value for e in result.errors]    # the apostrophes come off
