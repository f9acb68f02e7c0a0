"""Exit codes of the commands, and the one way a command ends on bad input.

0 is a pass (for ``jtcheck letdown`` without a limit: converged); a calculation that did not converge is
never a pass.
"""
from __future__ import annotations

import sys
from typing import NoReturn

import click

EXIT_INPUT = 2
EXIT_NOT_SCREENED = 3      # a calculation did not converge (never a pass)
EXIT_MARGIN_ERODED = 4
EXIT_FAIL = 5
EXIT_NOT_CONVERGED = EXIT_NOT_SCREENED
EXIT_RECORD_INVALID = 6    # jtcheck record verify: a signature, the file or the register does not hold


def fail_input(err: Exception) -> NoReturn:
    """Print ``error: <err>`` (an InputError reads ``field: what is allowed``) and exit with EXIT_INPUT."""
    click.echo(f"error: {err}", err=True)
    sys.exit(EXIT_INPUT)
