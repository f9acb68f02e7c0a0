"""Optimistic concurrency: a save based on a stale version of a case fails and changes nothing."""
from __future__ import annotations

import pytest
from sqlalchemy.orm.exc import StaleDataError

from jtcheck.records import computation, service
from jtcheck.records.errors import ConcurrentEditError
from jtcheck.records.models import Case, User


def test_stale_expected_version_is_refused(session, engineer, case_data):
    case = service.create_case(session, engineer, case_data())
    service.update_case(session, engineer, case.id, {"margin_k": 6.0}, expected_version=1)   # now version 2
    with pytest.raises(ConcurrentEditError) as err:
        service.update_case(session, engineer, case.id, {"margin_k": 9.0}, expected_version=1)
    assert (err.value.expected_version, err.value.current_version) == (1, 2)
    stored = session.get(Case, case.id, populate_existing=True)
    assert (stored.margin_k, stored.version) == (6.0, 2)


def test_version_counter_guards_every_update_in_the_database(session_factory, engineer, case_data):
    """Two sessions hold version 1; the second to write loses (SQLAlchemy version_id_col)."""
    with session_factory() as s:
        case_id = service.create_case(s, s.get(User, engineer.id), case_data()).id
    with session_factory() as first, session_factory() as second:
        a, b = first.get(Case, case_id), second.get(Case, case_id)
        second.commit()          # as a web form does: loaded in one request, saved in a later one
        a.margin_k = 1.0
        first.commit()
        b.margin_k = 2.0
        with pytest.raises(StaleDataError):
            second.commit()
        second.rollback()
    with session_factory() as s:
        assert s.get(Case, case_id).margin_k == 1.0


def test_computing_does_not_change_the_case_version(session, engineer, case_data):
    """Checkers computing a case must not make an engineer's open edit stale."""
    case = service.create_case(session, engineer, case_data())
    service.compute_case(session, engineer, case.id)
    assert session.get(Case, case.id, populate_existing=True).version == 1
    service.update_case(session, engineer, case.id, {"margin_k": 3.0}, expected_version=1)


def test_a_case_edited_while_it_is_computed_is_not_stored(session, engineer, case_data, monkeypatch):
    case = service.create_case(session, engineer, case_data())
    real = computation._prepare_computation

    def prepare_then_someone_edits(c):
        prepared = real(c)
        prepared["version"] -= 1     # as if the case had been saved meanwhile
        return prepared

    monkeypatch.setattr(computation, "_prepare_computation", prepare_then_someone_edits)
    with pytest.raises(ConcurrentEditError):
        service.compute_case(session, engineer, case.id)
    assert case.results == []


def test_a_session_that_has_read_can_still_write_after_another_commit(session_factory, engineer, case_data):
    """On SQLite (WAL) a deferred transaction that read before another commit could not write; the
    service starts its writes with the write lock instead."""
    with session_factory() as a, session_factory() as b:
        user_a = a.get(User, engineer.id)               # a now has an open read transaction
        service.create_case(b, b.get(User, engineer.id), case_data())
        case = service.create_case(a, user_a, case_data())
        assert case.id is not None
