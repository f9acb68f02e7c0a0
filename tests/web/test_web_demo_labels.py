"""Only the demo's own cases are labelled invented: a user's case filed in a demo unit is not, and the case form
says when the demo site is the only one."""
from __future__ import annotations

import html

from sqlalchemy import select
from web_helpers import case_form, created_id

from jtcheck.notices import DEMO_NOTICE
from jtcheck.records import service
from jtcheck.records.demo import load_demo
from jtcheck.records.models import Case, PlantUnit
from jtcheck.web.database import db_session


def _demo(app):
    with app.app_context():
        s = db_session()
        load_demo(s)
        unit_id = s.scalar(select(PlantUnit.id).where(PlantUnit.name == "Town main PRS"))
        demo_case = s.scalar(select(Case.id).where(Case.tag == "PCV-1101"))
    return unit_id, demo_case


def test_a_users_case_in_a_demo_unit_is_not_labelled_invented(app, engineer, world):
    unit_id, demo_case = _demo(app)
    resp = engineer.post("/cases/new", data=case_form(world, tag="PCV-MINE", unit_id=str(unit_id)))
    assert resp.status_code == 302, resp.data
    page = html.unescape(engineer.get(f"/cases/{created_id(resp)}").data.decode())
    assert DEMO_NOTICE not in page
    assert "filed in a unit of the demo site" in page
    assert "invented" not in page.lower(), [line for line in page.splitlines() if "invented" in line.lower()]
    demo_page = html.unescape(engineer.get(f"/cases/{demo_case}").data.decode())
    assert DEMO_NOTICE in demo_page


def test_a_users_case_in_a_demo_unit_is_not_invented_in_its_record_or_the_case_list(app, engineer, world):
    """The record's site line (the case snapshot) and the case list name the site without "(invented)"."""
    from jtcheck.records.demo_labels import SITE_NAME, site_label
    from jtcheck.records.snapshot import case_snapshot

    unit_id, demo_case = _demo(app)
    resp = engineer.post("/cases/new", data=case_form(world, tag="PCV-MINE2", unit_id=str(unit_id)))
    assert resp.status_code == 302, resp.data
    case_id = created_id(resp)
    assert engineer.post(f"/cases/{case_id}/compute").status_code == 302
    with app.app_context():
        s = db_session()
        mine, demo = s.get(Case, case_id), s.get(Case, demo_case)
        assert site_label(mine) == SITE_NAME.removesuffix(" (invented)") and site_label(demo) == SITE_NAME
        result = service.latest_results(s, [case_id])[case_id]
        assert "invented" not in case_snapshot(mine, result, "A")["case"]["site"]
    listing = html.unescape(engineer.get("/cases?q=PCV-MINE2").data.decode())
    row = next(line for line in listing.split("<tbody")[1].split("<tr") if "PCV-MINE2" in line)
    assert "invented" not in row.lower()


def test_a_new_case_is_filed_in_no_unit_by_default(app, engineer, world):
    """The case form preselects no site or unit (the demo's units included): the user chooses where a case is filed."""
    _demo(app)
    page = engineer.get("/cases/new").data.decode()
    select = page.split('name="unit_id"')[1].split("</select>")[0]
    assert "selected" not in select
    assert '<option value="">choose…</option>' in select
