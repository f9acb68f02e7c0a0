"""Materials with exemption curves in the register: checked, used at the coincident pressure, fail closed.

The check values are jtcheck.screening.mdmt's own (its published values are tested in
tests/screening/test_mdmt.py); here the register must hand the right numbers to it and store the working.
"""
from __future__ import annotations

import pytest

from jtcheck.errors import InputError
from jtcheck.records import service
from jtcheck.records.errors import PermissionDenied
from jtcheck.records.mdmt_curves import curve_rows, curve_table, update_curve_point
from jtcheck.records.models import Material, Role
from jtcheck.records.snapshot import case_snapshot
from jtcheck.reports import charts
from jtcheck.reports.record import render_html
from jtcheck.screening.mdmt import material_mdmt, stress_ratio

from .register_helpers import BAR, T0, count, unique

P_ATM = 101325.0
PLATE = {"exemption_curve": "B", "curve_code": "VIII-1", "thickness_m": 0.0254, "allowable_stress_pa": 138e6,
         "outside_diameter_m": 0.3239}


def test_material_with_a_curve_gives_the_mdmt_at_the_outlet_pressure(session, users, engineer, case_data):
    material = service.create_material(session, users[Role.ADMIN], name=unique("SA-516-70 plate"), **PLATE)
    assert material.min_metal_temperature_k is None
    case = service.create_case(session, engineer, case_data(material_id=material.id))
    result = service.compute_case(session, engineer, case.id)
    limits = result.screening["limits"]
    ratio = stress_ratio(10 * BAR, p_atm_pa=P_ATM, allowable_stress_pa=138e6, outside_diameter_m=0.3239,
                         thickness_m=0.0254)
    assert 0.0 < ratio < 0.35      # a thick pipe at 10 bar: low stress
    assert limits["mdmt_k"] == pytest.approx(material_mdmt("B", 0.0254, ratio).mdmt_k)
    assert "low-stress exemption" in limits["mdmt_source"]
    working = limits["mdmt_working"]
    assert working["stress_ratio"] == pytest.approx(ratio)
    assert working["working"]["curve"] == "B" and working["working"]["steps"]
    assert len(working["allowable_curve"]["p_pa"]) == len(working["allowable_curve"]["t_k"]) > 2
    assert result.inputs["material"]["cold_spec"]["curve"] == "B"
    # the record shows the working a checker repeats by hand, and draws the allowable temperature against pressure
    snapshot = case_snapshot(case, result, "A", prepared_by={"name": "Pat Preparer", "email": "pat@example.com"})
    page = render_html(snapshot)
    assert "MDMT working" in page and "Curve B at governing thickness 25.40 mm" in page
    assert "low-stress exemption" in page and "Exemption curve B (VIII-1)" in page
    data = charts.pt_diagram_data(charts.fluid_key_of(result.inputs), [], charts.ColdLines(
        limits["governing_k"], limits["target_k"], limits["mdmt_k"],
        (tuple(working["allowable_curve"]["p_pa"]), tuple(working["allowable_curve"]["t_k"]))), charts.ChartUnits())
    svg = charts.draw_pt_diagram(data, style=charts.PRINT, text_as_paths=False)
    assert "allowable metal temperature at pressure (material curve)" in svg


def test_typed_limit_kept_and_warmer_governs(session, users, engineer, case_data):
    material = service.create_material(session, users[Role.ADMIN], name=unique("plate typed"),
                                       min_metal_temperature_k=T0 - 29, exemption_curve="B", thickness_m=0.0254)
    case = service.create_case(session, engineer, case_data(material_id=material.id))
    result = service.compute_case(session, engineer, case.id)
    limits = result.screening["limits"]
    assert limits["mdmt_k"] == pytest.approx(material_mdmt("B", 0.0254).mdmt_k)   # -0.6 degC beats -29 degC
    assert "typed limit" in limits["mdmt_source"]


def test_entered_mdmt_wins_over_the_curve(session, users, engineer, case_data):
    material = service.create_material(session, users[Role.ADMIN], name=unique("plate entered"), **PLATE)
    case = service.create_case(session, engineer, case_data(material_id=material.id, mdmt_k=T0 - 40))
    result = service.compute_case(session, engineer, case.id)
    assert result.screening["limits"]["mdmt_k"] == pytest.approx(T0 - 40)
    assert result.screening["limits"]["mdmt_working"] is None


def test_no_curve_and_no_typed_limit_is_not_screened(session, users, engineer, case_data):
    bare = service.create_material(session, users[Role.ADMIN], name=unique("unknown steel"))
    case = service.create_case(session, engineer, case_data(material_id=bare.id))
    result = service.compute_case(session, engineer, case.id)
    assert result.outcome == "not screened"


@pytest.mark.parametrize(("fields", "field"), [
    ({"exemption_curve": "E", "thickness_m": 0.01}, "exemption_curve"),
    ({"exemption_curve": "B"}, "thickness_m"),
    ({"exemption_curve": "B", "thickness_m": 0.2}, "thickness_m"),            # beyond the curves: test required
    ({"exemption_curve": "B", "thickness_m": 0.01, "curve_code": "B31.3", "pwht_credit": True}, "pwht_credit"),
    ({"exemption_curve": "B", "thickness_m": 0.01, "allowable_stress_pa": 138e6}, "allowable_stress_pa"),
    ({"exemption_curve": "B", "thickness_m": 0.02, "allowable_stress_pa": 1e8, "outside_diameter_m": 0.03},
     "outside_diameter_m"),
    ({"joint_efficiency": 1.5}, "joint_efficiency"),
    ({"curve_code": "EN 13445"}, "curve_code"),
    ({"colour": "red"}, "colour"),
])
def test_bad_material_data_names_the_field_and_stores_nothing(session, users, fields, field):
    before = count(session, Material)
    with pytest.raises(InputError) as err:
        service.create_material(session, users[Role.ADMIN], name=unique("bad"), **fields)
    assert err.value.field == field
    assert count(session, Material) == before


def test_update_material_checks_the_whole_cold_data(session, users):
    material = service.create_material(session, users[Role.ADMIN], name=unique("plate upd"), **PLATE)
    with pytest.raises(InputError) as err:
        service.update_material(session, users[Role.ADMIN], material.id, {"thickness_m": 0.5})
    assert err.value.field == "thickness_m"
    session.refresh(material)
    assert material.thickness_m == 0.0254
    service.update_material(session, users[Role.ADMIN], material.id, {"impact_test_temperature_k": T0 - 46})
    assert material.cold_spec().limit_at(10 * BAR, P_ATM).working.impact_test_temperature_k == T0 - 46


def test_curve_table_edits_by_admins_only_and_checked(session, users):
    label, rows = curve_rows(session, users[Role.ENGINEER])
    assert label.startswith("shipped")
    b_1in = next(r for r in rows if r["table"] == "exemption" and r["curve"] == "B" and float(r["x"]) == 1.0)
    with pytest.raises(PermissionDenied):
        update_curve_point(session, users[Role.ENGINEER], b_1in["position"], value=33)
    with pytest.raises(InputError):       # curve B would fall with thickness after 1 in
        update_curve_point(session, users[Role.ADMIN], b_1in["position"], value=200)
    assert curve_table(session).curve_k.__self__.label.startswith("shipped")
    update_curve_point(session, users[Role.ADMIN], b_1in["position"], value=32, provenance="read from the 2023 "
                       "edition by the site's materials engineer")
    table = curve_table(session)
    assert table.label.startswith("register")
    assert material_mdmt("B", 0.0254, table=table).curve_k == pytest.approx((32 - 32) / 1.8 + T0)
    # put it back for the other tests of this module
    update_curve_point(session, users[Role.ADMIN], b_1in["position"], value=31, provenance="from memory")


def test_plain_typed_material_says_so(session, engineer, case_data):
    case = service.create_case(session, engineer, case_data())        # the world's typed carbon steel, -29 degC
    result = service.compute_case(session, engineer, case.id)
    limits = result.screening["limits"]
    assert limits["mdmt_k"] == pytest.approx(244.15)
    assert limits["mdmt_source"] == "material: Test carbon steel, typed limit"
    assert limits["mdmt_working"] is None
