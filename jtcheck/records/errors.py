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
                 current_version: int | None = None, changed: str = ""):
        self.entity = entity
        self.entity_id = entity_id
        self.expected_version = expected_version
        self.current_version = current_version
        self.changed = changed
        versions = ""
        if expected_version is not None:
            versions = f" (you edited version {expected_version}"
            versions += f", stored is version {current_version})" if current_version is not None else ")"
        what = f"; changed since: {changed}" if changed else ""
        super().__init__(f"{entity} {entity_id} was changed by someone else since you opened it{versions}{what}; "
                         "reload it and apply your changes again")


class AppendOnlyError(JtcheckError):
    """An attempt to change or delete a row of an append-only table (the audit log, the review steps).

    Parameters
    ----------
    operation : str
        ``"UPDATE"`` or ``"DELETE"``.
    rows : str
        What the rows are, in plain words (``"audit entries"``, ``"review steps"``).
    """

    def __init__(self, operation: str, rows: str = "audit entries"):
        self.operation = operation
        self.rows = rows
        table = "the audit log" if rows == "audit entries" else rows
        super().__init__(f"{table} {'is' if rows == 'audit entries' else 'are'} append-only: "
                         f"{operation} of {rows} is refused")


class UnderReview(PermissionDenied):  # noqa: N818 - reads as the state it reports
    """The case's current calculation record is in review (for check, checked, for approval): its inputs
    are frozen until the revision is rejected (or withdrawn by its preparer) or approved.

    Parameters
    ----------
    action : str
        What was attempted (``"edit case inputs"``).
    label : str
        The revision (``"A"``).
    status : str
        Its status (``"for check"``).
    """

    def __init__(self, action: str, label: str, status: str):
        self.label = label
        self.status = status
        super().__init__(action, f"revision {label} of this case is {status!r}; its inputs are frozen while it is "
                                 "in review. Reject the revision first (its preparer may withdraw it), then edit")


class FourEyesError(PermissionDenied):
    """The four-eyes rule: the checker must not be the preparer, the approver neither of them.

    Parameters
    ----------
    action : str
        What was attempted (``"check a calculation record"``).
    rule : str
        The rule broken, in plain words.
    """

    def __init__(self, action: str, rule: str):
        self.rule = rule
        super().__init__(action, f"four-eyes rule: {rule}")


class RevisionStateError(JtcheckError):
    """A review step that the revision's status does not allow (e.g. approving a draft).

    Parameters
    ----------
    action : str
        What was attempted (``"approve a calculation record"``).
    label : str or None
        The revision concerned, if there is one.
    status : str or None
        Its status.
    message : str
        What the step needs.
    """

    def __init__(self, action: str, label: str | None, status: str | None, message: str):
        self.action = action
        self.label = label
        self.status = status
        self.message = message
        where = f"revision {label} is {status!r}: " if label is not None else ""
        super().__init__(f"cannot {action}: {where}{message}")


class RecordImmutableError(JtcheckError):
    """An attempt to change or delete an issued calculation record (approved, superseded, voided) or the
    result it reports.  The database refuses the same with triggers."""

    def __init__(self, message: str):
        self.message = message
        super().__init__(message)


class RecordSigningError(JtcheckError):
    """The signing callback returned something that is not the signed record (not a PDF, or a PDF that
    does not extend the record signed so far)."""

    def __init__(self, message: str):
        self.message = message
        super().__init__(message)
