"""Reading an uploaded XLSX workbook in a process of its own, with a memory ceiling.

Run as a script (``python -I xlsx_child.py MAX_ROWS MAX_COLUMNS MAX_CELLS MEMORY_MB`` with the workbook on
stdin), never imported by the service: it imports only the standard library and openpyxl, so its memory is the
workbook's.  It first limits its own address space (``resource.setrlimit(RLIMIT_AS)``), then counts the first
sheet's rows and cells with a streaming XML parser (stopping at the first limit passed, before anything is
built), and only then lets openpyxl read the values.  It writes a pickle to stdout: ``("rows", [(row number,
[cell values]), ...])`` or ``("refused", message)``; it exits 3 when the memory ceiling was reached.
"""
from __future__ import annotations

import io
import pickle
import re
import resource
import sys
import zipfile
from xml.parsers import expat

_MAIN_NS = "http://schemas.openxmlformats.org/spreadsheetml/2006/main"
_REL_NS = "http://schemas.openxmlformats.org/officeDocument/2006/relationships"


class LimitError(Exception):
    """The workbook passes a limit; the message names it."""


def _first_sheet_part(archive: zipfile.ZipFile) -> str:
    """The archive path of the workbook's first sheet (from workbook.xml and its relationships)."""
    names = set(archive.namelist())
    workbook = archive.read("xl/workbook.xml").decode("utf-8", "replace")
    first = re.search(r"<(?:\w+:)?sheet\b[^>]*?\b(?:\w+:)?id=\"([^\"]+)\"", workbook)
    if first:
        rels = archive.read("xl/_rels/workbook.xml.rels").decode("utf-8", "replace")
        for m in re.finditer(r"<(?:\w+:)?Relationship\b([^>]*)>", rels):
            attrs = dict(re.findall(r"(\w+)=\"([^\"]*)\"", m.group(1)))
            if attrs.get("Id") == first.group(1):
                target = attrs.get("Target", "").lstrip("/")
                path = target if target.startswith("xl/") else "xl/" + target
                if path in names:
                    return path
    candidates = sorted(n for n in names if re.fullmatch(r"xl/worksheets/sheet\d+\.xml", n))
    if not candidates:
        raise LimitError("the workbook has no sheet")
    return candidates[0]


def _column_number(ref: str) -> int:
    letters = re.match(r"[A-Za-z]+", ref)
    n = 0
    for ch in (letters.group(0) if letters else ""):
        n = n * 26 + (ord(ch.upper()) - 64)
    return n


def count_cells(stream, max_rows: int, max_columns: int, max_cells: int) -> tuple[int, int]:
    """Rows and cells of a sheet's XML, read as a stream; LimitError at the first limit passed."""
    state = {"rows": 0, "cells": 0, "in_row": 0}

    def start(name: str, attrs: dict[str, str]) -> None:
        local = name.rsplit("}", 1)[-1].rsplit(":", 1)[-1]
        if local == "row":
            state["rows"] += 1
            state["in_row"] = 0
            if state["rows"] > max_rows + 1 + 1000:     # header and some empty rows beyond the case rows
                raise LimitError(f"the sheet has more than {max_rows:,} rows; split the list")
        elif local == "c":
            state["cells"] += 1
            state["in_row"] += 1
            column = _column_number(attrs.get("r", "")) or state["in_row"]
            if state["in_row"] > max_columns or column > max_columns:
                raise LimitError(f"row {state['rows']} has cells beyond column {max_columns} (at most {max_columns} "
                              "columns are read); delete the columns right of the list")
            if state["cells"] > max_cells:
                raise LimitError(f"the sheet has more than {max_cells:,} cells; split the list")

    parser = expat.ParserCreate(namespace_separator="}")
    parser.StartElementHandler = start
    while True:
        chunk = stream.read(1 << 20)
        if not chunk:
            break
        parser.Parse(chunk, False)
    parser.Parse(b"", True)
    return state["rows"], state["cells"]


def _text(value) -> bool:
    return value is not None and str(value).strip() != ""


def read_rows(data: bytes, max_rows: int, max_columns: int, max_cells: int) -> list[tuple[int, list]]:
    """The first sheet's rows that hold a value, as ``(row number, values)``, after counting them."""
    with zipfile.ZipFile(io.BytesIO(data)) as archive:
        with archive.open(_first_sheet_part(archive)) as stream:
            count_cells(stream, max_rows, max_columns, max_cells)
    from openpyxl import load_workbook  # imported before the ceiling was set (main)

    wb = load_workbook(io.BytesIO(data), read_only=True, data_only=True)
    try:
        if not wb.worksheets:
            raise LimitError("the workbook has no sheet")
        ws = wb.worksheets[0]
        ws.reset_dimensions()   # read every row, whatever the stored dimension says
        rows: list[tuple[int, list]] = []
        for k, values in enumerate(ws.iter_rows(values_only=True, max_col=max_columns), start=1):
            cells = list(values)
            if any(_text(v) for v in cells):
                if len(rows) > max_rows:
                    raise LimitError(f"more than {max_rows:,} case rows; split the list")
                rows.append((k, cells))
        return rows
    finally:
        wb.close()


def main(argv: list[str]) -> int:
    max_rows, max_columns, max_cells, memory_mb = (int(a) for a in argv[1:5])
    import openpyxl  # noqa: F401 - the library's own memory is not the workbook's: load it before the ceiling

    limit = memory_mb * 1024 * 1024
    resource.setrlimit(resource.RLIMIT_AS, (limit, limit))
    data = sys.stdin.buffer.read()
    try:
        answer: tuple = ("rows", read_rows(data, max_rows, max_columns, max_cells))
    except MemoryError:
        return 3
    except LimitError as exc:
        answer = ("refused", str(exc))
    except (zipfile.BadZipFile, KeyError, OSError, ValueError, TypeError, expat.ExpatError) as exc:
        answer = ("unreadable", f"{exc.__class__.__name__}: {exc}")
    sys.stdout.buffer.write(pickle.dumps(answer, protocol=pickle.HIGHEST_PROTOCOL))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
