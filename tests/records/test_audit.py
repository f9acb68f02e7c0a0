"""Audit entries on update, and the append-only audit log (ORM and database both refuse changes)."""
from __future__ import annotations

import pytest
from sqlalchemy import delete, select, text, update
from sqlalchemy.exc import DBAPIError

from jtcheck.records import service
from jtcheck.records.errors import AppendOnlyError
from jtcheck.records.models import AuditEntry

from .register_helpers import BAR, T0


def _entries(session, case_id):
    return list(session.scalars(select(AuditEntry).where(AuditEntry.entity == "case", AuditEntry.entity_id == case_id)
                                .order_by(AuditEntry.id)))


def test_create_is_audited(session, engineer, case_data):
    case = service.create_case(session, engineer, case_data(tag="PCV-7001"))
    [entry] = _entries(session, case.id)
    assert (entry.action, entry.user_id, entry.new_value) == ("create", engineer.id, "PCV-7001")
    assert entry.at.tzinfo is not None


def test_update_records_one_entry_per_changed_field_with_old_and_new_values(session, engineer, case_data, world):
    case = service.create_case(session, engineer, case_data(tag="PCV-7002", service="old service"))
    service.update_case(session, engineer, case.id, {
        "inlet_pressure_pa": 75 * BAR,           # changed
        "inlet_temperature_k": T0 + 20.0,        # same value as before: no entry
        "service": "new service",                # changed
        "unit_id": world.other_unit_id,          # changed
        "display_units": {"inlet_pressure": "psig"},
    }, expected_version=1)
    updates = {e.field: e for e in _entries(session, case.id) if e.action == "update"}
    assert set(updates) == {"inlet_pressure_pa", "service", "unit_id", "display_units"}
    assert (updates["inlet_pressure_pa"].old_value, updates["inlet_pressure_pa"].new_value) == ("7000000.0",
                                                                                                "7500000.0")
    assert (updates["service"].old_value, updates["service"].new_value) == ("old service", "new service")
    assert (updates["unit_id"].old_value, updates["unit_id"].new_value) == (str(world.unit_id),
                                                                            str(world.other_unit_id))
    assert updates["display_units"].new_value == '{"inlet_pressure": "psig"}'
    assert all(e.user_id == engineer.id for e in updates.values())
    assert case.version == 2
    assert case.unit.id == world.other_unit_id


def test_update_without_changes_writes_nothing(session, engineer, case_data):
    case = service.create_case(session, engineer, case_data())
    service.update_case(session, engineer, case.id, {"service": case.service}, expected_version=1)
    assert [e.action for e in _entries(session, case.id)] == ["create"]
    assert case.version == 1


def test_changing_the_material_recopies_a_copied_mdmt(session, engineer, case_data, world):
    case = service.create_case(session, engineer, case_data())
    service.update_case(session, engineer, case.id, {"material_id": world.cold_material_id})
    assert case.mdmt_k == 77.15 and case.mdmt_source == "material: Test stainless"
    fields = [e.field for e in _entries(session, case.id) if e.action == "update"]
    assert set(fields) == {"material_id", "mdmt_k", "mdmt_source"}


def test_an_entered_mdmt_is_kept_when_the_material_changes(session, engineer, case_data, world):
    case = service.create_case(session, engineer, case_data(mdmt_k=230.0))
    service.update_case(session, engineer, case.id, {"material_id": world.cold_material_id})
    assert case.mdmt_k == 230.0 and case.mdmt_source == "entered"


@pytest.fixture
def audit_entry(session, engineer, case_data):
    case = service.create_case(session, engineer, case_data())
    [entry] = _entries(session, case.id)
    return entry


def test_orm_update_of_an_audit_entry_is_refused(session, audit_entry):
    entry_id = audit_entry.id
    audit_entry.new_value = "forged"
    with pytest.raises(AppendOnlyError):
        session.flush()
    session.rollback()
    assert session.get(AuditEntry, entry_id, populate_existing=True).new_value != "forged"


def test_orm_delete_of_an_audit_entry_is_refused(session, audit_entry):
    session.delete(audit_entry)
    with pytest.raises(AppendOnlyError):
        session.flush()
    session.rollback()
    assert session.get(AuditEntry, audit_entry.id) is not None


@pytest.mark.parametrize("statement", [update(AuditEntry).values(new_value="forged"), delete(AuditEntry)],
                         ids=["update", "delete"])
def test_orm_bulk_statements_on_the_audit_log_are_refused(session, audit_entry, statement):
    with pytest.raises(AppendOnlyError):
        session.execute(statement)
    session.rollback()


@pytest.mark.parametrize("sql", ["UPDATE audit_log SET new_value = 'forged'", "DELETE FROM audit_log"],
                         ids=["update", "delete"])
def test_raw_sql_on_the_audit_log_is_refused_by_the_database(session, engine, audit_entry, sql):
    before = session.scalar(select(AuditEntry.new_value).where(AuditEntry.id == audit_entry.id))
    session.commit()
    with pytest.raises(DBAPIError, match="append-only"), engine.begin() as conn:
        conn.execute(text(sql))
    with engine.connect() as conn:
        after = conn.execute(text("SELECT new_value FROM audit_log WHERE id = :i"), {"i": audit_entry.id}).scalar()
    assert after == before


def test_audit_trail_lists_a_records_entries(session, engineer, case_data):
    case = service.create_case(session, engineer, case_data())
    service.update_case(session, engineer, case.id, {"margin_k": 10.0})
    trail = service.audit_trail(session, engineer, "case", case.id)
    assert [(e.action, e.field, e.old_value, e.new_value) for e in trail][1:] == [("update", "margin_k", "5.0", "10.0")]
