"""Exceptions of the case register (:mod:`jtcheck.records`).

Bad input is still :class:`jtcheck.errors.InputError` (naming the field and the allowed range); the
errors here are about who may do what, and about the state of stored records.
"""
from __future__ import annotations

from jtcheck.errors import JtcheckError


class PermissionDenied(JtcheckError):  # noqa: N818 - the name the other layers use
    """The acting user's role (or a deactivated account) does not allow the action.

    Parameters
    ----------
    action : str
        What was attempted, in plain words (``"edit case inputs"``).
    message : str
        Why it was refused and which roles may do it.
    """

    def __init__(self, action: str, message: str):
        self.action = action
        self.message = message
        super().__init__(f"not allowed to {action}: {message}")


class NotFound(JtcheckError):  # noqa: N818 - the name the other layers use
    """A record that does not exist (or was never stored).

    Parameters
    ----------
    entity : str
        Kind of record (``"case"``, ``"fluid"``).
    key : object
        The id or name that was looked up.
    field : str or None
        The input field that carried the reference, when there is one (``"fluid_id"``).
    """

    def __init__(self, entity: str, key: object, field: str | None = None):
        self.entity = entity
        self.key = key
        self.field = field
        super().__init__(f"{entity} {key!r} not found")


class ConcurrentEditError(JtcheckError):
    """Someone else saved the record after the version the user was editing (optimistic concurrency).

    Parameters
    ----------
    entity : str
        Kind of record (``"case"``).
    entity_id : int
        Its id.
    expected_version : int or None
        The version the user started from (None when only the database detected the clash).
    current_version : int or None
        The version now stored, when known.
    """

    def __init__(self, entity: str, entity_id: int, expected_version: int | None = None,
                 current_version: int | None = None):
        self.entity = entity
        self.entity_id = entity_id
        self.expected_version = expected_version
        self.current_version = current_version
        versions = ""
        if expected_version is not None:
            versions = f" (you edited version {expected_version}"
            versions += f", stored is version {current_version})" if current_version is not None else ")"
        super().__init__(f"{entity} {entity_id} was changed by someone else since you opened it{versions}; "
                         "reload it and apply your changes again")


class AppendOnlyError(JtcheckError):
    """An attempt to change or delete a row of the append-only audit log."""

    def __init__(self, operation: str):
        self.operation = operation
        super().__init__(f"the audit log is append-only: {operation} of audit entries is refused")
