"""Text cells written to CSV and XLSX files, made safe from formula injection.

A spreadsheet program takes a cell that starts with ``=``, ``+``, ``-`` or ``@`` (or a tab or carriage return
before one of them) for a formula, and in a locale whose list separator is ``;`` it splits a comma-delimited
cell such as ``x;=1+1`` into two cells, the second a formula.  :func:`formula_safe` puts an apostrophe before
every piece of a text that could start such a cell: at the start, and after every separator (comma,
semicolon, tab, line break), which is the common practice recommended by the OWASP "CSV Injection" page.
Plain numbers (``-40``, ``+1.5e3``) are left alone: they are numbers to a spreadsheet, not formulas.

:func:`unquote_cell` undoes the leading apostrophe when a file the service wrote (a bad-rows CSV) is read back.
"""
from __future__ import annotations

import re

#: First characters that make a spreadsheet program read a cell as a formula (OWASP "CSV Injection").
FORMULA_START = ("=", "+", "-", "@", "\t", "\r")
#: Characters a spreadsheet program may split a cell on when it reads a CSV with another separator.
_SEPARATORS = ",;\t\r\n"
_PIECE = re.compile(r"([^,;\t\r\n]*)([,;\t\r\n]?)")
_PLAIN_NUMBER = re.compile(r"[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?")


def _risky(piece: str) -> bool:
    """True if ``piece`` (the text of one would-be cell) would be read as a formula."""
    body = piece.lstrip(" ")
    return bool(body) and body[0] in "=+-@" and not _PLAIN_NUMBER.fullmatch(body.rstrip(" "))


def formula_safe(text: str) -> str:
    """``text`` with an apostrophe before each piece that a spreadsheet would read as a formula.

    >>> formula_safe("=HYPERLINK(1)"), formula_safe("x;=1+1"), formula_safe("-40"), formula_safe("-40 degC")
    ("'=HYPERLINK(1)", "x;'=1+1", '-40', "'-40 degC")
    """
    if not isinstance(text, str) or not text:
        return text
    if not any(c in text for c in "=+-@"):
        return text
    out = []
    for piece, sep in _PIECE.findall(text):
        if _risky(piece):
            stripped = piece.lstrip(" ")
            piece = piece[:len(piece) - len(stripped)] + "'" + stripped
        out.append(piece + sep)
    return "".join(out)


def unquote_cell(text: str) -> str:
    """A cell as typed before :func:`formula_safe` protected its start (only the leading apostrophe is removed)."""
    if len(text) > 1 and text[0] == "'" and text[1] in "=+-@\t\r":
        return text[1:]
    return text
