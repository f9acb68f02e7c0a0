"""The record of a vessel depressuring case (the invented demo case BDV-2102): its key numbers, the screened
paths, the time series, the curves and the caution are in the signed PDF's text."""
from __future__ import annotations

import shutil
import subprocess

import pytest
from sqlalchemy import select

from jtcheck.notices import CAUTION
from jtcheck.records.db import make_engine, make_session_factory, upgrade_database
from jtcheck.records.demo import load_demo
from jtcheck.records.models import Case
from jtcheck.records.snapshot import case_snapshot
from jtcheck.reports.depressuring import depressuring_view, draw_depressuring_chart
from jtcheck.reports.record import render_record
from jtcheck.reports.screening_display import DisplayUnits

#: Opens a database (see tests/conftest.py): the PostgreSQL run of `make test` includes this module.
pytestmark = pytest.mark.database

PDFTOTEXT = shutil.which("pdftotext")
needs_poppler = pytest.mark.skipif(PDFTOTEXT is None, reason="poppler-utils (pdftotext) not installed; run "
                                                             "tests/tools/ensure_chromium.sh")
PREPARER = {"name": "Pat Preparer", "email": "pat.preparer@example.com"}


@pytest.fixture(scope="module")
def snapshot(tmp_path_factory):
    url = f"sqlite:///{tmp_path_factory.mktemp('bdv-register') / 'jtcheck.sqlite3'}"
    upgrade_database(url)
    engine = make_engine(url)
    try:
        with make_session_factory(engine)() as session:
            load_demo(session)
            case = session.scalar(select(Case).where(Case.tag == "BDV-2102"))
            return case_snapshot(case, case.latest_result, "A", prepared_by=PREPARER)
    finally:
        engine.dispose()


def test_the_view_gives_the_key_numbers_in_the_case_units(snapshot):
    screening = snapshot["result"]["screening"]
    run = screening["answers"]["depressuring"]
    view = depressuring_view(screening, DisplayUnits.entered({"inlet_pressure": "barg", "inlet_temperature": "degC"}))
    key = {k["what"]: k for k in view["key"]}
    # the target of the API 521 common basis for a 100 barg design: 6.9 barg
    assert key["Depressuring target"]["value"] == {"value": pytest.approx(6.9), "unit": "barg"}
    assert key["Time to the target"]["value"]["value"] == pytest.approx(run["time_to_target_s"] / 60)
    assert key["Minimum blowdown valve outlet temperature"]["value"]["value"] == pytest.approx(
        run["min_valve_outlet_t"]["value"] - 273.15)
    assert [p["what"] for p in view["paths"]][0] == "Gas-wetted inner wall"
    assert view["rows"][0]["p"]["value"] == pytest.approx(70.0)
    svg = draw_depressuring_chart(screening, DisplayUnits(), limit_k=227.15, target_k=232.15)
    assert svg.startswith("<svg") and "time [min]" in svg and "inventory [kg]" in svg


@needs_poppler
def test_the_record_carries_the_run_its_numbers_and_the_caution(snapshot, tmp_path):
    rec = render_record(snapshot, "A4")
    pdf = tmp_path / "bdv.pdf"
    pdf.write_bytes(rec.pdf)
    text = subprocess.run([PDFTOTEXT, str(pdf), "-"], capture_output=True, text=True,
                          check=True).stdout
    flat = " ".join(text.split())
    run = snapshot["result"]["screening"]["answers"]["depressuring"]
    assert "BDV-2102" in flat and "Vessel depressuring" in flat
    assert " ".join(CAUTION.split()[:12]) in flat
    for words in ("Depressuring target", "Time to the target", "Peak mass flow (to flare)",
                  "Minimum fluid temperature", "Minimum gas-wetted inner wall temperature",
                  "Minimum blowdown valve outlet temperature", "Blowdown valve outlet over time",
                  "verify against the edition in force", "API 521"):
        assert words in flat, words
    # the numbers as the record prints them: the time to target [min] and the peak flow [kg/s]
    assert f"{run['time_to_target_s'] / 60:.6g}"[:4] in flat
    assert f"{run['peak_mass_flow']['value']:.6g}"[:4] in flat
    assert f"{run['min_valve_outlet_t']['value'] - 273.15:.2f}" in flat
    assert "FAIL" in flat
    # the curves are drawn with real text
    assert "time [min]" in flat and "inventory [kg]" in flat
    assert "Results by condition" in flat and "one run in time" in flat
    assert "The result holds no answers" not in flat
