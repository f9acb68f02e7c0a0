"""The calculation record PDF (jtcheck.reports.record) and the charts it shares with the web (jtcheck.reports.charts).

The records are rendered from snapshots of really computed cases: the demo site is loaded into a fresh
register once per module.  Text is read back with poppler's pdftotext and pages are rasterised with
pdftoppm (poppler-utils; tests/tools/ensure_chromium.sh installs it).
"""
from __future__ import annotations

import copy
import html
import io
import re
import shutil
import subprocess
from pathlib import Path

import numpy as np
import pytest
from PIL import Image
from pyhanko.pdf_utils.reader import PdfFileReader
from sqlalchemy import select

from jtcheck.errors import InputError
from jtcheck.notices import CAUTION
from jtcheck.records.db import make_engine, make_session_factory, upgrade_database
from jtcheck.records.demo import load_demo
from jtcheck.records.models import Case
from jtcheck.records.snapshot import case_snapshot
from jtcheck.reports import charts
from jtcheck.reports.record import SIGNATURE_ROLES, RenderedRecord, SignatureBox, render_html, render_record

#: Opens a database (see tests/conftest.py): the PostgreSQL run of `make test` includes this module.
pytestmark = pytest.mark.database

PDFTOTEXT = shutil.which("pdftotext")
PDFTOPPM = shutil.which("pdftoppm")
needs_poppler = pytest.mark.skipif(PDFTOTEXT is None or PDFTOPPM is None,
                                   reason="poppler-utils (pdftotext, pdftoppm) not installed; "
                                          "run tests/tools/ensure_chromium.sh")
PAPER_PT = {"A4": (595.28, 841.89), "Letter": (612.0, 792.0)}
MARGIN_PT = 16 / 25.4 * 72    # the narrowest page margin of the record (16 mm)
PREPARER = {"name": "Pat Preparer", "email": "pat.preparer@example.com"}


@pytest.fixture(scope="module")
def snapshots(tmp_path_factory):
    """Snapshots (revision A) of the demo cases, by tag, computed in a fresh register."""
    url = f"sqlite:///{tmp_path_factory.mktemp('record-register') / 'jtcheck.sqlite3'}"
    upgrade_database(url)
    engine = make_engine(url)
    try:
        with make_session_factory(engine)() as session:
            load_demo(session)
            out = {}
            for case in session.scalars(select(Case)).all():
                out[case.tag] = case_snapshot(case, case.latest_result, "A", prepared_by=PREPARER)
    finally:
        engine.dispose()
    assert {"PSV-2101", "PCV-1101"} <= set(out)
    return out


@pytest.fixture(scope="module")
def records(snapshots):
    """Rendered records: (tag, paper) -> RenderedRecord."""
    return {("PSV-2101", "A4"): render_record(snapshots["PSV-2101"], "A4"),
            ("PSV-2101", "Letter"): render_record(snapshots["PSV-2101"], "Letter"),
            ("PCV-1101", "A4"): render_record(snapshots["PCV-1101"], "A4")}


def pdf_pages_text(pdf: bytes, tmp_path: Path) -> list[str]:
    """The text of each page (pdftotext), whitespace collapsed."""
    path = tmp_path / "record.pdf"
    path.write_bytes(pdf)
    out = subprocess.run([PDFTOTEXT, "-enc", "UTF-8", str(path), "-"], check=True, capture_output=True).stdout
    pages = out.decode("utf-8").split("\f")
    if pages and not pages[-1].strip():
        pages = pages[:-1]
    return [" ".join(p.split()) for p in pages]


def media_boxes(pdf: bytes) -> list[tuple[float, float]]:
    """Width and height [pt] of every page, read with pyHanko's PDF reader."""
    reader = PdfFileReader(io.BytesIO(pdf))
    sizes: list[tuple[float, float]] = []

    def walk(node, inherited=None):
        node = node.get_object()
        box = node.get("/MediaBox", inherited)
        if node["/Type"] == "/Pages":
            for kid in node["/Kids"]:
                walk(kid, box)
        else:
            x0, y0, x1, y1 = (float(v) for v in box)
            sizes.append((x1 - x0, y1 - y0))

    walk(reader.root["/Pages"])
    return sizes


def rasterise(pdf: bytes, tmp_path: Path, dpi: int, first: int | None = None, last: int | None = None) -> list[Path]:
    path = tmp_path / "raster.pdf"
    path.write_bytes(pdf)
    cmd = [PDFTOPPM, "-r", str(dpi), "-png"]
    if first is not None:
        cmd += ["-f", str(first), "-l", str(last or first)]
    subprocess.run([*cmd, str(path), str(tmp_path / "page")], check=True, capture_output=True)
    return sorted(tmp_path.glob("page-*.png"), key=lambda p: int(re.findall(r"(\d+)\.png$", p.name)[0]))


# -- paper, pages ------------------------------------------------------------------------------------------
@pytest.mark.parametrize("paper", ["A4", "Letter"])
def test_paper_size_and_page_count(records, paper):
    rec = records[("PSV-2101", paper)]
    assert isinstance(rec, RenderedRecord) and rec.pdf.startswith(b"%PDF-")
    assert rec.page_count >= 2
    sizes = media_boxes(rec.pdf)
    assert len(sizes) == rec.page_count
    w, h = PAPER_PT[paper]
    for width, height in sizes:
        assert width == pytest.approx(w, abs=1.0) and height == pytest.approx(h, abs=1.0)


def test_paper_names_any_case_and_bad_paper_names_the_field(snapshots):
    with pytest.raises(InputError) as err:
        render_record(snapshots["PSV-2101"], "A3")
    assert err.value.field == "paper" and "A4" in err.value.message and "Letter" in err.value.message
    with pytest.raises(InputError) as err:
        render_html(snapshots["PSV-2101"], None)     # type: ignore[arg-type]
    assert err.value.field == "paper"
    assert "letter" in render_html(snapshots["PSV-2101"], "LETTER").lower()


# -- text ----------------------------------------------------------------------------------------------------
@needs_poppler
def test_every_page_carries_the_record_number_and_page_x_of_y(records, snapshots, tmp_path):
    for (tag, paper), rec in records.items():
        pages = pdf_pages_text(rec.pdf, tmp_path)
        assert len(pages) == rec.page_count, (tag, paper)
        number = snapshots[tag]["record_number"]
        for i, text in enumerate(pages, start=1):
            assert number in text, (tag, paper, i)
            assert f"page {i} of {rec.page_count}" in text, (tag, paper, i)
            assert f"{tag} · calculation record" in text, (tag, paper, i)


@needs_poppler
def test_record_text_has_the_case_outcome_caution_findings_and_answers(records, snapshots, tmp_path):
    snap = snapshots["PSV-2101"]
    pages = pdf_pages_text(records[("PSV-2101", "A4")].pdf, tmp_path)
    text = " ".join(pages)
    first = pages[0]
    screening = snap["result"]["screening"]
    assert screening["outcome"] == "fail"
    # the cover block: site, unit, tag, title, revision and its status line, the three signature labels
    for words in (snap["case"]["site"], snap["case"]["unit"], "PSV-2101", snap["case"]["service"],
                  "Issued for check as revision A; check and approval are shown by the signatures below.",
                  "PREPARED", "CHECKED", "APPROVED", PREPARER["name"]):
        assert words in first, words
    assert "FAIL" in first and screening["outcome_sentence"] in first
    assert " ".join(CAUTION.split()[:12]) in text
    # the sections
    for heading in ("Purpose and basis", "Inputs", "Fluid", "Method", "Results by condition",
                    "Screening outcome and findings", "Answers", "Diagrams", "References", "Revision history"):
        assert heading in text, heading
    # every finding's topic, with its severity
    for f in screening["findings"]:
        assert f["topic"].lower() in text.lower(), f["topic"]
    assert "HAZARD Cold metal" in text
    # a relief valve's remedies (no heater): the relieving temperature to keep and the MDMT each part needs
    remedies = screening["answers"]["relief_remedies"]
    assert "preheat" not in screening["answers"] and "Heat the inlet to" not in text
    assert "What keeps a relief valve's discharge above its limits" in text
    assert remedies["materials"] and "a material whose MDMT is at or below" in text
    temp = remedies["min_relieving_temperature"]
    assert ("Keep the relieving temperature at or above" in text) if temp["found"] else (temp["reason"][:30] in text)
    # the per-limit table of the relieving case
    assert "Relieving case against each limit" in text
    # inputs as entered and in SI, the composition with its data version, the method and versions
    assert "104.5 barg" in text and "10551325 Pa abs" in text
    assert snap["result"]["component_data_version"] in text and snap["result"]["kij_data_version"] in text
    assert "Peng-Robinson" in text and "isobutane / n-pentane" in text     # a kij pair set to 0
    assert "Knapp, Doring, Oellrich" in text and "ChemSep" not in text       # the kij sources: primary
    assert "CoolProp" not in text and "as distributed with" not in text      # the component data: primary
    assert "Relief valve" in text and "choked" in text
    # the charts are vector drawings with real text
    assert "Temperature [degC]" in text and "Pressure [barg]" in text and "Outlet temperature [degC]" in text


@needs_poppler
def test_a_passing_case_says_so_and_needs_no_preheat(snapshots, tmp_path):
    tag = next(t for t, s in snapshots.items() if s["result"]["outcome"] == "pass")
    rec = render_record(snapshots[tag], "A4")
    text = " ".join(pdf_pages_text(rec.pdf, tmp_path))
    assert "PASS" in text and "Heat the inlet to" not in text
    assert snapshots[tag]["result"]["screening"]["outcome_sentence"] in text


# -- pictures ------------------------------------------------------------------------------------------------
@needs_poppler
def test_every_page_renders_and_is_not_blank(records, tmp_path):
    for key, rec in records.items():
        folder = tmp_path / f"{key[0]}-{key[1]}"
        folder.mkdir()
        pngs = rasterise(rec.pdf, folder, 50)
        assert len(pngs) == rec.page_count, key
        for png in pngs:
            grey = np.asarray(Image.open(png).convert("L"))
            assert grey.size > 0
            white = float((grey >= 250).mean())
            assert white < 0.995, (key, png.name, white)


@needs_poppler
def test_signature_boxes_are_the_empty_frames_on_page_one(records, tmp_path):
    for key, rec in records.items():
        boxes = rec.signature_boxes
        assert set(boxes) == set(SIGNATURE_ROLES), key
        w, h = PAPER_PT[key[1]]
        ordered = [boxes[r] for r in SIGNATURE_ROLES]
        for b in ordered:
            assert isinstance(b, SignatureBox) and b.page_index == 0
            assert 0 <= b.x1 < b.x2 <= w and 0 <= b.y1 < b.y2 <= h
            assert b.x1 >= MARGIN_PT and b.x2 <= w - MARGIN_PT and b.y2 <= h - MARGIN_PT   # inside the page margins
            assert b.x2 - b.x1 >= 120 and b.y2 - b.y1 >= 50     # room for a visible signature
            assert b.y1 > h / 3                                  # in the cover block, upper part of the page
        widths = [b.x2 - b.x1 for b in ordered]
        assert max(widths) - min(widths) < 1.0, widths        # three equal frames
        for a, b in zip(ordered, ordered[1:], strict=False):   # left to right (or top to bottom), no overlap
            assert a.x2 <= b.x1 or a.y1 >= b.y2, key
        # at 72 dpi one pixel is one point: the frames are drawn there and nothing is inside them
        folder = tmp_path / f"sig-{key[0]}-{key[1]}"
        folder.mkdir()
        grey = np.asarray(Image.open(rasterise(rec.pdf, folder, 72, 1)[0]).convert("L")).astype(int)
        assert grey.shape[1] == pytest.approx(w, abs=2) and grey.shape[0] == pytest.approx(h, abs=2)
        for b in ordered:
            top, bottom = round(h - b.y2), round(h - b.y1)     # image rows run from the top
            left, right = round(b.x1), round(b.x2)
            inside = grey[top + 4:bottom - 4, left + 4:right - 4]
            assert inside.min() >= 245, (key, b)               # empty
            assert grey[top + 4:bottom - 4, left - 1:left + 2].min() < 100, (key, b)    # left edge of the frame
            assert grey[top - 1:top + 2, left + 4:right - 4].min() < 100, (key, b)      # top edge
            assert grey[bottom - 2:bottom + 1, left + 4:right - 4].min() < 100, (key, b)  # bottom edge


def test_the_same_snapshot_gives_the_same_file(snapshots, records):
    """No clock or random number in the file: a record can be rendered again and compared byte for byte."""
    assert render_record(snapshots["PSV-2101"], "A4").pdf == records[("PSV-2101", "A4")].pdf


# -- user text ----------------------------------------------------------------------------------------------
@needs_poppler
def test_user_text_is_escaped(snapshots, tmp_path):
    snap = copy.deepcopy(snapshots["PCV-1101"])
    snap["case"]["tag"] = "<b>X</b>"
    snap["case"]["service"] = "<script>alert(1)</script> & co"
    snap["case"]["title"] = "<b>X</b>: <script>alert(1)</script> & co"
    snap["case"]["references"] = "<img src=x onerror=alert(1)>"
    snap["prepared_by"] = {"name": "<i>Eve</i>", "email": "eve@example.com"}
    html = render_html(snap, "A4")
    assert "<b>X</b>" not in html and "<script>alert" not in html and "<img src=x" not in html
    assert "&lt;b&gt;X&lt;/b&gt;" in html and "&lt;script&gt;" in html and "&lt;i&gt;Eve&lt;/i&gt;" in html
    rec = render_record(snap, "A4")
    pages = pdf_pages_text(rec.pdf, tmp_path)
    assert "<b>X</b>" in pages[0] and "<script>alert(1)</script> & co" in pages[0] and "<i>Eve</i>" in pages[0]
    assert all("<b>X</b> · calculation record" in p for p in pages)    # the running header, via string-set
    assert "<img src=x onerror=alert(1)>" in " ".join(pages)


# -- odd snapshots -------------------------------------------------------------------------------------------
@needs_poppler
def test_a_result_without_screening_and_a_failed_condition_renders_as_not_screened(snapshots, tmp_path):
    snap = copy.deepcopy(snapshots["PCV-1101"])
    snap["result"]["screening"] = None
    snap["result"]["outcome"] = None
    snap["result"]["converged"] = False
    first = snap["result"]["conditions"][0]
    first.update(converged=False, t_out=None, message="PH flash did not converge")
    snap["history"] = [{"revision": "A", "status": "superseded", "at": "2026-01-05T10:00:00+00:00", "by": "Kim",
                        "action": "approved", "comment": "first issue"},
                       {"revision": "B", "letter": "B", "status": "void", "action": "void",
                        "at": "2026-02-01T08:30:00+00:00", "by": "Lee", "comment": "", "prepared_by": "Pat",
                        "checked_by": "Cid", "approved_by": None, "void_reason": "wrong fluid"}]
    snap["revision"] = {"letter": "C"}
    rec = render_record(snap, "Letter")
    text = " ".join(pdf_pages_text(rec.pdf, tmp_path))
    assert "NOT SCREENED" in text and "Issued for check as revision C" in text
    assert "PH flash did not converge" in text and "not converged" in text
    assert "superseded" in text and "first issue" in text and "2026-01-05 10:00 UTC" in text
    assert "prepared Pat; checked Cid" in text and "voided: wrong fluid" in text and "submitted for check" in text


# -- charts ----------------------------------------------------------------------------------------------------
def test_print_charts_use_no_colour_and_keep_text_as_text():
    data = charts.PTDiagramData(
        units=charts.ChartUnits("degC", "barg"),
        envelope=charts.EnvelopeCurve((250.0, 270.0, 280.0, 270.0), (1e5, 40e5, 60e5, 40e5),
                                      ("dew", "dew", "bubble", "bubble"), (280.0, 60e5), True),
        paths=(charts.TracedPath(charts.LetdownEnds("normal", True, 80e5, 300.0, 10e5, 260.0),
                                 (300.0, 280.0, 260.0), (80e5, 40e5, 10e5)),
               charts.TracedPath(charts.LetdownEnds("hot", False, 80e5, 320.0))),
        lines=charts.ColdLines(governing_k=244.0, target_k=249.0, mdmt_k=233.0))
    svg = charts.draw_pt_diagram(data, style=charts.PRINT, text_as_paths=False, margins=(0.1, 0.1, 0.7, 0.95))
    colours = set(re.findall(r"#([0-9a-fA-F]{6})\b", svg))
    assert colours
    for c in colours:
        assert c[0:2] == c[2:4] == c[4:6], c          # greys only
    assert "<text" in svg and " style=" not in svg and "normal" in svg and "MDMT" in svg
    screen = charts.draw_pt_diagram(data)              # the web's: coloured, letters as outlines
    assert "<text" not in screen and "#1b6f8f" in screen.lower()


def test_the_case_kind_adds_its_sections_to_the_record(records, tmp_path):
    """The relief-valve kind contributes its inputs and its relieving-case block (jtcheck.cases); a letdown's
    record has neither."""
    relief = " ".join(pdf_pages_text(records[("PSV-2101", "A4")].pdf, tmp_path))
    letdown = " ".join(pdf_pages_text(records[("PCV-1101", "A4")].pdf, tmp_path))
    for words in ("Relief valve set pressure", "Flare header temperature limit", "Relieving pressure",
                  "Nozzle throat", "Downstream of the valve"):
        assert words in relief
        assert words not in letdown


def test_the_records_purpose_names_the_remedies_of_the_case_kind(snapshots):
    """A relief valve's record offers no heater; a letdown's offers preheat and an outlet-pressure limit."""
    relief = render_html(snapshots["PSV-2101"], "A4")
    letdown = render_html(snapshots["PCV-1101"], "A4")
    assert "no heater on a relief line" in relief and "gives the preheat" not in relief
    assert "gives the preheat and the outlet-pressure limit" in letdown


def test_the_record_shows_each_margin_term_and_the_total(snapshots):
    """Issue 12 item 5: beside the limits, the total margin = entered margin + model spread, each term with its
    basis (the demo letdown is screened with PR and SRK side by side)."""
    text = html.unescape(render_html(snapshots["PCV-1101"], "A4"))
    assert "entered margin" in text and "model spread (PR vs SRK at " in text
    assert "total margin" in text and "|PR - SRK| outlet temperature at the condition that governs" in text


def test_the_record_shows_the_hydrate_numbers(snapshots):
    # the demo separator gas is water-saturated (invented Kestrel Ridge data): the record's hydrate block gives the
    # hydrate temperature at the governing outlet, the subcooling, the water basis and the dose with Hammerschmidt
    snap = snapshots["PSV-2101"]
    hyd = [f for f in snap["result"]["screening"]["findings"] if f["topic"] == "hydrates"][0]
    page = render_html(snap, "A4")
    assert "Hydrates at the governing outlet" in page
    assert f"{hyd['numbers']['t_hydrate_k'] - 273.15:.2f} degC" in page
    assert f"{hyd['numbers']['subcooling_k']:.2f} K" in page
    assert "Hammerschmidt" in page and "Injection rate" in page and hyd["numbers"]["water_basis"] in page


def test_the_record_of_a_gerg_2008_case_names_the_model_its_version_its_range_and_who_governs(snapshots):
    page = html.unescape(re.sub(r"<[^>]+>", " ", render_html(snapshots["PCV-3101"])))
    page = " ".join(page.split())
    assert "GERG-2008, Kunz and Wagner 2012" in page
    assert "normal range 90-450 K up to 35 MPa; extended range 60-700 K up to 70 MPa" in page
    assert "screened on GERG2008, the reference-grade model" in page


def test_the_records_sentences_read_in_the_units_the_case_was_typed_in(snapshots, tmp_path):
    """Issue 18 item 5: findings, remedies and the generated cases' reasoning in the record quote the case's units
    (here the relief valve typed in psig and degF), never kelvin pairs or bar abs; the PDF text (pdftotext) of the
    default case has no mark left either."""
    import copy
    import re

    from jtcheck.marks import OPEN

    snap = copy.deepcopy(snapshots["PSV-2101"])
    snap["case"]["display_units"] = {k: ("degF" if "temperature" in k or k in ("mdmt", "cold_limit", "header_limit")
                                         else "psig") for k in snap["case"]["display_units"]}
    text = html.unescape(re.sub(r"<[^>]+>", " ", render_html(snap, "A4")))
    assert OPEN not in text
    findings = text.split("Findings")[1] if "Findings" in text else text
    assert "degF" in findings and "psig" in findings
    assert "bar abs" not in findings and not re.search(r"degC \(\d+\.\d\d K\)", findings)
    pdf_text = " ".join(pdf_pages_text(render_record(snapshots["PCV-1101"], "A4").pdf, tmp_path))
    assert OPEN not in pdf_text and "bar abs" not in pdf_text


def test_every_demo_record_reads_without_marks_float_noise_or_si_sentences(snapshots):
    """Every demo case's record: no mark left, no number with more than about 4 significant digits (inputs as
    typed aside), no pressure in bar abs or Pa in a sentence (the inputs table's SI column aside)."""
    from jtcheck.marks import OPEN

    def significant(n):
        return len(n.replace(".", "").lstrip("0"))

    for tag, snap in snapshots.items():
        text = html.unescape(re.sub(r"<[^>]+>", " ", re.sub(r"<(style|svg)\b.*?</\1>", " ", render_html(snap, "A4"),
                                                            flags=re.S)))
        text = re.sub(r"[0-9.]+ (Pa|K)( abs)?\b", "", text)       # the inputs table's SI column
        assert OPEN not in text, tag
        noisy = [n for n in re.findall(r"\d+\.\d+", text) if n != "1.01325"
                 and (significant(n) > 6 or (len(n.split(".")[1]) >= 5 and significant(n) > 4))]
        assert not noisy, (tag, noisy[:5])
        assert not re.findall(r".{50}bar abs.{10}", text), tag
