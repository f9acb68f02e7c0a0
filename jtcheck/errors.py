"""Exceptions of jtcheck.

Every error a person can act on names the field (or component, or state) at fault and what is
allowed.  Input errors are :class:`ValueError` subclasses so that generic callers can catch them;
convergence errors carry the iteration count and the last residual.
"""
from __future__ import annotations

from collections.abc import Sequence


class JtcheckError(Exception):
    """Base class of every exception raised by jtcheck."""


class InputError(JtcheckError, ValueError):
    """Bad input: names the field and what is allowed.

    Parameters
    ----------
    field : str
        Name of the offending input field, as the user knows it (``p_out``, ``composition``).
    message : str
        What is wrong and what is allowed; its quantities may be marked (:mod:`jtcheck.marks`) so that the edges
        show them in the units the user typed (:meth:`jtcheck.units.TextUnits.error`); ``str(err)`` shows them in
        the default units.
    """

    def __init__(self, field: str, message: str):
        from jtcheck.marks import plain

        self.field = field
        self.message = message
        super().__init__(f"{field}: {plain(message)}")


class UnknownComponentError(InputError):
    """A component name, formula or CAS number that is not in the component library.

    Parameters
    ----------
    key : str
        The name that was looked up.
    suggestions : sequence of str
        The closest known names, best first (may be empty).
    field : str
        The input field that carried the name.
    """

    def __init__(self, key: str, suggestions: Sequence[str] = (), field: str = "composition"):
        self.key = key
        self.suggestions = tuple(suggestions)
        hint = f"; did you mean {', '.join(repr(s) for s in self.suggestions)}?" if self.suggestions else ""
        super().__init__(field, f"unknown component {key!r}{hint} (use a common name, formula or CAS number "
                                "from the component library)")


class ConvergenceError(JtcheckError):
    """A numerical method that did not converge.

    Parameters
    ----------
    method : str
        The solver that failed (``"PH flash"``).
    reason : str
        Why it stopped.
    iterations : int
        Iterations taken.
    residual : float
        Last residual, in the units the solver documents.
    """

    def __init__(self, method: str, reason: str, iterations: int = 0, residual: float = float("nan")):
        self.method = method
        self.reason = reason
        self.iterations = iterations
        self.residual = residual
        super().__init__(f"{method} did not converge: {reason} (iterations={iterations}, residual={residual:.3g})")
