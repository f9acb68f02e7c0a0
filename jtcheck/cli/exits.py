"""Exit codes of the commands, and the one way a command ends on bad input.

0 is a pass (for ``jtcheck letdown`` without a limit: converged); a calculation that did not converge is
never a pass.
"""
from __future__ import annotations

import sys
from typing import NoReturn

import click

from jtcheck.errors import InputError
from jtcheck.units import TextUnits

EXIT_INPUT = 2
EXIT_NOT_SCREENED = 3      # a calculation did not converge (never a pass)
EXIT_MARGIN_ERODED = 4
EXIT_FAIL = 5
EXIT_NOT_CONVERGED = EXIT_NOT_SCREENED
EXIT_RECORD_INVALID = 6    # jtcheck record verify: a signature, the file or the register does not hold


def fail_input(err: Exception, units: TextUnits | None = None) -> NoReturn:
    """Print ``error: <err>`` (an InputError reads ``field: what is allowed``, its quantities in ``units``, the
    units the user typed) and exit with EXIT_INPUT."""
    text = (units or TextUnits()).error(err) if isinstance(err, InputError) else str(err)
    click.echo(f"error: {text}", err=True)
    sys.exit(EXIT_INPUT)
