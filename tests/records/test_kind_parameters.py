"""The register keeps a kind's inputs that have no column of their own, and a site's default margin."""
from __future__ import annotations

from jtcheck.records import service
from jtcheck.records.case_inputs import CASE_COLUMNS, field_value, site_margin
from jtcheck.records.models import PlantUnit, Site

from .register_helpers import unique


def test_a_case_without_a_margin_takes_its_sites_default(session, engineer, world, case_data):
    site = session.get(Site, world.site_id)
    site.default_margin_k, site.default_margin_basis = 7.5, "test site practice (invented)"
    session.commit()
    try:
        data = case_data(tag=unique("PCV"))
        data.pop("margin_k")
        case = service.create_case(session, engineer, data)
        assert case.margin_k == 7.5
        assert site_margin(session.get(PlantUnit, world.unit_id)) == 7.5
        entered = service.create_case(session, engineer, case_data(tag=unique("PCV"), margin_k=2.0))
        assert entered.margin_k == 2.0       # an entered margin wins over the site's
    finally:
        site.default_margin_k, site.default_margin_basis = None, ""
        session.commit()


def test_without_a_site_default_the_margin_is_zero(session, engineer, case_data):
    data = case_data(tag=unique("PCV"))
    data.pop("margin_k")
    assert service.create_case(session, engineer, data).margin_k == 0.0


def test_field_values_come_from_columns_or_parameters(session, engineer, case_data):
    case = service.create_case(session, engineer, case_data(tag=unique("PCV")))
    assert field_value(case, "inlet_pressure_pa") == case.inlet_pressure_pa
    assert "inlet_pressure_pa" in CASE_COLUMNS and "parameters" in CASE_COLUMNS
    case.parameters = {"some_kind_input_k": 250.0}
    assert field_value(case, "some_kind_input_k") == 250.0
    assert field_value(case, "not_given_k") is None


def test_the_demo_site_sets_a_default_margin_with_its_reason():
    from jtcheck.records.demo import SITE_MARGIN_BASIS, SITE_MARGIN_K

    assert SITE_MARGIN_K == 5.0 and "invented" in SITE_MARGIN_BASIS
