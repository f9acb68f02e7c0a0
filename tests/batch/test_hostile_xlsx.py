"""Hostile workbooks: a zip bomb, a row of endless cells, a sheet whose strings fill memory.  Each is refused with a
message naming the limit, before the service's own process unpacks or builds anything large (the archive's
directory is read first; the sheet is counted and read in a child process with a memory ceiling)."""
from __future__ import annotations

import tracemalloc

import pytest
from hostile_files import workbook, zip_bomb

from jtcheck.batch.layout import MAX_COLUMNS
from jtcheck.batch.reader import read_cases
from jtcheck.errors import InputError


@pytest.mark.slow
def test_a_zip_bomb_is_refused_by_its_unpacked_size_before_it_is_unpacked():
    """One row of inline-string cells unpacking to over 256 MB from a file of about 1 MB (the issue's bomb was
    1.08 MB unpacking to 380 MB)."""
    data = zip_bomb()
    assert len(data) < 3 * 1024 * 1024
    tracemalloc.start()
    try:
        with pytest.raises(InputError, match=r"unpacks to [\d,]+ MB; at most 256 MB unpacked is read") as err:
            read_cases(data, filename="bomb.xlsx")
        peak = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    assert err.value.field == "file"
    assert peak < 20 * 1024 * 1024            # nothing was unpacked in this process (the file itself is ~1 MB)


def test_a_row_of_endless_cells_is_refused_naming_the_column_limit():
    data = workbook([b'<row r="1">', b'<c t="inlineStr"><is><t></t></is></c>' * 50_000, b"</row>"])
    with pytest.raises(InputError, match=rf"beyond column {MAX_COLUMNS} \(at most {MAX_COLUMNS} columns are read\)"):
        read_cases(data, filename="wide.xlsx")


def test_a_workbook_that_needs_too_much_memory_is_refused_naming_the_ceiling(monkeypatch):
    """77 MB of shared strings (under the unpacked limit) read with a 128 MB ceiling: the child runs out, the
    service answers with the ceiling."""
    monkeypatch.setenv("JTCHECK_PARSE_MEMORY_MB", "128")
    item = b"<si><t>abcdefghijklmnopqrstuvwxyz0123456789</t></si>"
    strings = [b'<?xml version="1.0" encoding="UTF-8"?><sst xmlns="http://schemas.openxmlformats.org/spreadsheetml/'
               b'2006/main">', *[item * 100_000] * 16, b"</sst>"]
    data = workbook([b'<row r="1"><c r="A1" t="s"><v>0</v></c></row>'], shared_strings=strings)
    with pytest.raises(InputError, match="needs more than 128 MB of memory"):
        read_cases(data, filename="strings.xlsx")


def test_an_ordinary_workbook_still_reads_through_the_child_process():
    rows = (b'<row r="1"><c r="A1" t="inlineStr"><is><t>tag</t></is></c><c r="B1" t="inlineStr"><is><t>fluid</t></is>'
            b'</c><c r="C1" t="inlineStr"><is><t>inlet pressure [bara]</t></is></c><c r="D1" t="inlineStr"><is><t>'
            b'inlet temperature [degC]</t></is></c><c r="E1" t="inlineStr"><is><t>outlet pressure [bara]</t></is></c>'
            b'</row><row r="2"><c r="A2" t="inlineStr"><is><t>PCV-1</t></is></c><c r="B2" t="inlineStr"><is><t>'
            b'methane=0.9,ethane=0.1</t></is></c><c r="C2"><v>70</v></c><c r="D2"><v>20</v></c><c r="E2"><v>10</v>'
            b'</c></row>')
    result = read_cases(workbook([rows]), filename="ok.xlsx")
    assert [c.tag for c in result.cases] == ["PCV-1"] and result.cases[0].p_in_pa == pytest.approx(70e5)
