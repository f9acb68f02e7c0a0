"""Command-line interface: ``jtcheck letdown``, ``jtcheck depressure``, ``jtcheck components``, ``jtcheck demo``,
``jtcheck screen``, ``jtcheck mdmt``.

Input is parsed and converted to SI here (through :mod:`jtcheck.units`); the engineering core sees SI only.
Exit codes of ``jtcheck letdown``: 0 pass (without a limit: converged), 2 bad input, 3 not screened (a
calculation did not converge or no limit), 4 margin eroded, 5 fail.

One module per command group: :mod:`~jtcheck.cli.letdown`, :mod:`~jtcheck.cli.depressure`, :mod:`~jtcheck.cli.demo`,
:mod:`~jtcheck.cli.components`, :mod:`~jtcheck.cli.screen` (``screen``, ``screen-template``),
:mod:`~jtcheck.cli.users` (``user``), :mod:`~jtcheck.cli.record` (``record``), :mod:`~jtcheck.cli.worker`;
exit codes in :mod:`~jtcheck.cli.exits`, the case register in :mod:`~jtcheck.cli.register`.  The commands
are added to :func:`main` here, so the modules never import this one (no import circle).
"""
from __future__ import annotations

import click

from jtcheck import __version__
from jtcheck.cli.components import components_cmd
from jtcheck.cli.demo import demo_cmd
from jtcheck.cli.depressure import depressure_cmd
from jtcheck.cli.exits import (
    EXIT_FAIL,
    EXIT_INPUT,
    EXIT_MARGIN_ERODED,
    EXIT_NOT_CONVERGED,
    EXIT_NOT_SCREENED,
    EXIT_RECORD_INVALID,
    fail_input,
)
from jtcheck.cli.letdown import letdown_cmd
from jtcheck.cli.mdmt import mdmt_cmd
from jtcheck.cli.record import record_group
from jtcheck.cli.screen import screen_cmd, screen_template_cmd
from jtcheck.cli.users import user_group
from jtcheck.cli.worker import worker_cmd
from jtcheck.errors import JtcheckError

__all__ = ["EXIT_FAIL", "EXIT_INPUT", "EXIT_MARGIN_ERODED", "EXIT_NOT_CONVERGED", "EXIT_NOT_SCREENED",
           "EXIT_RECORD_INVALID", "main", "run"]


@click.group()
@click.version_option(__version__, prog_name="jtcheck")
def main() -> None:
    """jtcheck: temperature and phase downstream of pressure letdowns, for low-temperature screening."""


for _command in (letdown_cmd, depressure_cmd, components_cmd, demo_cmd, screen_cmd, screen_template_cmd, user_group,
                 record_group, worker_cmd, mdmt_cmd):
    main.add_command(_command)


def run() -> None:  # pragma: no cover - console entry
    try:
        main()
    except JtcheckError as err:
        fail_input(err)
