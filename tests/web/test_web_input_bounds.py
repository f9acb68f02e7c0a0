"""Inputs that used to answer 500 (found by fuzzing the API): each now gets a 4xx naming what is wrong.

Ids beyond 2^31 - 1 and NUL characters matter on PostgreSQL (its integer columns and text refuse them); the
suite runs these on both databases.
"""
from __future__ import annotations

import pytest
from web_helpers import case_body, unique

from jtcheck.records.models import Role

BIG = 2**31


@pytest.mark.parametrize("path", [f"/api/v1/cases/{BIG}", f"/api/v1/fluids/{BIG}", f"/api/v1/cases/{BIG}/results",
                                  f"/api/v1/cases/{2**63}", f"/api/v1/cases/{BIG}/revisions"])
def test_ids_beyond_the_integer_range_are_not_found(api, path):
    resp = api(Role.ADMIN, "GET", path)
    assert resp.status_code == 404 and "error" in resp.get_json()


@pytest.mark.parametrize("query, field", [(f"offset={BIG}", "offset"), (f"site_id={BIG}", "site_id"),
                                          (f"unit_id={2**70}", "unit_id"), ("limit=0", "limit"),
                                          ("limit=-1", "limit")])
def test_query_numbers_out_of_range_are_422(api, query, field):
    resp = api(Role.ADMIN, "GET", f"/api/v1/cases?{query}")
    assert resp.status_code == 422 and resp.get_json()["error"]["field"] == field


def test_pages_with_a_huge_id_are_not_found(engineer):
    for path in (f"/cases/{BIG}", f"/fluids/{BIG}", f"/cases/{BIG}/edit", f"/batches/{BIG}"):
        assert engineer.get(path).status_code == 404, path


def test_nul_in_text_is_refused_naming_the_field(api, world, engineer):
    body = case_body(world, service="valve\x00station")
    resp = api(Role.ENGINEER, "POST", "/api/v1/cases", json=body)
    assert resp.status_code == 422 and resp.get_json()["error"]["field"] == "service"
    resp = api(Role.ENGINEER, "POST", "/api/v1/fluids", json={"name": "gas\x00", "composition": {"methane": 1}})
    assert resp.status_code == 422 and resp.get_json()["error"]["field"] == "name"
    assert api(Role.ENGINEER, "GET", "/api/v1/cases?q=a%00b").status_code == 422
    page = engineer.post("/fluids/new", data={"name": "x\x00y", "composition": "methane=1", "eos": "PR",
                                              "kij_mode": "table"})
    assert page.status_code == 422


def test_json_nested_5000_deep_is_400(api):
    deep = "[" * 5000 + "]" * 5000
    resp = api(Role.ENGINEER, "POST", "/api/v1/letdown", data=deep, content_type="application/json")
    assert resp.status_code == 400 and "nested more than 32 levels" in resp.get_json()["error"]["message"]


@pytest.mark.parametrize("change, field", [({"t_in": "1 K"}, "t_in"), ({"t_in": "-273.15 degC"}, "t_in"),
                                           ({"fluid": {"composition": {"methane": 1e308, "ethane": 1e308}}},
                                            "fluid")])
def test_letdown_inputs_outside_the_models_range_are_422(api, change, field):
    body = {"fluid": {"composition": {"methane": 0.9, "ethane": 0.1}}, "p_in": "70 bara", "t_in": "20 degC",
            "p_out": "10 bara", **change}
    resp = api(Role.ENGINEER, "POST", "/api/v1/letdown", json=body)
    assert resp.status_code == 422, resp.get_json()
    assert resp.get_json()["error"]["field"].startswith(field)


def test_a_case_inlet_temperature_below_50_k_is_refused(api, world):
    resp = api(Role.ENGINEER, "POST", "/api/v1/cases", json=case_body(world, tag=unique("COLD"),
                                                                       inlet_temperature="10 K"))
    assert resp.status_code == 422 and resp.get_json()["error"]["field"] == "inlet_temperature"
    assert "inlet temperature 10 K is out of range; allowed: from 50 K to 2000 K" in resp.get_json()["error"]["message"]


@pytest.mark.parametrize("fluid_id", [0, 2**31, 120775683413395378140086272])
def test_a_letdown_fluid_id_beyond_the_id_range_is_422_naming_the_field(api, fluid_id):
    """Found by the OpenAPI fuzz on PostgreSQL (an id past its integer range reached the database: 500)."""
    body = {"fluid_id": fluid_id, "p_in": "70 bara", "t_in": "20 degC", "p_out": "10 bara"}
    resp = api(Role.ENGINEER, "POST", "/api/v1/letdown", json=body)
    assert resp.status_code == 422, resp.get_json()
    assert resp.get_json()["error"]["field"] == "fluid_id"
