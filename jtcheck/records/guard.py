"""Who may do what in the case register: the roles allowed for each kind of action, and the check.

=========================================  ===========================================
action                                      roles
=========================================  ===========================================
view anything, compute cases                engineer, checker, approver, admin
create/edit cases, fluids, sites, units     engineer, admin
create/edit materials and users             admin (a user may change their own password
                                            and API token hashes)
review calculation records                  see :mod:`jtcheck.records.workflow`
=========================================  ===========================================

A deactivated account may do nothing.
"""
from __future__ import annotations

from jtcheck.records.errors import PermissionDenied
from jtcheck.records.models import Role, User

#: Every role: viewing and computing.
ALL_ROLES = frozenset(Role)
#: Roles that may create and edit cases, fluids, sites and units.
EDIT_ROLES = frozenset({Role.ENGINEER, Role.ADMIN})
#: Roles that may edit materials and users.
ADMIN_ROLES = frozenset({Role.ADMIN})


def require(user: User | None, roles: frozenset[Role], action: str) -> User:
    """Return ``user`` if it is an active account with one of ``roles``, else raise PermissionDenied.

    ``action`` names what was attempted, in plain words (``"edit case inputs"``); the message says why
    it was refused and which roles may do it.
    """
    if not isinstance(user, User):
        raise PermissionDenied(action, "no user is signed in")
    if not user.active:
        raise PermissionDenied(action, "the account is deactivated")
    if Role(user.role) not in roles:
        allowed = ", ".join(r.value for r in Role if r in roles)
        raise PermissionDenied(action, f"the role {Role(user.role).value!r} may not; allowed roles: {allowed}")
    return user


def can_edit_cases(user: User | None) -> bool:
    """True if ``user`` may create and edit cases, fluids, sites and units."""
    return isinstance(user, User) and user.active and Role(user.role) in EDIT_ROLES


def can_compute(user: User | None) -> bool:
    """True if ``user`` may view and compute cases."""
    return isinstance(user, User) and user.active and Role(user.role) in ALL_ROLES


def can_administer(user: User | None) -> bool:
    """True if ``user`` may edit materials and users."""
    return isinstance(user, User) and user.active and Role(user.role) in ADMIN_ROLES
