"""Issued calculation records never change: refused by the service, the models and the database triggers.

The raw-SQL tests run on SQLite and, with DATABASE_URL set, on PostgreSQL (see conftest.py).
"""
from __future__ import annotations

import uuid

import pytest
from sqlalchemy import create_engine, select, text
from sqlalchemy.engine import make_url
from sqlalchemy.exc import DBAPIError

from jtcheck.records import service, workflow
from jtcheck.records.db import downgrade_database, upgrade_database
from jtcheck.records.errors import AppendOnlyError, RecordImmutableError, RevisionStateError
from jtcheck.records.models import Case, CaseResult, CaseRevision, ReviewStep, Role, User

from .conftest import env_database_url

#: Opens a database (see tests/conftest.py): the PostgreSQL run of `make test` includes this module.
pytestmark = pytest.mark.database


def fake_sign(request):
    return (request.pdf or b"%PDF-fake\n") + f"%{request.role}\n".encode()


@pytest.fixture
def approved(session, users, case_data):
    """A case whose revision A was approved as 0: (case id, revision id, result id)."""
    eng = users[Role.ENGINEER]
    case = service.create_case(session, eng, case_data())
    service.compute_case(session, eng, case.id)
    workflow.submit_for_check(session, eng, case.id, fake_sign)
    workflow.check(session, users[Role.CHECKER], case.id, fake_sign)
    workflow.send_for_approval(session, eng, case.id)
    rev = workflow.approve(session, users[Role.APPROVER], case.id, fake_sign)
    return case.id, rev.id, rev.result_id


def _row(engine, revision_id):
    with engine.connect() as conn:
        return tuple(conn.execute(text("SELECT status, number, letter, record_pdf, snapshot, record_sha256 "
                                       "FROM case_revisions WHERE id = :i"), {"i": revision_id}).one())


# -- the service ----------------------------------------------------------------------------------------
def test_no_review_step_applies_to_an_approved_revision(session, users, approved):
    case_id = approved[0]
    for call in (lambda: workflow.reject(session, users[Role.ADMIN], case_id, "too late"),
                 lambda: workflow.check(session, users[Role.ADMIN], case_id, fake_sign),
                 lambda: workflow.approve(session, users[Role.ADMIN], case_id, fake_sign),
                 lambda: workflow.submit_for_check(session, users[Role.ENGINEER], case_id, fake_sign),
                 lambda: workflow.send_for_approval(session, users[Role.ADMIN], case_id)):
        with pytest.raises(RevisionStateError):
            call()
    assert session.get(CaseRevision, approved[1], populate_existing=True).status == "approved"


# -- the models -----------------------------------------------------------------------------------------
@pytest.mark.parametrize(("field", "value"), [("record_pdf", b"%PDF-forged"), ("snapshot", "{}"), ("number", 7),
                                              ("letter", "Z"), ("approver_id", None), ("status", "draft"),
                                              ("status", "for check")])
def test_the_orm_refuses_changing_an_approved_revision(session, approved, field, value):
    rev = session.get(CaseRevision, approved[1])
    setattr(rev, field, value)
    with pytest.raises(RecordImmutableError, match="revision 0 is approved"):
        session.commit()
    session.rollback()


def test_the_orm_refuses_changing_a_superseded_revision_status(session, users, approved, engine):
    rev = session.get(CaseRevision, approved[1])
    rev.status = "superseded"
    session.commit()   # approved -> superseded is the one way on (what approve does)
    rev.status = "voided"
    with pytest.raises(RecordImmutableError, match="cannot become 'voided'"):
        session.commit()
    session.rollback()


def test_the_orm_refuses_deleting_an_approved_revision_or_its_result(session, approved):
    session.delete(session.get(CaseRevision, approved[1]))
    with pytest.raises(RecordImmutableError, match="cannot be deleted"):
        session.commit()
    session.rollback()
    session.delete(session.get(CaseResult, approved[2]))
    with pytest.raises(RecordImmutableError, match="reported by revision 0"):
        session.commit()
    session.rollback()
    result = session.get(CaseResult, approved[2])
    result.message = "forged"
    with pytest.raises(RecordImmutableError, match="cannot be changed"):
        session.commit()
    session.rollback()


def test_the_orm_refuses_changing_review_steps(session, approved):
    step = session.scalars(select(ReviewStep).where(ReviewStep.revision_id == approved[1])).first()
    step.comment = "forged"
    with pytest.raises(AppendOnlyError, match="review steps are append-only"):
        session.commit()
    session.rollback()
    session.delete(step)
    with pytest.raises(AppendOnlyError):
        session.commit()
    session.rollback()


# -- the database -------------------------------------------------------------------------------------------
@pytest.mark.parametrize("sql", [
    "UPDATE case_revisions SET record_pdf = :forged WHERE id = :rev",
    "UPDATE case_revisions SET snapshot = '{}' WHERE id = :rev",
    "UPDATE case_revisions SET snapshot_sha256 = 'x', record_sha256 = 'y' WHERE id = :rev",
    "UPDATE case_revisions SET number = 5 WHERE id = :rev",
    "UPDATE case_revisions SET approver_id = NULL WHERE id = :rev",
    "UPDATE case_revisions SET approved_at = CURRENT_TIMESTAMP WHERE id = :rev",
    "UPDATE case_revisions SET status = 'draft' WHERE id = :rev",
    "UPDATE case_revisions SET closed_at = CURRENT_TIMESTAMP WHERE id = :rev",
    "DELETE FROM case_revisions WHERE id = :rev",
], ids=["record_pdf", "snapshot", "hashes", "number", "approver", "approved_at", "status", "closed_at", "delete"])
def test_the_database_refuses_changing_an_approved_revision(session, engine, approved, sql):
    before = _row(engine, approved[1])
    with pytest.raises(DBAPIError, match="immutable"):
        session.execute(text(sql), {"rev": approved[1], "forged": b"%PDF-forged"})
    session.rollback()
    assert _row(engine, approved[1]) == before


@pytest.mark.parametrize("sql", ["UPDATE case_results SET message = 'forged' WHERE id = :res",
                                 "UPDATE case_results SET t_out_min_k = 300.0 WHERE id = :res",
                                 "DELETE FROM case_results WHERE id = :res"], ids=["message", "t_out", "delete"])
def test_the_database_refuses_changing_the_result_of_a_record(session, engine, approved, sql):
    with pytest.raises(DBAPIError, match="immutable"):
        session.execute(text(sql), {"res": approved[2]})
    session.rollback()
    with engine.connect() as conn:
        assert conn.execute(text("SELECT message FROM case_results WHERE id = :i"), {"i": approved[2]}).scalar() \
            .startswith("all ")


def test_the_database_refuses_deleting_a_case_with_an_issued_record(session, engine, approved):
    with pytest.raises(DBAPIError, match="immutable"):
        session.execute(text("DELETE FROM case_revisions WHERE case_id = :c"), {"c": approved[0]})
    session.rollback()
    with pytest.raises(DBAPIError):
        session.execute(text("DELETE FROM cases WHERE id = :c"), {"c": approved[0]})
    session.rollback()
    assert session.get(Case, approved[0]) is not None


def test_the_database_lets_an_approved_revision_be_superseded_or_voided(engine, approved):
    for status in ("superseded", "voided"):
        with engine.connect() as conn:
            trans = conn.begin()
            conn.execute(text("UPDATE case_revisions SET status = :s, closed_at = CURRENT_TIMESTAMP, "
                              "version = version + 1 WHERE id = :i"), {"s": status, "i": approved[1]})
            assert conn.execute(text("SELECT status FROM case_revisions WHERE id = :i"),
                                {"i": approved[1]}).scalar() == status
            with pytest.raises(DBAPIError, match="immutable"):   # and then no further
                with conn.begin_nested():
                    conn.execute(text("UPDATE case_revisions SET status = 'approved' WHERE id = :i"),
                                 {"i": approved[1]})
            trans.rollback()
    assert _row(engine, approved[1])[0] == "approved"


@pytest.mark.parametrize("sql", ["UPDATE review_steps SET comment = 'forged' WHERE revision_id = :rev",
                                 "DELETE FROM review_steps WHERE revision_id = :rev"], ids=["update", "delete"])
def test_review_steps_are_append_only_in_the_database(session, users, case_data, approved, sql):
    draft = service.create_case(session, users[Role.ENGINEER], case_data())   # also for a draft's steps
    for rev in (approved[1], workflow.current_revision(session, draft.id).id):
        with pytest.raises(DBAPIError, match="append-only"):
            session.execute(text(sql), {"rev": rev})
        session.rollback()


def test_a_case_that_never_issued_a_record_is_deleted_with_its_revisions(session, engine, users, case_data):
    case = service.create_case(session, users[Role.ENGINEER], case_data())
    rev_id = workflow.current_revision(session, case.id).id
    session.commit()
    with engine.begin() as conn:   # the foreign keys cascade to the revision and its steps
        conn.execute(text("DELETE FROM cases WHERE id = :c"), {"c": case.id})
    with engine.connect() as conn:
        assert conn.execute(text("SELECT count(*) FROM case_revisions WHERE id = :r"), {"r": rev_id}).scalar() == 0
        assert conn.execute(text("SELECT count(*) FROM review_steps WHERE revision_id = :r"),
                            {"r": rev_id}).scalar() == 0


def test_the_result_of_a_record_in_review_is_frozen_too(session, users, case_data):
    eng = users[Role.ENGINEER]
    case = service.create_case(session, eng, case_data())
    result = service.compute_case(session, eng, case.id)
    workflow.submit_for_check(session, eng, case.id, fake_sign)
    with pytest.raises(DBAPIError, match="immutable"):
        session.execute(text("UPDATE case_results SET outcome = 'forged' WHERE id = :r"), {"r": result.id})
    session.rollback()
    workflow.reject(session, users[Role.CHECKER], case.id, "redo")   # freed again once rejected
    session.execute(text("UPDATE case_results SET message = message WHERE id = :r"), {"r": result.id})
    session.rollback()


# -- the migration of existing cases -------------------------------------------------------------------------
@pytest.fixture
def fresh_url(tmp_path):
    """An empty database: a SQLite file, or a schema of its own in the DATABASE_URL database."""
    url = env_database_url()
    if url is None:
        yield f"sqlite:///{tmp_path / 'migrate.sqlite3'}"
        return
    schema = f"jtcheck_records_mig_{uuid.uuid4().hex[:12]}"
    admin = create_engine(url)
    with admin.begin() as conn:
        conn.execute(text(f'CREATE SCHEMA "{schema}"'))
    try:
        yield make_url(url).update_query_dict({"options": f"-csearch_path={schema}"}).render_as_string(
            hide_password=False)
    finally:
        with admin.begin() as conn:
            conn.execute(text(f'DROP SCHEMA IF EXISTS "{schema}" CASCADE'))
        admin.dispose()


def test_migration_0003_gives_every_existing_case_revision_a(fresh_url):
    upgrade_database(fresh_url, "0002")
    engine = create_engine(fresh_url)
    try:
        with engine.begin() as conn:
            conn.execute(text("INSERT INTO users (id, email, name, role, password_hash, active, created_at) "
                              "VALUES (1, 'e@example.org', 'E', 'engineer', 'h', TRUE, CURRENT_TIMESTAMP)"))
            conn.execute(text("INSERT INTO sites (id, name, description, created_at) "
                              "VALUES (1, 'S', '', CURRENT_TIMESTAMP)"))
            conn.execute(text("INSERT INTO units (id, site_id, name, description, created_at) "
                              "VALUES (1, 1, 'U', '', CURRENT_TIMESTAMP)"))
            conn.execute(text("INSERT INTO fluids (id, name, composition, eos, kij_mode, notes, created_by_id, "
                              "updated_by_id, created_at, updated_at) VALUES (1, 'F', '[[\"methane\", 1.0]]', 'PR', "
                              "'table', '', 1, 1, CURRENT_TIMESTAMP, CURRENT_TIMESTAMP)"))
            for case_id, status in ((1, "draft"), (2, "checked")):
                conn.execute(text(
                    "INSERT INTO cases (id, unit_id, tag, service, kind, fluid_id, inlet_pressure_pa, "
                    "inlet_temperature_k, outlet_pressure_pa, mdmt_source, margin_k, basis, \"references\", "
                    "display_units, p_atm_pa, status, created_by_id, updated_by_id, created_at, updated_at, version) "
                    "VALUES (:id, 1, :tag, '', 'choke', 1, 7e6, 293.15, 1e6, '', 0, '', '', '{}', 101325, :status, "
                    "1, 1, CURRENT_TIMESTAMP, CURRENT_TIMESTAMP, 3)"), {"id": case_id, "tag": f"PCV-{case_id}",
                                                                       "status": status})
        upgrade_database(fresh_url)
        with engine.connect() as conn:
            revs = conn.execute(text("SELECT case_id, letter, number, status, version, created_at IS NOT NULL "
                                     "FROM case_revisions ORDER BY case_id")).all()
            steps = conn.execute(text("SELECT s.action, s.from_status, s.to_status, s.user_id FROM review_steps s "
                                      "JOIN case_revisions r ON r.id = s.revision_id ORDER BY r.case_id")).all()
            cases = conn.execute(text("SELECT status, version FROM cases ORDER BY id")).all()
        assert [tuple(r) for r in revs] == [(1, "A", None, "draft", 1, True), (2, "A", None, "draft", 1, True)]
        assert [tuple(s) for s in steps] == [("create", None, "draft", 1)] * 2
        assert [tuple(c) for c in cases] == [("draft", 3), ("draft", 3)]
        downgrade_database(fresh_url, "0002")
        with engine.connect() as conn:
            assert conn.execute(text("SELECT count(*) FROM cases")).scalar() == 2
        downgrade_database(fresh_url, "base")
    finally:
        engine.dispose()


def test_an_issued_revision_is_protected_whoever_holds_the_session(session_factory, approved):
    """A second session (another web worker) cannot change the record either."""
    with session_factory() as other:
        rev = other.get(CaseRevision, approved[1])
        assert rev.status == "approved" and rev.label == "0"
        other.execute(text("SELECT 1"))
        with pytest.raises(DBAPIError, match="immutable"):
            other.execute(text("UPDATE case_revisions SET record_pdf = NULL WHERE id = :i"), {"i": rev.id})
        other.rollback()
        assert other.get(User, rev.approver_id).role == "approver"
