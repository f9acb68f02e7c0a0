"""The register keeps a kind's inputs that have no column of their own, and a site's default margin."""
from __future__ import annotations

import pytest

from jtcheck.errors import InputError
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
        empty = service.create_case(session, engineer, case_data(tag=unique("PCV"), margin_k=None))
        assert empty.margin_k == 7.5         # an empty form field is no margin: the site's applies
        # the margin term names the site and its reason; an entered margin is "entered margin"
        result = service.compute_case(session, engineer, empty.id)
        first = result.screening["limits"]["margin_terms"][0]
        assert first["term"] == "site default margin" and "test site practice (invented)" in first["basis"]
        assert first["k"] == 7.5
        edited = service.update_case(session, engineer, empty.id, {"service": "renamed"})
        assert edited.parameters["margin_source"].startswith("site default of Test site")
        own = service.update_case(session, engineer, empty.id, {"margin_k": 3.0})
        assert not (own.parameters or {}).get("margin_source")
        result = service.compute_case(session, engineer, entered.id)
        assert result.screening["limits"]["margin_terms"][0]["term"] == "entered margin"
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


def test_a_letdowns_generated_case_inputs_are_kept_and_computed(session, engineer, case_data):
    """Inputs without a column (heater-off temperature, settle-out volumes, cases switched off) are kept with the
    case, come back with its values and reach the computation (invented numbers)."""
    volumes = [{"name": "separator", "volume_m3": 40.0, "p_pa": 70e5, "t_k": 293.15},
               {"name": "inlet line", "volume_m3": 4.0, "p_pa": 20e5, "t_k": 278.15}]
    data = case_data(tag=unique("PCV"), heater_upstream_temperature_k=268.15, settle_out_volumes=volumes,
                     credible_off={"ambient": "buried and insulated inlet (invented)"})
    case = service.create_case(session, engineer, data)
    assert case.parameters["heater_upstream_temperature_k"] == 268.15
    values = service.case_values(case)
    assert values["settle_out_volumes"] == volumes and values["credible_off"]["ambient"].startswith("buried")
    result = service.compute_case(session, engineer, case.id)
    generated = {g["case"]: g for g in result.screening["answers"]["generated_cases"]}
    assert generated["ambient"]["status"] == "off" and "buried" in generated["ambient"]["reason"]
    assert generated["heater_loss"]["status"] == "computed"
    assert generated["settle_out"]["status"] == "computed"
    names = [e["condition"] for e in result.results]
    assert "loss of upstream heater" in names and "start-up into depressured outlet" in names


@pytest.mark.parametrize("value", ["text", 3.0, True])
def test_a_structured_kind_input_must_be_a_list_or_mapping(session, engineer, case_data, value):
    with pytest.raises(InputError) as err:
        service.create_case(session, engineer, case_data(tag=unique("PCV"), settle_out_volumes=value))
    assert err.value.field == "settle_out_volumes"


def test_a_kinds_structured_input_is_refused_for_another_kind(session, engineer, case_data):
    with pytest.raises(InputError, match="only for relief-valve cases") as err:
        service.create_case(session, engineer, case_data(tag=unique("PCV"), header_sections=[
            {"name": "knock-out drum", "p_pa": 1.2e5, "limit_k": 244.15, "material": ""}]))
    assert err.value.field == "header_sections"


def test_a_relief_valves_header_sections_are_kept_and_screened(session, engineer, case_data):
    sections = [{"name": "main header", "p_pa": 3e5, "limit_k": 227.15, "material": "LTCS"},
                {"name": "knock-out drum", "p_pa": 1.2e5, "limit_k": 227.15, "material": "LTCS"}]
    data = case_data(tag=unique("PSV"), kind="relief_valve", set_pressure_pa=60e5, overpressure_fraction=0.1,
                     outlet_pressure_pa=3e5, built_up_back_pressure_pa=3e5, relieving_temperature_min_k=268.15,
                     header_sections=sections)
    case = service.create_case(session, engineer, data)
    assert case.parameters["header_sections"] == sections and case.parameters["relieving_temperature_min_k"] == 268.15
    result = service.compute_case(session, engineer, case.id)
    rv = result.screening["answers"]["relief_valve"]
    assert any("knock-out drum" in str(row) for row in rv["limits"])     # every section screened as a limit
    assert [s["name"] for s in rv["header"]["sections"]] == ["main header", "knock-out drum"]


def test_other_relief_sources_are_kept_and_mixed_into_the_header(session, engineer, case_data):
    """Another valve relieving at the same time, entered by its composition, joins the header's mix (invented)."""
    sources = [{"name": "PSV-9", "composition": "propane=0.95,n-butane=0.05", "mass_flow_kg_per_s": 4.0,
                "p_pa": 15e5, "t_k": 288.15}]
    data = case_data(tag=unique("PSV"), kind="relief_valve", set_pressure_pa=60e5, overpressure_fraction=0.1,
                     outlet_pressure_pa=3e5, built_up_back_pressure_pa=3e5, header_limit_k=227.15,
                     other_sources=sources)
    case = service.create_case(session, engineer, data)
    assert service.case_values(case)["other_sources"] == sources
    result = service.compute_case(session, engineer, case.id)
    rv = result.screening["answers"]["relief_valve"]
    assert rv["other_sources"] == ["PSV-9"]
    assert {"propane", "n-butane"} <= set(rv["header"]["component_ids"])
    assert [src["name"] for src in rv["header"]["sources"]] == ["this relief valve", "PSV-9"]


def test_a_bad_other_source_composition_is_named(session, engineer, case_data):
    sources = [{"name": "PSV-9", "composition": "unobtainium=1", "mass_flow_kg_per_s": 4.0, "p_pa": 15e5,
                "t_k": 288.15}]
    with pytest.raises(InputError) as err:
        service.create_case(session, engineer, case_data(tag=unique("PSV"), kind="relief_valve",
                                                         set_pressure_pa=60e5, overpressure_fraction=0.1,
                                                         outlet_pressure_pa=3e5, other_sources=sources))
    assert err.value.field == "other_sources[0].composition"
