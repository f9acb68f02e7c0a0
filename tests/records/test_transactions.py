"""Every write is one transaction: on an error nothing of it is stored."""
from __future__ import annotations

import pytest

from jtcheck.errors import InputError
from jtcheck.records import audit, computation, demo, service
from jtcheck.records.models import AuditEntry, Case, CaseResult, FluidRecord, PlantUnit, Site

from .register_helpers import LEAN_GAS, count, unique


def _counts(session):
    return [count(session, m) for m in (Site, PlantUnit, FluidRecord, Case, CaseResult, AuditEntry)]


def test_failure_after_the_case_row_is_written_leaves_nothing(session, engineer, case_data, monkeypatch):
    before = _counts(session)

    def failing_audit(*args, **kwargs):
        raise RuntimeError("audit store failed")

    monkeypatch.setattr(audit, "add_entry", failing_audit)
    with pytest.raises(RuntimeError):
        service.create_case(session, engineer, case_data())
    assert _counts(session) == before


def test_failure_in_an_update_leaves_the_case_as_it_was(session, engineer, case_data, monkeypatch):
    case = service.create_case(session, engineer, case_data())
    real = audit.add_entry
    calls = []

    def audit_then_fail(*args, **kwargs):
        calls.append(args)
        if len(calls) == 2:        # the second changed field
            raise RuntimeError("disk full")
        return real(*args, **kwargs)

    monkeypatch.setattr(audit, "add_entry", audit_then_fail)
    with pytest.raises(RuntimeError):
        service.update_case(session, engineer, case.id, {"margin_k": 9.0, "service": "changed"})
    stored = session.get(Case, case.id, populate_existing=True)
    assert (stored.margin_k, stored.service, stored.version) == (5.0, "test letdown", 1)
    assert [e.action for e in service.audit_trail(session, engineer, "case", case.id)] == ["create"]


def test_a_bad_fluid_is_not_stored(session, engineer):
    before = _counts(session)
    with pytest.raises(InputError) as err:
        service.create_fluid(session, engineer, unique("bad gas"), {"methane": 0.5, "unobtainium": 0.5})
    assert err.value.field == "composition"
    with pytest.raises(InputError) as err:
        service.create_fluid(session, engineer, unique("bad gas"), LEAN_GAS, eos="XYZ")
    assert err.value.field == "eos"
    assert _counts(session) == before


def test_a_fluid_name_must_be_new(session, engineer, world):
    with pytest.raises(InputError, match="already exists") as err:
        service.create_fluid(session, engineer, "Lean gas", LEAN_GAS)
    assert err.value.field == "name"


def test_a_failing_demo_load_leaves_nothing(session, monkeypatch):
    before = _counts(session)
    real = computation.add_result
    computed = []

    def fail_on_third(*args):
        computed.append(args)
        if len(computed) == 3:
            raise RuntimeError("interrupted")
        return real(*args)

    monkeypatch.setattr(computation, "add_result", fail_on_third)
    with pytest.raises(RuntimeError):
        demo.load_demo(session)
    assert _counts(session) == before


def test_the_session_is_usable_after_an_error(session, engineer, case_data):
    with pytest.raises(InputError):
        service.create_case(session, engineer, case_data(tag=""))
    assert service.create_case(session, engineer, case_data()).id is not None
