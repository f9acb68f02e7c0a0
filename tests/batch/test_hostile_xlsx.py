"""Hostile workbooks: a zip bomb, a row of endless cells, a sheet whose strings fill memory.  Each is refused with a
message naming the limit, before the service's own process unpacks or builds anything large (the archive's
directory is read first; the sheet is counted and read in a child process with a memory ceiling)."""
from __future__ import annotations

import io
import resource
import zipfile

import pytest

from jtcheck.batch.layout import MAX_COLUMNS, MAX_UNPACKED_BYTES
from jtcheck.batch.reader import read_cases
from jtcheck.errors import InputError

CONTENT_TYPES = ('<?xml version="1.0" encoding="UTF-8"?><Types xmlns="http://schemas.openxmlformats.org/package/2006/'
                 'content-types"><Default Extension="rels" ContentType="application/vnd.openxmlformats-package.'
                 'relationships+xml"/><Default Extension="xml" ContentType="application/xml"/><Override PartName="/'
                 'xl/workbook.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.'
                 'main+xml"/><Override PartName="/xl/worksheets/sheet1.xml" ContentType="application/vnd.'
                 'openxmlformats-officedocument.spreadsheetml.worksheet+xml"/>{extra}</Types>')
ROOT_RELS = ('<?xml version="1.0" encoding="UTF-8"?><Relationships xmlns="http://schemas.openxmlformats.org/package/'
             '2006/relationships"><Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/'
             'relationships/officeDocument" Target="xl/workbook.xml"/></Relationships>')
WORKBOOK = ('<?xml version="1.0" encoding="UTF-8"?><workbook xmlns="http://schemas.openxmlformats.org/spreadsheetml/'
            '2006/main" xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships"><sheets><sheet '
            'name="letdowns" sheetId="1" r:id="rId1"/></sheets></workbook>')
WB_RELS = ('<?xml version="1.0" encoding="UTF-8"?><Relationships xmlns="http://schemas.openxmlformats.org/package/'
           '2006/relationships"><Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/'
           'relationships/worksheet" Target="worksheets/sheet1.xml"/>{extra}</Relationships>')
SHEET_HEAD = ('<?xml version="1.0" encoding="UTF-8"?><worksheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/'
              '2006/main"><sheetData>')
SHEET_TAIL = "</sheetData></worksheet>"


def workbook(sheet_chunks, shared_strings=None) -> bytes:
    """An XLSX written by hand, its sheet XML streamed from ``sheet_chunks`` (so it may unpack to gigabytes)."""
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED, compresslevel=1) as z:
        extra_types = ('<Override PartName="/xl/sharedStrings.xml" ContentType="application/vnd.openxmlformats-'
                       'officedocument.spreadsheetml.sharedStrings+xml"/>') if shared_strings else ""
        extra_rels = ('<Relationship Id="rId2" Type="http://schemas.openxmlformats.org/officeDocument/2006/'
                      'relationships/sharedStrings" Target="sharedStrings.xml"/>') if shared_strings else ""
        z.writestr("[Content_Types].xml", CONTENT_TYPES.format(extra=extra_types))
        z.writestr("_rels/.rels", ROOT_RELS)
        z.writestr("xl/workbook.xml", WORKBOOK)
        z.writestr("xl/_rels/workbook.xml.rels", WB_RELS.format(extra=extra_rels))
        with z.open("xl/worksheets/sheet1.xml", "w", force_zip64=True) as f:
            f.write(SHEET_HEAD.encode())
            for chunk in sheet_chunks:
                f.write(chunk)
            f.write(SHEET_TAIL.encode())
        if shared_strings:
            with z.open("xl/sharedStrings.xml", "w", force_zip64=True) as f:
                for chunk in shared_strings:
                    f.write(chunk)
    return out.getvalue()


def _max_rss_mb() -> float:
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024


@pytest.mark.slow
def test_a_zip_bomb_is_refused_by_its_unpacked_size_before_it_is_unpacked():
    """One row of inline-string cells unpacking to over 256 MB from a file of about 1 MB (the issue's bomb was
    1.08 MB unpacking to 380 MB)."""
    cell = b'<c t="inlineStr"><is><t></t></is></c>'
    block = cell * 100_000
    n = MAX_UNPACKED_BYTES // len(block) + 2
    data = workbook([b'<row r="1">'] + [block] * n + [b"</row>"])
    assert len(data) < 3 * 1024 * 1024
    before = _max_rss_mb()
    with pytest.raises(InputError, match=r"unpacks to [\d,]+ MB; at most 256 MB unpacked is read") as err:
        read_cases(data, filename="bomb.xlsx")
    assert err.value.field == "file"
    assert _max_rss_mb() - before < 100          # nothing was unpacked in this process


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
