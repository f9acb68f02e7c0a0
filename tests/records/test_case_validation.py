"""create_case checks every field: a bad one raises InputError naming it, and nothing is stored."""
from __future__ import annotations

import math

import pytest

from jtcheck.errors import InputError
from jtcheck.records import service
from jtcheck.records.models import AuditEntry, Case, CaseKind

from .register_helpers import BAR, T0, count

BAD_FIELDS = [
    # (field given, bad value, field named in the error)
    ("tag", "", "tag"),
    ("tag", "   ", "tag"),
    ("tag", "X" * 65, "tag"),
    ("tag", "PCV-1\n01", "tag"),
    ("tag", None, "tag"),
    ("tag", 1101, "tag"),
    ("service", 42, "service"),
    ("kind", "gate valve", "kind"),
    ("kind", None, "kind"),
    ("unit_id", 987654, "unit_id"),
    ("unit_id", None, "unit_id"),
    ("unit_id", "1", "unit_id"),
    ("fluid_id", 987654, "fluid_id"),
    ("material_id", 987654, "material_id"),
    ("inlet_pressure_pa", 0.0, "inlet_pressure_pa"),
    ("inlet_pressure_pa", -5 * BAR, "inlet_pressure_pa"),
    ("inlet_pressure_pa", math.nan, "inlet_pressure_pa"),
    ("inlet_pressure_pa", math.inf, "inlet_pressure_pa"),
    ("inlet_pressure_pa", 2.0e9, "inlet_pressure_pa"),
    ("inlet_pressure_pa", "70 bar", "inlet_pressure_pa"),
    ("inlet_pressure_pa", True, "inlet_pressure_pa"),
    ("inlet_pressure_pa", None, "inlet_pressure_pa"),
    ("inlet_temperature_k", 0.0, "inlet_temperature_k"),
    ("inlet_temperature_k", -10.0, "inlet_temperature_k"),
    ("inlet_temperature_k", 2500.0, "inlet_temperature_k"),
    ("inlet_temperature_k", math.nan, "inlet_temperature_k"),
    ("outlet_pressure_pa", 0.0, "outlet_pressure_pa"),
    ("outlet_pressure_pa", 71 * BAR, "outlet_pressure_pa"),        # above the inlet pressure
    ("inlet_temperature_min_k", T0 + 25.0, "inlet_temperature_min_k"),  # above the normal temperature
    ("inlet_temperature_min_k", -1.0, "inlet_temperature_min_k"),
    ("inlet_pressure_max_pa", 60 * BAR, "inlet_pressure_max_pa"),   # below the normal pressure
    ("inlet_pressure_max_pa", math.inf, "inlet_pressure_max_pa"),
    ("mass_flow_kg_per_s", 0.0, "mass_flow_kg_per_s"),
    ("mass_flow_kg_per_s", -1.0, "mass_flow_kg_per_s"),
    ("mdmt_k", -20.0, "mdmt_k"),
    ("cold_limit_k", 0.0, "cold_limit_k"),
    ("margin_k", -1.0, "margin_k"),
    ("margin_k", math.nan, "margin_k"),
    ("margin_k", 500.0, "margin_k"),
    ("p_atm_pa", 0.0, "p_atm_pa"),
    ("p_atm_pa", 2 * BAR, "p_atm_pa"),
    ("display_units", "barg", "display_units"),
    ("display_units", {"colour": "red"}, "display_units"),
    ("display_units", {"inlet_pressure": ""}, "display_units"),
    ("display_units", {"inlet_pressure": 5}, "display_units"),
    ("basis", ["not", "text"], "basis"),
    ("references", "x" * 50_001, "references"),
    ("status", "approved", "status"),
    ("colour", "red", "colour"),
]


@pytest.mark.parametrize(("key", "value", "field"), BAD_FIELDS, ids=[f"{k}={v!r}"[:40] for k, v, _ in BAD_FIELDS])
def test_bad_field_is_named_and_nothing_is_stored(session, engineer, case_data, key, value, field):
    cases_before, audit_before = count(session, Case), count(session, AuditEntry)
    with pytest.raises(InputError) as err:
        service.create_case(session, engineer, case_data(**{key: value}))
    assert err.value.field == field
    assert count(session, Case) == cases_before
    assert count(session, AuditEntry) == audit_before


@pytest.mark.parametrize(("key", "value", "allowed"), [
    # the register quotes the range in the units the case was typed in; here (SI values given) the default units
    ("inlet_pressure_pa", 0.0, "above 0 bar abs and at most 10000 bar abs (absolute)"),
    ("inlet_temperature_k", 2500.0, "from -223.15 degC to 1726.85 degC"),
    ("inlet_temperature_k", 1.0, "from -223.15 degC to 1726.85 degC"),
    ("margin_k", -1.0, "from 0 K to 100 K"),
    ("outlet_pressure_pa", 71 * BAR, "outlet <= inlet pressure"),
    ("kind", "gate valve", "relief_valve"),
])
def test_error_message_gives_the_allowed_range(session, engineer, case_data, key, value, allowed):
    with pytest.raises(InputError, match="allowed") as err:
        service.create_case(session, engineer, case_data(**{key: value}))
    assert allowed in str(err.value)


def test_missing_required_field_is_named(session, engineer, case_data):
    data = case_data()
    del data["outlet_pressure_pa"]
    with pytest.raises(InputError) as err:
        service.create_case(session, engineer, data)
    assert err.value.field == "outlet_pressure_pa"
    assert "required" in err.value.message


def test_valid_case_is_stored_as_draft_version_1(session, engineer, case_data, world):
    case = service.create_case(session, engineer, case_data(tag="  PCV-1101  "))
    assert case.id is not None
    assert case.tag == "PCV-1101"
    assert case.status == "draft"
    assert case.version == 1
    assert case.kind is CaseKind.CONTROL_VALVE
    assert case.created_by.id == engineer.id
    assert case.display_units == {"inlet_pressure": "bara", "inlet_temperature": "degC"}


def test_outlet_equal_to_inlet_pressure_is_allowed(session, engineer, case_data):
    case = service.create_case(session, engineer, case_data(outlet_pressure_pa=70 * BAR))
    assert case.outlet_pressure_pa == case.inlet_pressure_pa


def test_optional_fields_may_be_left_out(session, engineer, case_data):
    data = case_data(inlet_temperature_min_k=None, inlet_pressure_max_pa=None, material_id=None,
                     mass_flow_kg_per_s=None)
    for key in ("margin_k", "display_units"):
        del data[key]
    case = service.create_case(session, engineer, data)
    assert case.margin_k == 0.0        # the default is stored with the case, so it is shown
    assert case.p_atm_pa == 101325.0
    assert case.mdmt_k is None and case.mdmt_source == ""


def test_mdmt_is_copied_from_the_material_unless_entered(session, engineer, case_data, world):
    copied = service.create_case(session, engineer, case_data())
    assert copied.mdmt_k == 244.15
    assert copied.mdmt_source == "material: Test carbon steel"
    entered = service.create_case(session, engineer, case_data(mdmt_k=T0 - 40.0))
    assert entered.mdmt_k == T0 - 40.0
    assert entered.mdmt_source == "entered"


def test_values_are_stored_exactly(session_factory, engineer, case_data):
    with session_factory() as s:
        from jtcheck.records.models import User
        user = s.get(User, engineer.id)
        case_id = service.create_case(s, user, case_data(inlet_pressure_pa=7301325.123456789,
                                                         cold_limit_k=230.0)).id
    with session_factory() as s:
        case = s.get(Case, case_id)
        assert case.inlet_pressure_pa == 7301325.123456789
        assert case.cold_limit_k == 230.0
        assert case.created_at.tzinfo is not None
