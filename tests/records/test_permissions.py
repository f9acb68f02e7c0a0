"""Permission rules of the service layer."""
from __future__ import annotations

import pytest
from sqlalchemy import select

from jtcheck.errors import InputError
from jtcheck.records import service
from jtcheck.records.errors import PermissionDenied
from jtcheck.records.models import Case, Role, User

from .register_helpers import LEAN_GAS, count, unique


@pytest.fixture
def case(session, engineer, case_data):
    return service.create_case(session, engineer, case_data())


@pytest.mark.parametrize("role", [Role.CHECKER, Role.APPROVER])
def test_checkers_and_approvers_may_not_create_or_edit_cases(session, users, case, case_data, role):
    before = count(session, Case)
    with pytest.raises(PermissionDenied, match="engineer, admin"):
        service.create_case(session, users[role], case_data())
    with pytest.raises(PermissionDenied):
        service.update_case(session, users[role], case.id, {"margin_k": 1.0})
    assert count(session, Case) == before
    assert session.get(Case, case.id, populate_existing=True).margin_k == 5.0


@pytest.mark.parametrize("role", [Role.CHECKER, Role.APPROVER])
def test_checkers_and_approvers_may_not_create_or_edit_fluids(session, users, world, role):
    with pytest.raises(PermissionDenied):
        service.create_fluid(session, users[role], unique("gas"), LEAN_GAS)
    with pytest.raises(PermissionDenied):
        service.update_fluid(session, users[role], world.fluid_id, {"notes": "x"})


@pytest.mark.parametrize("role", list(Role))
def test_every_role_may_view_and_compute(session, users, case, role):
    user = users[role]
    assert service.get_case(session, user, case.id).id == case.id
    assert case.id in [c.id for c in service.list_cases(session, user)]
    result = service.compute_case(session, user, case.id)
    assert result.computed_by.id == user.id


@pytest.mark.parametrize("role", [Role.ENGINEER, Role.ADMIN])
def test_engineers_and_admins_edit_cases(session, users, case, role):
    service.update_case(session, users[role], case.id, {"margin_k": 7.0})
    assert case.margin_k == 7.0


@pytest.mark.parametrize("role", [Role.ENGINEER, Role.CHECKER, Role.APPROVER])
def test_only_admins_edit_materials_and_users(session, users, world, role):
    with pytest.raises(PermissionDenied):
        service.create_material(session, users[role], name=unique("steel"), min_metal_temperature_k=250.0)
    with pytest.raises(PermissionDenied):
        service.update_material(session, users[role], world.material_id, {"notes": "x"})
    with pytest.raises(PermissionDenied):
        service.create_user(session, users[role], email=f"{unique('u')}@example.org", name="New", role="engineer",
                            password_hash="h")
    with pytest.raises(PermissionDenied):
        service.update_user(session, users[role], users[Role.ENGINEER].id, {"role": "admin"})


def test_admin_edits_materials_and_users(session, users, world):
    admin = users[Role.ADMIN]
    material = service.update_material(session, admin, world.material_id, {"notes": "checked by admin"})
    assert material.notes == "checked by admin"
    new = service.create_user(session, admin, email=f"{unique('new')}@Example.org", name="New Checker",
                              role="checker", password_hash="h")
    assert new.email.endswith("@example.org")   # stored lower case
    service.update_user(session, admin, new.id, {"role": "approver"})
    assert new.role is Role.APPROVER


def test_a_deactivated_user_may_do_nothing(session, world, case, case_data):
    gone = session.scalar(select(User).where(User.email == world.inactive_email))
    for call in (lambda: service.create_case(session, gone, case_data()),
                 lambda: service.get_case(session, gone, case.id),
                 lambda: service.compute_case(session, gone, case.id),
                 lambda: service.list_cases(session, gone)):
        with pytest.raises(PermissionDenied, match="deactivated"):
            call()


def test_no_user_may_do_nothing(session, case):
    with pytest.raises(PermissionDenied, match="no user"):
        service.get_case(session, None, case.id)


def test_a_user_may_change_their_own_password_hash_but_not_their_role(session, users):
    checker = users[Role.CHECKER]
    service.update_user(session, checker, checker.id, {"password_hash": "new-hash"})
    assert checker.password_hash == "new-hash"
    with pytest.raises(PermissionDenied):
        service.update_user(session, checker, checker.id, {"role": "admin"})
    trail = service.audit_trail(session, checker, "user", checker.id)
    assert [(e.field, e.old_value, e.new_value) for e in trail if e.action == "update"] == [
        ("password_hash", "(hidden)", "(changed)")]


def test_the_last_active_admin_cannot_be_demoted(session, users):
    admin = users[Role.ADMIN]
    with pytest.raises(InputError, match="at least one active admin"):
        service.update_user(session, admin, admin.id, {"role": "engineer"})
    assert session.get(User, admin.id, populate_existing=True).role is Role.ADMIN


def test_without_a_signed_in_user_only_the_first_admin_can_be_created(session):
    with pytest.raises(PermissionDenied):
        service.create_user(session, None, email="intruder@example.org", name="X", role="admin", password_hash="h")


def test_permission_helpers_for_pages(users):
    assert service.can_edit_cases(users[Role.ENGINEER]) and not service.can_edit_cases(users[Role.CHECKER])
    assert service.can_compute(users[Role.APPROVER])
    assert service.can_administer(users[Role.ADMIN]) and not service.can_administer(users[Role.ENGINEER])
