"""Hostile XLSX workbooks written by hand, for the upload limits' tests (batch reader and web upload)."""
from __future__ import annotations

import io
import zipfile

from jtcheck.batch.layout import MAX_UNPACKED_BYTES

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



def zip_bomb() -> bytes:
    """About 1 MB that unpacks to over :data:`MAX_UNPACKED_BYTES`: one row of empty inline-string cells (the issue's
    bomb was 1.08 MB unpacking to 380 MB)."""
    block = b'<c t="inlineStr"><is><t></t></is></c>' * 100_000
    return workbook([b'<row r="1">'] + [block] * (MAX_UNPACKED_BYTES // len(block) + 2) + [b"</row>"])
