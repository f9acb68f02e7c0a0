"""The case register as a person uses it, in a real browser: sign in, enter a fluid and a case with the units
of their choice, compute it, read the result; and a checker who may look but not edit.

The check value of the outlet temperature is computed here with :func:`jtcheck.letdown` from the inputs as
typed (gauge pressure converted with the standard atmosphere), with Peng-Robinson and SRK as the screening
does (the colder governs), so the test follows the numbers from the form through unit conversion, storage
and computation to the page; the outcome badge must say, in words, the outcome those numbers give.
"""
from __future__ import annotations

import re

import pytest
from playwright.sync_api import expect

from jtcheck import Fluid, letdown
from jtcheck.notices import CAUTION
from jtcheck.records.models import Role

SCREENSHOT = "/tmp/jtcheck-result.png"
P_ATM = 101325.0          # [Pa], the form's default atmospheric pressure for gauge units
T0 = 273.15               # [K]


def _number(text: str) -> float:
    """The first number in ``text`` ("-23.45 degC" -> -23.45)."""
    m = re.search(r"[-+]?\d+(?:\.\d+)?", text.replace("\N{MINUS SIGN}", "-"))
    assert m is not None, f"no number in {text!r}"
    return float(m.group())


def _squash(text: str) -> str:
    return " ".join(text.split())


def test_engineer_enters_a_fluid_and_a_case_in_chosen_units_computes_it_and_reads_the_result(page, live_app,
                                                                                             sign_in):
    sign_in(page, Role.ENGINEER)

    # a fluid, through the fluid form (one composition line per component)
    page.get_by_role("navigation", name="Main").get_by_role("link", name="Fluids").click()
    page.get_by_role("link", name="New fluid").click()
    fluid_name = "Kestrel Ridge export gas (e2e)"
    page.get_by_label(re.compile(r"^Name")).fill(fluid_name)
    page.locator("#f-composition").fill("\n".join(f"{name}={z}" for name, z in live_app.gas.items()))
    page.get_by_label(re.compile(r"^Notes")).fill("Invented composition for the browser test.")
    page.get_by_role("button", name="Save fluid").click()
    expect(page.get_by_role("heading", level=1)).to_have_text(fluid_name)
    expect(page.locator(".flash")).to_contain_text(f"Fluid {fluid_name} saved.")

    # a case, through the case form, with the units chosen beside each number
    page.get_by_role("navigation", name="Main").get_by_role("link", name="Cases").click()
    page.get_by_role("link", name="New case").click()
    page.get_by_label(re.compile(r"^Tag")).fill("PCV-E2E-101")
    page.get_by_label(re.compile(r"^Kind")).select_option(label="control valve / pressure-reduction station")
    page.get_by_label(re.compile(r"^Site / unit")).select_option(label=live_app.unit_name)
    page.get_by_label(re.compile(r"^Fluid")).select_option(label=f"{fluid_name} (PR)")
    page.get_by_label(re.compile(r"^Service")).fill("town-main regulator, winter start-up (invented)")
    entries = {   # field: (number, unit)
        "inlet_pressure": ("70", "barg"), "inlet_temperature": ("15", "degC"), "outlet_pressure": ("8", "bara"),
        "inlet_temperature_min": ("2", "degC"), "mdmt": ("-29", "degC"), "margin": ("5", "K")}
    for field, (number, unit) in entries.items():
        page.locator(f"#f-{field}").fill(number)
        page.locator(f"select[name='{field}_unit']").select_option(unit)
    page.get_by_role("button", name="Save case").click()
    expect(page.get_by_role("heading", level=1)).to_contain_text("PCV-E2E-101")
    expect(page.locator(".flash")).to_contain_text("saved (draft)")
    inputs = page.locator("dl.facts").first
    expect(inputs).to_contain_text("70 barg")
    expect(inputs).to_contain_text("8 bara")

    # compute, and land on the result
    page.get_by_role("button", name="Compute now").click()
    expect(page).to_have_url(re.compile(r"/cases/\d+/results/\d+$"))
    expect(page.get_by_role("heading", name=re.compile(r"^Result of"))).to_be_visible()

    # the outlet temperature, in the unit the inlet temperature was typed in, against jtcheck.letdown
    p_in_pa, p_out_pa = 70e5 + P_ATM, 8e5
    # the user's two conditions and the generated start-up into a depressured outlet (the atmosphere) from each
    expected_k = min(letdown(Fluid(live_app.gas, eos=eos), p_in=p_in_pa, t_in=T0 + t_c, p_out=p_out).t_out
                     for t_c in (15.0, 2.0) for eos in ("PR", "SRK")    # kij from jtcheck's table (form default)
                     for p_out in (p_out_pa, P_ATM))
    coldest = page.locator("dl.facts dt:text-is('Coldest screened outlet') + dd")
    expect(coldest).to_contain_text("degC")
    shown_c = _number(coldest.inner_text())
    assert shown_c == pytest.approx(expected_k - T0, abs=0.02)

    # the outcome badge: its own shape (an SVG icon) and its outcome in words, beside the outcome sentence
    limit_k, target_k = T0 - 29.0, T0 - 29.0 + 5.0
    outcome = "fail" if expected_k < limit_k else ("margin eroded" if expected_k < target_k else "pass")
    badge = page.locator("#outcome .outcome-badge")
    expect(badge).to_be_visible()
    expect(badge.locator(".outcome-label")).to_have_text(outcome.upper())
    expect(badge).to_have_attribute("data-outcome", outcome)
    icon = badge.locator("svg.outcome-icon")
    expect(icon).to_be_visible()
    icon_box = icon.bounding_box()
    assert icon_box is not None and icon_box["width"] >= 20 and icon_box["height"] >= 20
    expect(page.locator("#outcome .outcome-sentence")).to_contain_text(f"Outcome: {outcome}.")
    expect(page.get_by_role("heading", name="Findings")).to_be_visible()
    for condition in ("Normal", "Min inlet temperature", "Start-up into depressured outlet"):
        expect(page.get_by_role("heading", name=condition, exact=True)).to_be_visible()

    # the caution, word for word
    caution = page.get_by_role("complementary", name="Caution")
    expect(caution).to_be_visible()
    assert _squash(CAUTION) in _squash(caution.inner_text())

    # the P-T diagram: an inline SVG, drawn and visible
    diagram = page.locator("figure.diagram svg.pt-diagram")
    expect(diagram).to_be_visible()
    expect(diagram.locator("title")).to_contain_text("Pressure-temperature diagram")
    box = diagram.bounding_box()
    assert box is not None and box["width"] > 300 and box["height"] > 150
    assert diagram.locator("path").count() > 20
    expect(page.get_by_role("heading", name="Pressure-temperature diagram")).to_be_visible()
    # the minimum inlet temperature makes an operating sweep: its chart is drawn too
    expect(page.get_by_role("heading", name="Operating sweep")).to_be_visible()
    expect(page.get_by_role("img", name=re.compile(r"^Operating sweep"))).to_be_visible()

    page.screenshot(path=SCREENSHOT, full_page=True)

    # the case list shows the same badge, small, in the case's row
    page.get_by_role("navigation", name="Main").get_by_role("link", name="Cases").click()
    row = page.locator("tr", has=page.get_by_role("link", name="PCV-E2E-101", exact=True))
    expect(row.locator(".outcome-badge .outcome-label")).to_have_text(outcome.upper())
    expect(row.locator(".outcome-badge svg.outcome-icon")).to_be_visible()


def test_checker_can_view_and_compute_but_not_edit_a_case(page, live_app, sign_in):
    sign_in(page, Role.CHECKER)
    expect(page.get_by_role("link", name="New case")).to_have_count(0)

    page.goto(f"/cases/{live_app.seeded_case_id}")
    expect(page.get_by_role("heading", level=1)).to_contain_text("PCV-E2E-SEED")
    expect(page.get_by_role("link", name="Edit inputs")).to_have_count(0)
    expect(page.get_by_role("button", name="Compute now")).to_be_visible()   # checkers may compute

    # typing the edit address by hand is refused, and no form is shown
    response = page.goto(f"/cases/{live_app.seeded_case_id}/edit")
    assert response is not None and response.status == 403
    expect(page.get_by_role("heading", level=1)).to_contain_text("Not allowed")
    expect(page.get_by_role("alert")).to_contain_text("not allowed to edit case inputs")
    expect(page.locator("form input[name='inlet_pressure']")).to_have_count(0)
    expect(page.get_by_role("button", name=re.compile("Save"))).to_have_count(0)
